/**
 * JSON Schemas of the report resources, used as fastify response schemas (so no field leaks
 * out unlisted) and as the source of their OpenAPI components.
 */
import { SEGMENT_ROW_FIELDS, VERDICTS } from './shapes/index.js';

const nullableNumber = { type: ['number', 'null'] } as const;
const nullableInteger = { type: ['integer', 'null'] } as const;

export const reportDefinitionProperties = {
  name: { type: 'string', minLength: 1, maxLength: 200 },
  source: {
    oneOf: [
      {
        type: 'object',
        required: ['campaign_ids'],
        additionalProperties: false,
        properties: { campaign_ids: { type: 'array', minItems: 1, maxItems: 100, items: { type: 'string' } } },
      },
      {
        type: 'object',
        required: ['sales_from', 'sales_to'],
        additionalProperties: false,
        properties: { sales_from: { type: 'string', format: 'date' }, sales_to: { type: 'string', format: 'date' } },
      },
    ],
  },
  dimensions: { type: 'array', minItems: 1, maxItems: 6, items: { type: 'string' }, default: ['age_band', 'region', 'channel'] },
  crosses: { type: 'array', items: { type: 'array', minItems: 2, maxItems: 2, items: { type: 'string' } } },
  age_bands: { type: 'array', minItems: 1, maxItems: 20, items: { type: 'integer', minimum: 18, maximum: 120 }, default: [18, 25, 35, 45, 55, 65] },
  min_n: { type: 'integer', minimum: 2, maximum: 1_000_000, default: 30 },
  confidence: { type: 'number', exclusiveMinimum: 0, exclusiveMaximum: 1, default: 0.95 },
  adjustment: { type: 'string', enum: ['bh', 'holm', 'none'], default: 'bh' },
  value_basis: { type: 'string', enum: ['per_unit', 'per_conversion'], default: 'per_unit' },
  rank_by: { type: 'string', enum: ['conversion_rate', 'value'], default: 'conversion_rate' },
  rank_order: { type: 'string', enum: ['lower_bound', 'estimate'], default: 'lower_bound' },
  refresh: { type: 'string', enum: ['weekly', 'manual'], default: 'manual' },
} as const;

export const reportDefinitionSchema = {
  type: 'object',
  required: ['name', 'source'],
  additionalProperties: false,
  properties: reportDefinitionProperties,
} as const;

const definitionRequired = ['name', 'source', 'dimensions', 'crosses', 'age_bands', 'min_n', 'confidence', 'adjustment', 'value_basis', 'rank_by', 'rank_order', 'refresh'];

export const storedDefinitionSchema = {
  type: 'object',
  required: definitionRequired,
  properties: reportDefinitionProperties,
} as const;

export const reportSchema = {
  type: 'object',
  required: ['report_id', ...definitionRequired, 'created_at', 'latest_snapshot'],
  properties: {
    report_id: { type: 'string' },
    ...reportDefinitionProperties,
    created_at: { type: 'string', format: 'date-time' },
    latest_snapshot: {
      type: ['object', 'null'],
      required: ['snapshot_id', 'sequence', 'created_at'],
      properties: { snapshot_id: { type: 'string' }, sequence: { type: 'integer' }, created_at: { type: 'string', format: 'date-time' } },
    },
  },
} as const;

export const reportListSchema = {
  type: 'object',
  required: ['reports'],
  properties: { reports: { type: 'array', items: reportSchema } },
} as const;

export const snapshotMetaSchema = {
  type: 'object',
  required: ['snapshot_id', 'report_id', 'sequence', 'created_at', 'fingerprint', 'population_rows', 'segment_count', 'duration_ms', 'trigger'],
  properties: {
    snapshot_id: { type: 'string' },
    report_id: { type: 'string' },
    sequence: { type: 'integer' },
    created_at: { type: 'string', format: 'date-time' },
    fingerprint: { type: 'string' },
    population_rows: { type: 'integer' },
    segment_count: { type: 'integer' },
    duration_ms: { type: 'integer' },
    trigger: { type: 'string', enum: ['manual', 'schedule', 'command'] },
  },
} as const;

export const snapshotListSchema = {
  type: 'object',
  required: ['report_id', 'total', 'limit', 'offset', 'snapshots'],
  properties: {
    report_id: { type: 'string' },
    total: { type: 'integer' },
    limit: { type: 'integer' },
    offset: { type: 'integer' },
    snapshots: { type: 'array', items: snapshotMetaSchema },
  },
} as const;

const rowFieldSchemas: Record<(typeof SEGMENT_ROW_FIELDS)[number], object> = {
  rank: { ...nullableInteger, description: '1 = first; null for segments that were not tested' },
  segment: { type: 'string', description: 'dimension=value, joined by " & " for a two-way segment' },
  dimensions: { type: 'string', description: 'the dimension names, joined by " & "' },
  n: { type: 'integer' },
  share: { type: 'number', description: 'n / population, a fraction' },
  conversions: { type: 'integer' },
  conversion_rate: nullableNumber,
  conversion_rate_ci_low: nullableNumber,
  conversion_rate_ci_high: nullableNumber,
  rate_diff: { ...nullableNumber, description: 'segment rate − rest rate (Newcombe hybrid score interval)' },
  rate_diff_ci_low: nullableNumber,
  rate_diff_ci_high: nullableNumber,
  lift: { ...nullableNumber, description: 'segment rate / rest rate (Katz log interval)' },
  lift_ci_low: nullableNumber,
  lift_ci_high: nullableNumber,
  rate_test: { type: ['string', 'null'], enum: ['z', 'fisher', null] },
  rate_p_value: nullableNumber,
  rate_p_adjusted: nullableNumber,
  value_mean: { ...nullableNumber, description: 'major currency units, per the report value_basis' },
  value_ci_low: nullableNumber,
  value_ci_high: nullableNumber,
  value_diff: { ...nullableNumber, description: 'segment mean − rest mean (Welch)' },
  value_diff_ci_low: nullableNumber,
  value_diff_ci_high: nullableNumber,
  value_p_value: nullableNumber,
  value_p_adjusted: nullableNumber,
  min_detectable_diff: { ...nullableNumber, description: 'at 80% power, in the unit of the ranking metric' },
  verdict: { type: 'string', enum: [...VERDICTS] },
  summary: { type: 'string' },
};

export const segmentRowSchema = {
  type: 'object',
  required: [...SEGMENT_ROW_FIELDS],
  properties: rowFieldSchemas,
} as const;

export const segmentTableSchema = {
  type: 'object',
  required: ['report_id', 'snapshot_id', 'snapshot_created_at', 'columns', 'segments'],
  properties: {
    report_id: { type: 'string' },
    snapshot_id: { type: 'string' },
    snapshot_created_at: { type: 'string', format: 'date-time' },
    columns: { type: 'array', items: { type: 'string' } },
    segments: { type: 'array', items: segmentRowSchema },
  },
} as const;

const descriptivesSchema = {
  type: 'object',
  required: ['n', 'mean', 'median', 'modes', 'standard_deviation', 'coefficient_of_variation', 'skewness', 'q1', 'q3', 'notes'],
  properties: {
    n: { type: 'integer' },
    mean: nullableNumber,
    median: nullableNumber,
    modes: { type: ['array', 'null'], items: { type: 'number' } },
    standard_deviation: nullableNumber,
    coefficient_of_variation: nullableNumber,
    skewness: nullableNumber,
    q1: nullableNumber,
    q3: nullableNumber,
    notes: { type: 'array', items: { type: 'string' } },
  },
} as const;

/** A histogram as the statistics core returns it; absent from snapshots stored before it existed. */
const histogramSchema = {
  type: ['object', 'null'],
  description: 'equal bins, each holding values from low up to but not including high, the last also holding high',
  required: ['rule', 'bin_width', 'bins', 'note'],
  properties: {
    rule: { type: 'string', description: "how the number of bins was chosen: 'sturges', 'freedman-diaconis' or 'fixed'" },
    bin_width: { type: 'number' },
    bins: {
      type: 'array',
      items: { type: 'object', required: ['low', 'high', 'count'], properties: { low: { type: 'number' }, high: { type: 'number' }, count: { type: 'integer' } } },
    },
    note: { type: ['string', 'null'] },
  },
} as const;

const correlationSchema = {
  type: 'object',
  required: ['n', 'r', 'ci_low', 'ci_high', 'p_value', 'note'],
  properties: { n: { type: 'integer' }, r: nullableNumber, ci_low: nullableNumber, ci_high: nullableNumber, p_value: nullableNumber, note: { type: ['string', 'null'] } },
} as const;

const changeSchema = {
  type: ['object', 'null'],
  required: [
    'compared_with',
    'previous_n',
    'previous_conversions',
    'previous_conversion_rate',
    'rate_change',
    'rate_change_ci_low',
    'rate_change_ci_high',
    'previous_value_mean',
    'value_change',
    'value_change_ci_low',
    'value_change_ci_high',
  ],
  properties: {
    compared_with: { type: 'string', enum: ['previous_window', 'previous_snapshot'] },
    previous_n: { type: 'integer' },
    previous_conversions: { type: 'integer' },
    previous_conversion_rate: nullableNumber,
    rate_change: nullableNumber,
    rate_change_ci_low: nullableNumber,
    rate_change_ci_high: nullableNumber,
    previous_value_mean: nullableNumber,
    value_change: nullableNumber,
    value_change_ci_low: nullableNumber,
    value_change_ci_high: nullableNumber,
  },
} as const;

export const snapshotSegmentSchema = {
  type: 'object',
  required: [
    ...SEGMENT_ROW_FIELDS,
    'values',
    'tested',
    'rest',
    'value_n',
    'rate_z',
    'value_t',
    'value_degrees_of_freedom',
    'effect_sizes',
    'sufficient_statistics',
    'previous_rank',
    'rank_movement',
    'change',
    'notes',
  ],
  properties: {
    ...rowFieldSchemas,
    values: { type: 'object', additionalProperties: { type: 'string' } },
    tested: { type: 'boolean' },
    rest: {
      type: 'object',
      required: ['n', 'conversions', 'conversion_rate', 'value_n', 'value_mean'],
      properties: { n: { type: 'integer' }, conversions: { type: 'integer' }, conversion_rate: nullableNumber, value_n: { type: 'integer' }, value_mean: nullableNumber },
    },
    value_n: { type: 'integer' },
    rate_z: nullableNumber,
    value_t: nullableNumber,
    value_degrees_of_freedom: nullableNumber,
    effect_sizes: { type: 'object', required: ['cohens_h', 'hedges_g'], properties: { cohens_h: nullableNumber, hedges_g: nullableNumber } },
    sufficient_statistics: {
      type: 'object',
      required: ['n', 'conversions', 'value'],
      properties: {
        n: { type: 'integer' },
        conversions: { type: 'integer' },
        value: {
          type: 'object',
          required: ['n', 'mean', 'sum_squared_deviations'],
          properties: { n: { type: 'integer' }, mean: { type: 'number' }, sum_squared_deviations: { type: 'number' } },
        },
      },
    },
    previous_rank: nullableInteger,
    rank_movement: nullableInteger,
    change: changeSchema,
    notes: { type: 'array', items: { type: 'string' } },
  },
} as const;

export const snapshotSchema = {
  type: 'object',
  required: [
    'snapshot_id',
    'report_id',
    'report_name',
    'sequence',
    'created_at',
    'trigger',
    'duration_ms',
    'fingerprint',
    'definition',
    'population',
    'row_counts',
    'summary',
    'cautions',
    'verdict_counts',
    'segments',
    'dimensions',
    'reversals',
    'comparison',
    'data_quality',
  ],
  properties: {
    snapshot_id: { type: 'string' },
    report_id: { type: 'string' },
    report_name: { type: 'string' },
    sequence: { type: 'integer' },
    created_at: { type: 'string', format: 'date-time' },
    trigger: { type: 'string', enum: ['manual', 'schedule', 'command'] },
    duration_ms: { type: 'integer' },
    fingerprint: { type: 'string', description: 'SHA-256 of the definition and every aggregate the snapshot was computed from' },
    definition: storedDefinitionSchema,
    population: {
      type: 'object',
      required: [
        'unit',
        'campaign_ids',
        'window',
        'n',
        'conversions',
        'conversion_rate',
        'conversion_rate_ci_low',
        'conversion_rate_ci_high',
        'value_basis',
        'value_n',
        'value_mean',
        'value_ci_low',
        'value_ci_high',
        'value_descriptives',
        'age_descriptives',
        'age_value_correlation',
      ],
      properties: {
        unit: { type: 'string', enum: ['contact', 'customer'] },
        campaign_ids: { type: ['array', 'null'], items: { type: 'string' } },
        window: { type: ['object', 'null'], required: ['from', 'to'], properties: { from: { type: 'string', format: 'date' }, to: { type: 'string', format: 'date' } } },
        n: { type: 'integer' },
        conversions: { type: 'integer' },
        conversion_rate: nullableNumber,
        conversion_rate_ci_low: nullableNumber,
        conversion_rate_ci_high: nullableNumber,
        value_basis: { type: 'string', enum: ['per_unit', 'per_conversion'] },
        value_n: { type: 'integer' },
        value_mean: nullableNumber,
        value_ci_low: nullableNumber,
        value_ci_high: nullableNumber,
        value_descriptives: descriptivesSchema,
        age_descriptives: descriptivesSchema,
        age_value_correlation: correlationSchema,
        age_histogram: histogramSchema,
        value_histogram: histogramSchema,
        age_value_grid: {
          type: ['array', 'null'],
          description: 'occupied cells of the age × value grid (age in years, value in major currency units); absent from snapshots stored before it existed',
          items: {
            type: 'object',
            required: ['age_low', 'age_high', 'value_low', 'value_high', 'count'],
            properties: { age_low: { type: 'number' }, age_high: { type: 'number' }, value_low: { type: 'number' }, value_high: { type: 'number' }, count: { type: 'integer' } },
          },
        },
      },
    },
    row_counts: {
      type: 'object',
      required: ['population', 'cells', 'segments', 'tested', 'too_small', 'rate_tests', 'value_tests'],
      properties: {
        population: { type: 'integer' },
        cells: { type: 'integer' },
        segments: { type: 'integer' },
        tested: { type: 'integer' },
        too_small: { type: 'integer' },
        rate_tests: { type: 'integer' },
        value_tests: { type: 'integer' },
      },
    },
    summary: { type: 'string' },
    cautions: { type: 'array', items: { type: 'string' } },
    verdict_counts: { type: 'object', required: [...VERDICTS], properties: Object.fromEntries(VERDICTS.map((verdict) => [verdict, { type: 'integer' }])) },
    segments: { type: 'array', items: snapshotSegmentSchema },
    dimensions: {
      type: 'array',
      items: {
        type: 'object',
        required: ['dimension', 'values'],
        properties: {
          dimension: { type: 'string' },
          values: {
            type: 'array',
            items: {
              type: 'object',
              required: ['value', 'n', 'share', 'cumulative_share', 'value_descriptives', 'age_descriptives', 'age_value_correlation'],
              properties: {
                value: { type: 'string' },
                n: { type: 'integer' },
                share: { type: 'number' },
                cumulative_share: { type: 'number' },
                value_descriptives: descriptivesSchema,
                age_descriptives: descriptivesSchema,
                age_value_correlation: correlationSchema,
              },
            },
          },
        },
      },
    },
    reversals: {
      type: 'array',
      items: {
        type: 'object',
        required: ['dimension', 'within', 'higher_overall', 'lower_overall', 'higher_overall_metric', 'lower_overall_metric', 'levels_compared', 'sentence'],
        properties: {
          dimension: { type: 'string' },
          within: { type: 'string' },
          higher_overall: { type: 'string' },
          lower_overall: { type: 'string' },
          higher_overall_metric: { type: 'number' },
          lower_overall_metric: { type: 'number' },
          levels_compared: { type: 'integer' },
          sentence: { type: 'string' },
        },
      },
    },
    comparison: {
      type: 'object',
      required: ['compared_with', 'previous_window', 'previous_snapshot_id', 'note'],
      properties: {
        compared_with: { type: ['string', 'null'], enum: ['previous_window', 'previous_snapshot', null] },
        previous_window: { type: ['object', 'null'], required: ['from', 'to'], properties: { from: { type: 'string', format: 'date' }, to: { type: 'string', format: 'date' } } },
        previous_snapshot_id: { type: ['string', 'null'] },
        note: { type: 'string' },
      },
    },
    data_quality: {
      type: 'object',
      required: ['units', 'unknown_age', 'unknown_age_share', 'customers_outside_population', 'customers_without_any_sale', 'rejected_rows', 'arithmetic'],
      properties: {
        units: { type: 'integer' },
        unknown_age: { type: 'integer' },
        unknown_age_share: nullableNumber,
        customers_outside_population: { type: 'integer' },
        customers_without_any_sale: nullableInteger,
        rejected_rows: {
          type: 'array',
          items: {
            type: 'object',
            required: ['kind', 'ingests', 'rejected'],
            properties: { kind: { type: 'string' }, ingests: { type: 'integer' }, rejected: { type: 'integer' } },
          },
        },
        arithmetic: { type: 'string', enum: ['exact', 'floating'] },
      },
    },
  },
} as const;
