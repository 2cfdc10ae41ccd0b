/**
 * Report definitions: the fields a client sends, their defaults, and the checks that turn a
 * request body into a normalized definition. Checks that need no database run here; the
 * ones that do (does the campaign exist, is the attribute stored) are asked of a lookup the
 * caller passes in, so this module stays free of SQL.
 */
import { readDate, readIdentifier } from '../ingest/fields.js';
import { BUILT_IN_DIMENSIONS, MAX_PLAUSIBLE_AGE, MIN_PLAUSIBLE_AGE, isAttributeName } from '../segments/index.js';

export type ReportSource = { campaign_ids: string[] } | { sales_from: string; sales_to: string };
export type Adjustment = 'bh' | 'holm' | 'none';
export type ValueBasis = 'per_unit' | 'per_conversion';
export type RankBy = 'conversion_rate' | 'value';
export type RankOrder = 'lower_bound' | 'estimate';
export type RefreshMode = 'weekly' | 'manual';

/** A definition with every default filled in; this is what is stored and what a snapshot records. */
export interface ReportDefinition {
  name: string;
  source: ReportSource;
  dimensions: string[];
  crosses: Array<[string, string]>;
  age_bands: number[];
  min_n: number;
  confidence: number;
  adjustment: Adjustment;
  value_basis: ValueBasis;
  rank_by: RankBy;
  rank_order: RankOrder;
  refresh: RefreshMode;
}

export const DEFINITION_FIELDS = [
  'name',
  'source',
  'dimensions',
  'crosses',
  'age_bands',
  'min_n',
  'confidence',
  'adjustment',
  'value_basis',
  'rank_by',
  'rank_order',
  'refresh',
] as const;

export const DEFAULT_DIMENSIONS = ['age_band', 'region', 'channel'] as const;
export const DEFAULT_AGE_BANDS = [18, 25, 35, 45, 55, 65] as const;
export const DEFAULT_MIN_N = 30;
export const DEFAULT_CONFIDENCE = 0.95;
export const ADJUSTMENTS: readonly Adjustment[] = ['bh', 'holm', 'none'];
export const VALUE_BASES: readonly ValueBasis[] = ['per_unit', 'per_conversion'];
export const RANK_BY: readonly RankBy[] = ['conversion_rate', 'value'];
export const RANK_ORDERS: readonly RankOrder[] = ['lower_bound', 'estimate'];
export const REFRESH_MODES: readonly RefreshMode[] = ['weekly', 'manual'];

/**
 * More dimensions multiply the finest cells (and the crosses grow with the square); six keeps
 * a report readable and its one aggregation query small.
 */
export const MAX_DIMENSIONS = 6;
export const MAX_CAMPAIGNS = 100;
export const MAX_AGE_BANDS = 20;
export const MAX_NAME_LENGTH = 200;
export const MAX_MIN_N = 1_000_000;

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

function field(path: string): string {
  return `body${path}`;
}

/**
 * Reads a definition from a request body: checks every field, fills in the defaults, and
 * asks `lookup` whether the named campaigns and attributes exist.
 * @throws InvalidDefinitionError listing every problem found (not only the first)
 * @example
 * await normalizeDefinition({ name: 'Spring', source: { campaign_ids: ['spring'] } }, lookup);
 * // { name: 'Spring', dimensions: ['age_band', 'region', 'channel'], crosses: [[…], …], min_n: 30, … }
 */
export async function normalizeDefinition(body: unknown, lookup: DefinitionLookup): Promise<ReportDefinition> {
  const issues: DefinitionIssue[] = [];
  if (!isObject(body)) throw new InvalidDefinitionError([{ field: 'body', reason: 'must be a JSON object with the report definition' }]);
  for (const key of Object.keys(body)) {
    if (!(DEFINITION_FIELDS as readonly string[]).includes(key)) {
      issues.push({ field: field(`/${key}`), reason: `is not a report definition field (known fields: ${DEFINITION_FIELDS.join(', ')})` });
    }
  }

  const name = readName(body['name'], issues);
  const source = readSource(body['source'], issues);
  const dimensions = readDimensions(body['dimensions'], issues);
  const crosses = readCrosses(body['crosses'], dimensions, issues);
  const ageBands = readAgeBands(body['age_bands'], issues);
  const minN = readInteger(body['min_n'], '/min_n', DEFAULT_MIN_N, 2, MAX_MIN_N, issues);
  const confidence = readConfidence(body['confidence'], issues);
  const adjustment = readEnum(body['adjustment'], '/adjustment', ADJUSTMENTS, 'bh', issues);
  const valueBasis = readEnum(body['value_basis'], '/value_basis', VALUE_BASES, 'per_unit', issues);
  const rankBy = readEnum(body['rank_by'], '/rank_by', RANK_BY, 'conversion_rate', issues);
  const rankOrder = readEnum(body['rank_order'], '/rank_order', RANK_ORDERS, 'lower_bound', issues);
  const refresh = readEnum(body['refresh'], '/refresh', REFRESH_MODES, 'manual', issues);

  // Stored-data checks only for fields that are otherwise well formed, so one mistake is reported once.
  if (source !== null && 'campaign_ids' in source) {
    const missing = await lookup.missingCampaigns(source.campaign_ids);
    for (const id of missing) {
      const index = source.campaign_ids.indexOf(id);
      issues.push({ field: field(`/source/campaign_ids/${index}`), reason: `no campaign with id ${JSON.stringify(id)} has been uploaded` });
    }
  }
  if (dimensions !== null) {
    const attributeNames = dimensions.filter((dimension) => !(BUILT_IN_DIMENSIONS as readonly string[]).includes(dimension));
    if (attributeNames.length > 0) {
      const missing = await lookup.missingAttributes(attributeNames);
      for (const attribute of missing) {
        issues.push({
          field: field(`/dimensions/${dimensions.indexOf(attribute)}`),
          reason: `unknown dimension ${JSON.stringify(attribute)}: use ${BUILT_IN_DIMENSIONS.join(', ')} or the name of an extra customer column that has been uploaded`,
        });
      }
    }
  }

  if (issues.length > 0) throw new InvalidDefinitionError(issues);
  return {
    name: name as string,
    source: source as ReportSource,
    dimensions: dimensions as string[],
    crosses: crosses as Array<[string, string]>,
    age_bands: ageBands as number[],
    min_n: minN as number,
    confidence: confidence as number,
    adjustment,
    value_basis: valueBasis,
    rank_by: rankBy,
    rank_order: rankOrder,
    refresh,
  };
}

function readName(raw: unknown, issues: DefinitionIssue[]): string | null {
  if (typeof raw !== 'string' || raw.trim() === '') {
    issues.push({ field: field('/name'), reason: 'is required: a short text naming the report' });
    return null;
  }
  const name = raw.trim();
  // eslint-disable-next-line no-control-regex
  if (/[\u0000-\u001f\u007f]/.test(name)) {
    issues.push({ field: field('/name'), reason: 'must not contain control characters' });
    return null;
  }
  if (name.length > MAX_NAME_LENGTH) {
    issues.push({ field: field('/name'), reason: `must be at most ${MAX_NAME_LENGTH} characters` });
    return null;
  }
  return name;
}

function readSource(raw: unknown, issues: DefinitionIssue[]): ReportSource | null {
  const hint = 'give either {"campaign_ids": ["…"]} or {"sales_from": "YYYY-MM-DD", "sales_to": "YYYY-MM-DD"}';
  if (!isObject(raw)) {
    issues.push({ field: field('/source'), reason: `is required: ${hint}` });
    return null;
  }
  const hasCampaigns = 'campaign_ids' in raw;
  const hasWindow = 'sales_from' in raw || 'sales_to' in raw;
  if (hasCampaigns === hasWindow) {
    issues.push({ field: field('/source'), reason: hasCampaigns ? `has both campaign_ids and a sales window: ${hint}` : hint });
    return null;
  }
  const allowed = hasCampaigns ? ['campaign_ids'] : ['sales_from', 'sales_to'];
  for (const key of Object.keys(raw)) {
    if (!allowed.includes(key)) issues.push({ field: field(`/source/${key}`), reason: `is not a source field: ${hint}` });
  }
  if (hasCampaigns) {
    const ids = raw['campaign_ids'];
    if (!Array.isArray(ids) || ids.length === 0) {
      issues.push({ field: field('/source/campaign_ids'), reason: 'must be a non-empty list of campaign ids' });
      return null;
    }
    if (ids.length > MAX_CAMPAIGNS) {
      issues.push({ field: field('/source/campaign_ids'), reason: `may list at most ${MAX_CAMPAIGNS} campaigns` });
      return null;
    }
    const read: string[] = [];
    ids.forEach((id, index) => {
      const result = readIdentifier(id);
      if (!result.ok) issues.push({ field: field(`/source/campaign_ids/${index}`), reason: `campaign id ${result.reason}` });
      else if (read.includes(result.value)) issues.push({ field: field(`/source/campaign_ids/${index}`), reason: `campaign ${result.value} is listed twice` });
      else read.push(result.value);
    });
    return read.length === ids.length ? { campaign_ids: read } : null;
  }
  const from = readDate(raw['sales_from']);
  const to = readDate(raw['sales_to']);
  if (!from.ok) issues.push({ field: field('/source/sales_from'), reason: `sales_from ${from.reason}` });
  if (!to.ok) issues.push({ field: field('/source/sales_to'), reason: `sales_to ${to.reason}` });
  if (!from.ok || !to.ok) return null;
  if (from.value > to.value) {
    issues.push({ field: field('/source/sales_to'), reason: `the window ends (${to.value}) before it starts (${from.value})` });
    return null;
  }
  return { sales_from: from.value, sales_to: to.value };
}

function readDimensions(raw: unknown, issues: DefinitionIssue[]): string[] | null {
  if (raw === undefined) return [...DEFAULT_DIMENSIONS];
  if (!Array.isArray(raw) || raw.length === 0) {
    issues.push({ field: field('/dimensions'), reason: 'must be a non-empty list of dimension names' });
    return null;
  }
  if (raw.length > MAX_DIMENSIONS) {
    issues.push({ field: field('/dimensions'), reason: `may list at most ${MAX_DIMENSIONS} dimensions` });
    return null;
  }
  const dimensions: string[] = [];
  let valid = true;
  raw.forEach((entry, index) => {
    if (typeof entry !== 'string' || !((BUILT_IN_DIMENSIONS as readonly string[]).includes(entry) || isAttributeName(entry))) {
      issues.push({
        field: field(`/dimensions/${index}`),
        reason: `unknown dimension ${JSON.stringify(entry)}: use ${BUILT_IN_DIMENSIONS.join(', ')} or the name of an extra customer column`,
      });
      valid = false;
    } else if (dimensions.includes(entry)) {
      issues.push({ field: field(`/dimensions/${index}`), reason: `dimension ${entry} is listed twice` });
      valid = false;
    } else {
      dimensions.push(entry);
    }
  });
  return valid ? dimensions : null;
}

function readCrosses(raw: unknown, dimensions: string[] | null, issues: DefinitionIssue[]): Array<[string, string]> | null {
  if (dimensions === null) return null;
  const order = (a: string, b: string): [string, string] => (dimensions.indexOf(a) <= dimensions.indexOf(b) ? [a, b] : [b, a]);
  if (raw === undefined) {
    const pairs: Array<[string, string]> = [];
    for (let first = 0; first < dimensions.length; first += 1) {
      for (let second = first + 1; second < dimensions.length; second += 1) pairs.push([dimensions[first] as string, dimensions[second] as string]);
    }
    return pairs;
  }
  if (!Array.isArray(raw)) {
    issues.push({ field: field('/crosses'), reason: 'must be a list of dimension pairs such as [["age_band", "region"]], or [] for none' });
    return null;
  }
  const pairs: Array<[string, string]> = [];
  const seen = new Set<string>();
  let valid = true;
  raw.forEach((pair, index) => {
    if (!Array.isArray(pair) || pair.length !== 2 || typeof pair[0] !== 'string' || typeof pair[1] !== 'string') {
      issues.push({ field: field(`/crosses/${index}`), reason: 'must be a pair of two dimension names' });
      valid = false;
      return;
    }
    const [a, b] = pair as [string, string];
    for (const name of [a, b]) {
      if (!dimensions.includes(name)) {
        issues.push({ field: field(`/crosses/${index}`), reason: `${JSON.stringify(name)} is not one of the report's dimensions (${dimensions.join(', ')})` });
        valid = false;
      }
    }
    if (a === b) {
      issues.push({ field: field(`/crosses/${index}`), reason: 'must name two different dimensions' });
      valid = false;
    }
    if (!valid) return;
    const ordered = order(a, b);
    const key = ordered.join('\u0000');
    if (seen.has(key)) {
      issues.push({ field: field(`/crosses/${index}`), reason: `the cross of ${ordered[0]} and ${ordered[1]} is listed twice` });
      valid = false;
      return;
    }
    seen.add(key);
    pairs.push(ordered);
  });
  return valid ? pairs : null;
}

function readAgeBands(raw: unknown, issues: DefinitionIssue[]): number[] | null {
  if (raw === undefined) return [...DEFAULT_AGE_BANDS];
  if (!Array.isArray(raw) || raw.length === 0 || raw.length > MAX_AGE_BANDS) {
    issues.push({ field: field('/age_bands'), reason: `must be a list of 1 to ${MAX_AGE_BANDS} lower band edges in years, such as [18, 25, 35, 45, 55, 65]` });
    return null;
  }
  let valid = true;
  raw.forEach((edge, index) => {
    if (typeof edge !== 'number' || !Number.isInteger(edge)) {
      issues.push({ field: field(`/age_bands/${index}`), reason: 'must be a whole number of years' });
      valid = false;
    } else if (edge < MIN_PLAUSIBLE_AGE || edge > MAX_PLAUSIBLE_AGE) {
      issues.push({
        field: field(`/age_bands/${index}`),
        reason: `must be from ${MIN_PLAUSIBLE_AGE} to ${MAX_PLAUSIBLE_AGE}: ages outside that range are counted in the unknown band`,
      });
      valid = false;
    } else if (index > 0 && typeof raw[index - 1] === 'number' && edge <= (raw[index - 1] as number)) {
      issues.push({ field: field(`/age_bands/${index}`), reason: `band edges must be increasing: ${edge} follows ${raw[index - 1] as number}` });
      valid = false;
    }
  });
  return valid ? (raw as number[]) : null;
}

function readInteger(raw: unknown, path: string, fallback: number, min: number, max: number, issues: DefinitionIssue[]): number | null {
  if (raw === undefined) return fallback;
  if (typeof raw !== 'number' || !Number.isInteger(raw) || raw < min || raw > max) {
    issues.push({ field: field(path), reason: `must be a whole number from ${min} to ${max}, got ${JSON.stringify(raw)}` });
    return null;
  }
  return raw;
}

function readConfidence(raw: unknown, issues: DefinitionIssue[]): number | null {
  if (raw === undefined) return DEFAULT_CONFIDENCE;
  if (typeof raw !== 'number' || !Number.isFinite(raw) || raw <= 0 || raw >= 1) {
    issues.push({ field: field('/confidence'), reason: `must be a number strictly between 0 and 1, such as 0.95, got ${JSON.stringify(raw)}` });
    return null;
  }
  return raw;
}

function readEnum<T extends string>(raw: unknown, path: string, choices: readonly T[], fallback: T, issues: DefinitionIssue[]): T {
  if (raw === undefined) return fallback;
  const match = choices.find((choice) => choice === raw);
  if (match === undefined) {
    issues.push({ field: field(path), reason: `must be one of ${choices.join(', ')}, got ${JSON.stringify(raw)}` });
    return fallback;
  }
  return match;
}
