/**
 * Report definitions: the one declaration of the fields a client sends (with their defaults,
 * bounds and choices), and the reading that turns a request body into a normalized definition.
 * The declaration checks each field on its own; what it cannot say (a field compared with
 * another, text trimmed before it is judged, whether a campaign or attribute is stored) is
 * checked here in code, the stored data through a lookup the caller passes in, so this module
 * stays free of SQL. Every problem of a body is reported at once.
 */
import { Ajv2020, type ErrorObject } from 'ajv/dist/2020.js';
import { Type, type Static } from 'typebox';
import { readDate, readIdentifier } from '../../ingest/fields.js';
import { BUILT_IN_DIMENSIONS, MAX_PLAUSIBLE_AGE, MIN_PLAUSIBLE_AGE, isAttributeName } from '../../segments/index.js';

/** Bounds, defaults and choices of the fields: the schema is made of them and the reasons quote them. */
const NAME = { minLength: 1, maxLength: 200, description: 'a short text naming the report' } as const;
const CAMPAIGN_IDS = { minItems: 1, maxItems: 100, description: 'the campaigns whose contacts are the population' } as const;
const DIMENSIONS = {
  // More dimensions multiply the finest cells (and the crosses grow with the square); six
  // keeps a report readable and its one aggregation query small.
  minItems: 1,
  maxItems: 6,
  default: ['age_band', 'region', 'channel'],
  description: `built-in dimensions (${BUILT_IN_DIMENSIONS.join(', ')}) or names of uploaded extra customer columns`,
} as const;
const AGE_BANDS = { minItems: 1, maxItems: 20, default: [18, 25, 35, 45, 55, 65], description: 'increasing lower band edges in years' } as const;
const MIN_N = { minimum: 2, maximum: 1_000_000, default: 30, description: 'segments (and rests) smaller than this are not tested' } as const;
/**
 * Past 0.9999 the interval's quantile and the tests' tails run into the limits of double
 * precision (0.9999999999999999, 1e-300 and 5e-324 were accepted once and every refresh then
 * failed); below 0.5 an interval would be narrower than the estimate's own spread and mean nothing.
 */
const CONFIDENCE = { minimum: 0.5, maximum: 0.9999, default: 0.95, description: 'confidence level of the intervals, from 0.5 to 0.9999' } as const;
/** Six dimensions make at most 15 pairs; a longer list can only repeat or misname them. */
const CROSSES = { maxItems: 15, description: 'pairs of the dimensions for two-way segments; every pair when left out, [] for none' } as const;
// Two points of conversion rate: a difference most campaign plans would not act on (common
// practice, no source); the analyst sets the margin that matters to the business.
const EQUIVALENCE_MARGIN = {
  exclusiveMinimum: 0,
  maximum: 1,
  default: 0.02,
  description: 'a difference of conversion rates (a fraction) small enough to treat a segment like the rest; `equivalent` is claimed only when the data show the difference lies within ± this margin',
} as const;
const VALUE_EQUIVALENCE_MARGIN = {
  exclusiveMinimum: 0,
  description: 'a difference of the value metric (major currency units) small enough to treat a segment like the rest; null (the default): no equivalence claims on value',
} as const;
const ECONOMICS_DESCRIPTION =
  'campaign reports with holdout customers: turns the incremental value per contact into incremental profit per contact (margin × value − cost per contact); null (the default): no profit figures';
const Economics = Type.Object(
  {
    margin: Type.Number({ minimum: 0, maximum: 1, description: 'fraction of revenue kept as profit' }),
    cost_per_contact: Type.Number({ minimum: 0, description: 'money spent per contacted customer, major currency units' }),
  },
  { additionalProperties: false },
);

const CHOICES = {
  adjustment: { enum: ['bh', 'holm', 'none'], default: 'bh', description: 'multiplicity adjustment of the p-values' },
  value_basis: { enum: ['per_unit', 'per_conversion'], default: 'per_unit' },
  rank_by: {
    enum: ['conversion_rate', 'value', 'uplift', 'incremental_profit'],
    default: 'conversion_rate',
    description:
      'the ranking metric; uplift and incremental_profit (campaign reports with holdout customers, the latter with economics) rank by what contacting added, and their verdicts compare the conversion rate and the value with the rest',
  },
  rank_order: { enum: ['lower_bound', 'estimate'], default: 'lower_bound' },
  refresh: { enum: ['weekly', 'manual'], default: 'manual' },
} as const;

const SOURCE_HINT = 'give either {"campaign_ids": ["…"]} or {"sales_from": "YYYY-MM-DD", "sales_to": "YYYY-MM-DD"}';

const CampaignSource = Type.Object(
  { campaign_ids: Type.Array(Type.String(), CAMPAIGN_IDS) },
  { additionalProperties: false },
);

const SalesWindow = Type.Object(
  {
    sales_from: Type.String({ format: 'date', description: 'first day of the window' }),
    sales_to: Type.String({ format: 'date', description: 'last day of the window' }),
  },
  { additionalProperties: false },
);

export const ReportSource = Type.Union([CampaignSource, SalesWindow], { description: SOURCE_HINT });
export type ReportSource = Static<typeof ReportSource>;

/** Two dimensions crossed into two-way segments, stored in the order of the dimensions list. */
const DimensionPair = Type.Unsafe<[string, string]>(Type.Array(Type.String(), { minItems: 2, maxItems: 2 }));

const choice = <const Choice extends { enum: readonly string[] }>(options: Choice) => Type.Unsafe<Choice['enum'][number]>({ type: 'string', ...options });

/**
 * The body of `POST /v1/reports`: every field but `name` and `source` may be left out and
 * gets its default (`crosses` defaults to every pair of the dimensions).
 */
export const ReportDefinitionBody = Type.Object(
  {
    name: Type.String(NAME),
    source: ReportSource,
    dimensions: Type.Optional(Type.Array(Type.String(), DIMENSIONS)),
    crosses: Type.Optional(Type.Array(DimensionPair, CROSSES)),
    age_bands: Type.Optional(Type.Array(Type.Integer({ minimum: MIN_PLAUSIBLE_AGE, maximum: MAX_PLAUSIBLE_AGE }), AGE_BANDS)),
    min_n: Type.Optional(Type.Integer(MIN_N)),
    confidence: Type.Optional(Type.Number(CONFIDENCE)),
    equivalence_margin: Type.Optional(Type.Number(EQUIVALENCE_MARGIN)),
    value_equivalence_margin: Type.Optional(Type.Union([Type.Number({ exclusiveMinimum: VALUE_EQUIVALENCE_MARGIN.exclusiveMinimum }), Type.Null()], { description: VALUE_EQUIVALENCE_MARGIN.description })),
    adjustment: Type.Optional(choice(CHOICES.adjustment)),
    value_basis: Type.Optional(choice(CHOICES.value_basis)),
    rank_by: Type.Optional(choice(CHOICES.rank_by)),
    rank_order: Type.Optional(choice(CHOICES.rank_order)),
    refresh: Type.Optional(choice(CHOICES.refresh)),
    economics: Type.Optional(Type.Union([Economics, Type.Null()], { description: ECONOMICS_DESCRIPTION })),
  },
  { additionalProperties: false },
);

/** A definition with every default filled in; this is what is stored and what a snapshot records. */
export const ReportDefinition = Type.Required(ReportDefinitionBody);
export type ReportDefinition = Static<typeof ReportDefinition>;

export type Adjustment = ReportDefinition['adjustment'];
export type ValueBasis = ReportDefinition['value_basis'];
export type RankBy = ReportDefinition['rank_by'];
/** The metric the verdicts and the sentences compare with the rest. */
export type VerdictMetric = 'conversion_rate' | 'value';

/**
 * The metric the verdicts compare: the ranking metric itself, or for a ranking by what
 * contacting added, the conversion rate (uplift) or the value (incremental profit).
 */
export function verdictMetric(definition: Pick<ReportDefinition, 'rank_by'>): VerdictMetric {
  return definition.rank_by === 'conversion_rate' || definition.rank_by === 'uplift' ? 'conversion_rate' : 'value';
}
export type RankOrder = ReportDefinition['rank_order'];
export type RefreshMode = ReportDefinition['refresh'];

/** One thing wrong with a definition, named by its place in the request body. */
export interface DefinitionIssue {
  field: string;
  reason: string;
}

export class InvalidDefinitionError extends Error {
  override name = 'InvalidDefinitionError';
  constructor(readonly issues: DefinitionIssue[]) {
    super(issues.map((issue) => `${issue.field}: ${issue.reason}`).join('; '));
  }
}

/** What the definition checks need to know about stored data. */
export interface DefinitionLookup {
  /** The ids among `campaignIds` that have no stored campaign. */
  missingCampaigns(campaignIds: string[]): Promise<string[]>;
  /** The names among `names` that no customer has as an extra attribute. */
  missingAttributes(names: string[]): Promise<string[]>;
}

type Json = Record<string, unknown>;

function isObject(value: unknown): value is Json {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

const DEFINITION_FIELDS = Object.keys(ReportDefinitionBody.properties);
const BUILT_IN = BUILT_IN_DIMENSIONS as readonly string[];

// Formats are not judged by the schema: dates go through the same reader as uploaded dates,
// whose reasons name the calendar mistake.
const validateBody = new Ajv2020({ allErrors: true, validateFormats: false }).compile(ReportDefinitionBody);

const got = (value: unknown) => `got ${JSON.stringify(value)}`;
const unknownDimension = (entry: unknown) => `unknown dimension ${JSON.stringify(entry)}: use ${BUILT_IN_DIMENSIONS.join(', ')} or the name of an extra customer column`;

/**
 * The reason stated for a field the declaration refuses, keyed by its path with list positions
 * as `*`; the bounds and choices quoted are the declaration's own. `at` moves the report from
 * an element to the pair it belongs to.
 */
const REASONS: Record<string, { reason: (value: unknown, keyword: string) => string; at?: (path: string) => string }> = {
  '/name': { reason: (_value, keyword) => (keyword === 'maxLength' ? `must be at most ${NAME.maxLength} characters` : `is required: ${NAME.description}`) },
  '/source/campaign_ids': {
    reason: (_value, keyword) =>
      keyword === 'maxItems' ? `may list at most ${CAMPAIGN_IDS.maxItems} campaigns` : 'must be a non-empty list of campaign ids',
  },
  '/source/campaign_ids/*': { reason: () => 'campaign id must be text' },
  '/source/sales_from': { reason: () => 'sales_from must be a date written YYYY-MM-DD' },
  '/source/sales_to': { reason: () => 'sales_to must be a date written YYYY-MM-DD' },
  '/dimensions': {
    reason: (_value, keyword) => (keyword === 'maxItems' ? `may list at most ${DIMENSIONS.maxItems} dimensions` : 'must be a non-empty list of dimension names'),
  },
  '/dimensions/*': { reason: (value) => unknownDimension(value) },
  '/crosses': {
    reason: (_value, keyword) =>
      keyword === 'maxItems'
        ? `may list at most ${CROSSES.maxItems} pairs (every pair of ${DIMENSIONS.maxItems} dimensions)`
        : 'must be a list of dimension pairs such as [["age_band", "region"]], or [] for none',
  },
  '/crosses/*': { reason: () => 'must be a pair of two dimension names' },
  '/crosses/*/*': { reason: () => 'must be a pair of two dimension names', at: (path) => path.slice(0, path.lastIndexOf('/')) },
  '/age_bands': {
    reason: () => `must be a list of ${AGE_BANDS.minItems} to ${AGE_BANDS.maxItems} lower band edges in years, such as ${JSON.stringify(AGE_BANDS.default).replaceAll(',', ', ')}`,
  },
  '/age_bands/*': {
    reason: (_value, keyword) =>
      keyword === 'type'
        ? 'must be a whole number of years'
        : `must be from ${MIN_PLAUSIBLE_AGE} to ${MAX_PLAUSIBLE_AGE}: ages outside that range are counted in the unknown band`,
  },
  '/min_n': { reason: (value) => `must be a whole number from ${MIN_N.minimum} to ${MIN_N.maximum}, ${got(value)}` },
  '/confidence': {
    reason: (value) =>
      `must be a number from ${CONFIDENCE.minimum} to ${CONFIDENCE.maximum}, such as ${CONFIDENCE.default}, ${got(value)}`,
  },
  '/equivalence_margin': {
    reason: (value) => `must be a number greater than ${EQUIVALENCE_MARGIN.exclusiveMinimum} and at most ${EQUIVALENCE_MARGIN.maximum} (a difference of conversion rates as a fraction, such as ${EQUIVALENCE_MARGIN.default}), ${got(value)}`,
  },
  '/value_equivalence_margin': {
    reason: (value) => `must be a positive amount of money in major units, or null for no equivalence claims on value, ${got(value)}`,
  },
  ...Object.fromEntries(
    (Object.keys(CHOICES) as Array<keyof typeof CHOICES>).map((name) => [
      `/${name}`,
      { reason: (value: unknown) => `must be one of ${CHOICES[name].enum.join(', ')}, ${got(value)}` },
    ]),
  ),
};

/** Which form of source the keys choose: 0 campaigns, 1 a sales window, null neither or both. */
function sourceForm(source: Json): 0 | 1 | null {
  const hasCampaigns = 'campaign_ids' in source;
  const hasWindow = 'sales_from' in source || 'sales_to' in source;
  if (hasCampaigns === hasWindow) return null;
  return hasCampaigns ? 0 : 1;
}

function valueAt(body: Json, path: string): unknown {
  let value: unknown = body;
  for (const key of path.split('/').slice(1)) value = (value as Record<string, unknown> | undefined)?.[key];
  return value;
}

/** The declaration's verdict on each field, one reason per field (the first), keyed by path. */
function declarationIssues(body: Json): Map<string, string> {
  const issues = new Map<string, string>();
  if (validateBody(body)) return issues;
  const source = body['source'];
  const form = isObject(source) ? sourceForm(source) : null;
  for (const error of validateBody.errors as ErrorObject[]) {
    let path = error.instancePath;
    if (error.keyword === 'required') path = `${path}/${String(error.params['missingProperty'])}`;
    if (error.keyword === 'additionalProperties') {
      const key = String(error.params['additionalProperty']);
      if (path === '') issues.set(`/${key}`, issues.get(`/${key}`) ?? `is not a report definition field (known fields: ${DEFINITION_FIELDS.join(', ')})`);
      else if (form !== null && error.schemaPath.startsWith(`#/properties/source/anyOf/${form}/`)) issues.set(`/source/${key}`, `is not a source field: ${SOURCE_HINT}`);
      continue;
    }
    // The source's shape is judged in code; of its two forms, only the one its keys choose speaks.
    if (path === '/source' || (path.startsWith('/source/') && (form === null || !error.schemaPath.startsWith(`#/properties/source/anyOf/${form}/`)))) continue;
    const entry = REASONS[path.replace(/\/\d+(?=\/|$)/g, '/*')];
    const field = entry?.at ? entry.at(path) : path;
    if (issues.has(field)) continue;
    issues.set(field, entry ? entry.reason(valueAt(body, path), error.keyword) : (error.message ?? 'is not valid'));
  }
  return issues;
}

function field(path: string): string {
  return `body${path}`;
}

/**
 * Reads a definition from a request body: checks it against the declaration, then what the
 * declaration cannot say, fills in the defaults, and asks `lookup` whether the named campaigns
 * and attributes exist.
 * @throws InvalidDefinitionError listing every problem found (not only the first)
 * @example
 * await normalizeDefinition({ name: 'Spring', source: { campaign_ids: ['spring'] } }, lookup);
 * // { name: 'Spring', dimensions: ['age_band', 'region', 'channel'], crosses: [[…], …], min_n: 30, … }
 */
export async function normalizeDefinition(body: unknown, lookup: DefinitionLookup): Promise<ReportDefinition> {
  if (!isObject(body)) throw new InvalidDefinitionError([{ field: 'body', reason: 'must be a JSON object with the report definition' }]);
  const refused = declarationIssues(body);
  const issues: DefinitionIssue[] = [];
  const report = (path: string, reason: string) => issues.push({ field: field(path), reason });
  // A field the declaration refused is reported as such; code judges only the well-formed rest.
  const wellFormed = (path: string) => ![...refused.keys()].some((refusedPath) => refusedPath === path || refusedPath.startsWith(`${path}/`));

  for (const [path, reason] of refused) if (!DEFINITION_FIELDS.includes(path.split('/')[1] ?? '')) report(path, reason);
  const name = wellFormed('/name') ? readName(body['name'] as string, report) : null;
  const source = readSource(body['source'], wellFormed, report);
  const dimensions = wellFormed('/dimensions') ? readDimensions(body['dimensions'] as string[] | undefined, report) : null;
  const crosses = wellFormed('/crosses') ? readCrosses(body['crosses'] as Array<[string, string]> | undefined, dimensions, report) : null;
  const ageBands = wellFormed('/age_bands') ? readAgeBands(body['age_bands'] as number[] | undefined, report) : null;
  for (const [path, reason] of refused) if (DEFINITION_FIELDS.includes(path.split('/')[1] ?? '')) report(path, reason);

  // Stored-data checks only for fields that are otherwise well formed, so one mistake is reported once.
  if (source !== null && 'campaign_ids' in source) {
    const missing = await lookup.missingCampaigns(source.campaign_ids);
    for (const id of missing) report(`/source/campaign_ids/${source.campaign_ids.indexOf(id)}`, `no campaign with id ${JSON.stringify(id)} has been uploaded`);
  }
  if (dimensions !== null) {
    const attributeNames = dimensions.filter((dimension) => !BUILT_IN.includes(dimension));
    if (attributeNames.length > 0) {
      const missing = await lookup.missingAttributes(attributeNames);
      for (const attribute of missing) {
        report(
          `/dimensions/${dimensions.indexOf(attribute)}`,
          `unknown dimension ${JSON.stringify(attribute)}: use ${BUILT_IN_DIMENSIONS.join(', ')} or the name of an extra customer column that has been uploaded`,
        );
      }
    }
  }

  const rankBy = body['rank_by'];
  if ((rankBy === 'uplift' || rankBy === 'incremental_profit') && source !== null && !('campaign_ids' in source)) {
    report('/rank_by', `${rankBy} needs a campaign report (a holdout is kept in campaigns); a sales report ranks by conversion_rate or value`);
  }
  if (rankBy === 'incremental_profit' && (body['economics'] === undefined || body['economics'] === null)) {
    report('/rank_by', 'incremental_profit needs economics: {"margin": …, "cost_per_contact": …}');
  }
  if (issues.length > 0 || name === null || source === null || dimensions === null || crosses === null || ageBands === null) throw new InvalidDefinitionError(issues);
  return {
    name,
    source,
    dimensions,
    crosses,
    age_bands: ageBands,
    min_n: (body['min_n'] as number | undefined) ?? MIN_N.default,
    confidence: (body['confidence'] as number | undefined) ?? CONFIDENCE.default,
    equivalence_margin: (body['equivalence_margin'] as number | undefined) ?? EQUIVALENCE_MARGIN.default,
    value_equivalence_margin: (body['value_equivalence_margin'] as number | null | undefined) ?? null,
    adjustment: (body['adjustment'] as Adjustment | undefined) ?? CHOICES.adjustment.default,
    value_basis: (body['value_basis'] as ValueBasis | undefined) ?? CHOICES.value_basis.default,
    rank_by: (body['rank_by'] as RankBy | undefined) ?? CHOICES.rank_by.default,
    rank_order: (body['rank_order'] as RankOrder | undefined) ?? CHOICES.rank_order.default,
    refresh: (body['refresh'] as RefreshMode | undefined) ?? CHOICES.refresh.default,
    economics: (body['economics'] as ReportDefinition['economics'] | undefined) ?? null,
  };
}

/** The default equivalence margin, so the wording can say whether a report uses it or its own. */
export const DEFAULT_EQUIVALENCE_MARGIN = EQUIVALENCE_MARGIN.default;

/**
 * A definition as stored, with the defaults of fields added since it was stored (the
 * equivalence margins), so every reader sees the current shape.
 */
export function withCurrentDefaults(stored: Omit<ReportDefinition, 'equivalence_margin' | 'value_equivalence_margin' | 'economics'> & Partial<ReportDefinition>): ReportDefinition {
  return {
    ...stored,
    equivalence_margin: stored.equivalence_margin ?? EQUIVALENCE_MARGIN.default,
    value_equivalence_margin: stored.value_equivalence_margin ?? null,
    economics: stored.economics ?? null,
  };
}

type Report = (path: string, reason: string) => void;

/** The name is judged trimmed, as it is stored. */
function readName(raw: string, report: Report): string | null {
  const name = raw.trim();
  if (name === '') {
    report('/name', `is required: ${NAME.description}`);
    return null;
  }
  // eslint-disable-next-line no-control-regex
  if (/[\u0000-\u001f\u007f]/.test(name)) {
    report('/name', 'must not contain control characters');
    return null;
  }
  return name;
}

function readSource(raw: unknown, wellFormed: (path: string) => boolean, report: Report): ReportSource | null {
  if (!isObject(raw)) {
    report('/source', `is required: ${SOURCE_HINT}`);
    return null;
  }
  const form = sourceForm(raw);
  if (form === null) {
    report('/source', 'campaign_ids' in raw ? `has both campaign_ids and a sales window: ${SOURCE_HINT}` : SOURCE_HINT);
    return null;
  }
  if (!wellFormed('/source')) return null;
  if (form === 0) {
    const ids = raw['campaign_ids'] as string[];
    const read: string[] = [];
    ids.forEach((id, index) => {
      const result = readIdentifier(id);
      if (!result.ok) report(`/source/campaign_ids/${index}`, `campaign id ${result.reason}`);
      else if (read.includes(result.value)) report(`/source/campaign_ids/${index}`, `campaign ${result.value} is listed twice`);
      else read.push(result.value);
    });
    return read.length === ids.length ? { campaign_ids: read } : null;
  }
  const from = readDate(raw['sales_from']);
  const to = readDate(raw['sales_to']);
  if (!from.ok) report('/source/sales_from', `sales_from ${from.reason}`);
  if (!to.ok) report('/source/sales_to', `sales_to ${to.reason}`);
  if (!from.ok || !to.ok) return null;
  if (from.value > to.value) {
    report('/source/sales_to', `the window ends (${to.value}) before it starts (${from.value})`);
    return null;
  }
  return { sales_from: from.value, sales_to: to.value };
}

function readDimensions(raw: string[] | undefined, report: Report): string[] | null {
  if (raw === undefined) return [...DIMENSIONS.default];
  const dimensions: string[] = [];
  raw.forEach((entry, index) => {
    if (!(BUILT_IN.includes(entry) || isAttributeName(entry))) report(`/dimensions/${index}`, unknownDimension(entry));
    else if (dimensions.includes(entry)) report(`/dimensions/${index}`, `dimension ${entry} is listed twice`);
    else dimensions.push(entry);
  });
  return dimensions.length === raw.length ? dimensions : null;
}

/** Crosses name the report's dimensions, each pair once, stored in the order of the dimensions list. */
function readCrosses(raw: Array<[string, string]> | undefined, dimensions: string[] | null, report: Report): Array<[string, string]> | null {
  if (dimensions === null) return null;
  const order = (a: string, b: string): [string, string] => (dimensions.indexOf(a) <= dimensions.indexOf(b) ? [a, b] : [b, a]);
  if (raw === undefined) {
    const pairs: Array<[string, string]> = [];
    for (let first = 0; first < dimensions.length; first += 1) {
      for (let second = first + 1; second < dimensions.length; second += 1) pairs.push([dimensions[first] as string, dimensions[second] as string]);
    }
    return pairs;
  }
  const pairs: Array<[string, string]> = [];
  const seen = new Set<string>();
  let valid = true;
  raw.forEach(([a, b], index) => {
    for (const name of [a, b]) {
      if (!dimensions.includes(name)) {
        report(`/crosses/${index}`, `${JSON.stringify(name)} is not one of the report's dimensions (${dimensions.join(', ')})`);
        valid = false;
      }
    }
    if (a === b) {
      report(`/crosses/${index}`, 'must name two different dimensions');
      valid = false;
    }
    if (!valid) return;
    const ordered = order(a, b);
    const key = ordered.join('\u0000');
    if (seen.has(key)) {
      report(`/crosses/${index}`, `the cross of ${ordered[0]} and ${ordered[1]} is listed twice`);
      valid = false;
      return;
    }
    seen.add(key);
    pairs.push(ordered);
  });
  return valid ? pairs : null;
}

function readAgeBands(raw: number[] | undefined, report: Report): number[] | null {
  if (raw === undefined) return [...AGE_BANDS.default];
  let valid = true;
  raw.forEach((edge, index) => {
    const previous = raw[index - 1];
    if (previous !== undefined && edge <= previous) {
      report(`/age_bands/${index}`, `band edges must be increasing: ${edge} follows ${previous}`);
      valid = false;
    }
  });
  return valid ? raw : null;
}
