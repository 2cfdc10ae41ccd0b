/** The nouns a report's sentences use, and how a segment is named in them. */
import type { ReportDefinition } from '../definition/index.js';

/** The words for a report's unit, outcome and value. */
export interface Vocabulary {
  /** singular noun of the unit */
  unit: string;
  /** plural noun of the unit */
  units: string;
  /** the outcome rate */
  rateName: string;
  /** the value metric */
  valueName: string;
  /** plural noun of the units the value metric averages over */
  valueUnits: string;
}

/**
 * The nouns of a report's sentences, from its source and value basis.
 * @example
 * vocabulary(definition).rateName; // 'conversion rate' for a campaign report
 */
export function vocabulary(definition: ReportDefinition): Vocabulary {
  const campaign = 'campaign_ids' in definition.source;
  if (campaign) {
    return {
      unit: 'contacted customer',
      units: 'contacted customers',
      rateName: 'conversion rate',
      valueName: definition.value_basis === 'per_unit' ? 'revenue per contacted customer' : 'revenue per converting customer',
      valueUnits: definition.value_basis === 'per_unit' ? 'contacted customers' : 'converting customers',
    };
  }
  return {
    unit: 'customer',
    units: 'customers',
    rateName: 'purchase rate',
    valueName: definition.value_basis === 'per_unit' ? 'spend per customer' : 'spend per buying customer',
    valueUnits: definition.value_basis === 'per_unit' ? 'customers' : 'buying customers',
  };
}
/** "region North", "age band 25-34 and channel web". */
export function describeSegment(values: Record<string, string>): string {
  return Object.entries(values)
    .map(([dimension, value]) => `${dimension.replace(/_/g, ' ')} ${value}`)
    .join(' and ');
}

/** Dimensions whose labels read well alone ("Fennwick", "catalogue mail", "company"). */
const SELF_EXPLAINING_DIMENSIONS: readonly string[] = ['region', 'channel', 'customer_type'];

/**
 * A segment named as people say it, its parts joined by " · " in the dimensions' order: region,
 * channel and customer type by their label alone, the age band as "aged 25-34", any other
 * dimension as "newsletter: yes", and an unknown label with its dimension ("region unknown").
 * Machine outputs (CSV, JSON) keep the `dimension=label` form.
 * @example
 * readableSegmentName({ region: 'Fennwick', channel: 'catalogue mail' }); // 'Fennwick · catalogue mail'
 * readableSegmentName({ age_band: '25-34', newsletter: 'yes' }); // 'aged 25-34 · newsletter: yes'
 */
export function readableSegmentName(values: Readonly<Record<string, string>>): string {
  return Object.entries(values)
    .map(([dimension, label]) => {
      const dimensionWords = dimension.replace(/_/g, ' ');
      if (dimension === 'age_band') return label === 'unknown' ? 'age unknown' : `aged ${label}`;
      if (label === 'unknown') return `${dimensionWords} unknown`;
      return SELF_EXPLAINING_DIMENSIONS.includes(dimension) ? label : `${dimensionWords}: ${label}`;
    })
    .join(' · ');
}
