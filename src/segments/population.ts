/**
 * The population of a report (campaign contacts, or customers in a sales window) as a derived
 * table with one column per dimension, which the other queries of src/segments group in the
 * database so that they return sufficient statistics, never raw rows; and its totals.
 *
 * The SQL is the subset SQLite and PostgreSQL share (CASE, COALESCE, SUBSTR, CAST … AS
 * INTEGER / DOUBLE PRECISION) and everything is integer arithmetic on cents and years, so
 * both engines return the same exact sums. Text values are never ordered in SQL (collations
 * differ between engines); callers sort in code.
 */
import { sql, type RawBuilder } from 'kysely';
import type { Executor } from '../db/executor.js';
import { MAX_PLAUSIBLE_AGE, MIN_PLAUSIBLE_AGE, UNKNOWN, ageBands, isBuiltInDimension } from './dimensions.js';
import type { PopulationTotals } from './shifted-sums.js';

/**
 * Campaigns' contacts, or customers in a sales window. `knownAt` (a date) keeps only the
 * customers known by then: stored before that day, or with a sale before it. A window compared
 * with an earlier one is judged with the customers known at its start, so a customer who
 * arrived later is not counted as not buying back then.
 */
/**
 * A campaign population may be narrowed to one arm: the contacted customers or the holdout
 * (kept out on purpose); absent, it holds both, as it did before holdouts existed. It is read
 * from `table` (`campaignPopulationTable` chooses; absent: the contacts themselves).
 */
export type PopulationSource =
  | { kind: 'campaigns'; campaignIds: string[]; arm?: 'contacted' | 'holdout'; table?: CampaignPopulationTable }
  | { kind: 'sales'; from: string; to: string; knownAt?: string };

/**
 * Where a campaign population's units are read: every contact (`campaign_contacts`), or the
 * contacts kept as counts per cell, age, arm, outcome and revenue (`contact_value_counts`,
 * maintained with the contacts in the upload's transaction, so both give the same figures).
 */
export type CampaignPopulationTable = 'campaign_contacts' | 'contact_value_counts';

/**
 * The one choice of the rows a report reads. A campaign report whose dimensions are all built
 * in (age band, region, channel, customer type) reads `contact_value_counts`: every column it
 * groups or sums is a column of that table, whose rows are far fewer than the contacts (the
 * unconverted contacts of a cell and age are one row). A campaign report on an extra attribute
 * reads the contacts: the attribute is joined per customer (customer_attributes), and counts
 * kept per attribute label would multiply the table's rows by the labels of every attribute
 * uploaded. A sales report is not a campaign population at all and always reads its rows: its
 * unit is a customer whose spend is summed over a window the report chooses, which no count
 * kept in advance can hold without a row per customer.
 */
export function campaignPopulationTable(dimensions: readonly string[]): CampaignPopulationTable {
  return dimensions.every(isBuiltInDimension) ? 'contact_value_counts' : 'campaign_contacts';
}

export interface AggregationRequest {
  source: PopulationSource;
  dimensions: readonly string[];
  ageEdges: readonly number[];
  valueBasis: 'per_unit' | 'per_conversion';
}

/** Columns of the derived table `population` that every query of src/segments reads. */
export const VALUE = sql.ref('population.value_cents');
export const AGE = sql.ref('population.age');
export const CONVERTED = sql.ref('population.converted');
/**
 * How many units a row of the population stands for: 1 for a source read row by row, more for
 * a source kept as counts. Every aggregate weighs by it: count(*) is Σ units, Σv is Σ units·v.
 */
export const UNITS = sql.ref('population.units');

export function dimensionColumn(index: number): string {
  return `d${index}`;
}

export function attributeColumn(index: number): string {
  return `attribute_${index}`;
}

/** Age in whole years at `onDate` from `birthDateColumn`, by exact birthday arithmetic (as `ageInYears`). */
function ageAtDateSql(birthDateColumn: RawBuilder<unknown>, onDate: string): RawBuilder<number | null> {
  const year = Number(onDate.slice(0, 4));
  const monthDay = onDate.slice(5, 10);
  if (!Number.isInteger(year) || !/^\d{2}-\d{2}$/.test(monthDay)) throw new Error(`not an ISO date: ${onDate}`);
  return sql<number | null>`(${sql.lit(year)} - cast(substr(${birthDateColumn}, 1, 4) as integer) - case when ${sql.lit(monthDay)} < substr(${birthDateColumn}, 6, 5) then 1 else 0 end)`;
}

function plausibleAge(age: RawBuilder<unknown>): RawBuilder<number | null> {
  return sql<number | null>`case when ${age} between ${sql.lit(MIN_PLAUSIBLE_AGE)} and ${sql.lit(MAX_PLAUSIBLE_AGE)} then ${age} end`;
}

/** The columns a campaign report's cells are grouped by, in the order of contact_value_counts' key. */
export const CONTACT_CELL_COLUMNS = ['region', 'channel', 'customer_type'] as const;

/**
 * The units of the population with the columns the reports need: units (how many units the
 * row stands for, 1 for a source read row by row), converted (0/1), holdout
 * (0/1: kept out of the campaign on purpose; always 0 in a sales report), value_cents, age (plausible or null), raw_age (as stored or computed, null when unknown),
 * age_key (the age as the source stores it, for grouping in the order of its index: raw_age,
 * except -1 for unknown in contact_value_counts; `plausibleAgeOf` reads either) and the
 * dimension columns. A campaign population reads the customer's values copied onto each
 * contact, so it never joins customers; it also offers campaign_key, and always all three
 * customer columns, so that its cells can be grouped in the order of its covering index.
 */
export function basePopulation(source: PopulationSource, dimensions: readonly string[]): RawBuilder<unknown> {
  const attributeNames = dimensions.filter((dimension) => !isBuiltInDimension(dimension));
  const customerKey = source.kind === 'campaigns' ? sql.ref('cc.customer_id') : sql.ref('cu.customer_id');

  const columns: Array<RawBuilder<unknown>> = [];
  attributeNames.forEach((_name, index) => {
    columns.push(sql`coalesce(${sql.ref(`a${index}.value`)}, ${sql.lit(UNKNOWN)}) as ${sql.ref(attributeColumn(index))}`);
  });
  const attributeJoins = attributeNames.map(
    (name, index) =>
      sql`left join customer_attributes ${sql.ref(`a${index}`)} on ${sql.ref(`a${index}.customer_id`)} = ${customerKey} and ${sql.ref(`a${index}.name`)} = ${name}`,
  );

  if (source.kind === 'campaigns' && source.table === 'contact_value_counts') {
    if (attributeNames.length > 0) throw new Error(`contact_value_counts holds no extra attribute (${attributeNames.join(', ')}): such a report reads campaign_contacts`);
    // The table keeps an unknown age as -1 (a key column cannot be NULL); the population has it as null.
    const storedAge = sql`nullif(cvc.age, -1)`;
    for (const column of CONTACT_CELL_COLUMNS) columns.push(sql`${sql.ref(`cvc.${column}`)} as ${sql.ref(column)}`);
    columns.push(
      sql`cvc.units as units`,
      sql`cvc.campaign_id as campaign_key`,
      sql`cvc.converted as converted`,
      sql`cvc.holdout as holdout`,
      sql`cvc.revenue_cents as value_cents`,
      sql`${storedAge} as raw_age`,
      sql`cvc.age as age_key`,
      sql`${plausibleAge(storedAge)} as age`,
    );
    return sql`select ${sql.join(columns)}
      from contact_value_counts cvc
      where cvc.campaign_id in (${sql.join(source.campaignIds)})
      ${source.arm === undefined ? sql`` : sql`and cvc.holdout = ${source.arm === 'holdout' ? 1 : 0}`}`;
  }

  if (source.kind === 'campaigns') {
    for (const column of CONTACT_CELL_COLUMNS) columns.push(sql`${sql.ref(`cc.${column}`)} as ${sql.ref(column)}`);
    columns.push(
      sql`1 as units`,
      sql`cc.campaign_id as campaign_key`,
      sql`cc.converted as converted`,
      sql`cc.holdout as holdout`,
      sql`cc.revenue_cents as value_cents`,
      sql`cc.age_at_contact as raw_age`,
      sql`cc.age_at_contact as age_key`,
      sql`${plausibleAge(sql.ref('cc.age_at_contact'))} as age`,
    );
    return sql`select ${sql.join(columns)}
      from campaign_contacts cc
      ${sql.join(attributeJoins, sql` `)}
      where cc.campaign_id in (${sql.join(source.campaignIds)})
      ${source.arm === undefined ? sql`` : sql`and cc.holdout = ${source.arm === 'holdout' ? 1 : 0}`}`;
  }

  // A sales report's unit is a customer: bought in the window or not, spend in the window, age at its end.
  for (const column of CONTACT_CELL_COLUMNS) if (dimensions.includes(column)) columns.push(sql`${sql.ref(`cu.${column}`)} as ${sql.ref(column)}`);
  const ageAtEnd = ageAtDateSql(sql.ref('cu.birth_date'), source.to);
  columns.push(
    sql`1 as units`,
    sql`case when s.spend is null then 0 else 1 end as converted`,
    // A sales report has no campaign, so no one was held out of it.
    sql`0 as holdout`,
    sql`coalesce(s.spend, 0) as value_cents`,
    sql`${ageAtEnd} as raw_age`,
    sql`${ageAtEnd} as age_key`,
    sql`${plausibleAge(ageAtEnd)} as age`,
  );
  return sql`select ${sql.join(columns)}
    from customers cu
    left join (
      select customer_id, sum(amount_cents) as spend from sales
      where sold_at >= ${source.from} and sold_at <= ${source.to}
      group by customer_id
    ) s on s.customer_id = cu.customer_id
    ${sql.join(attributeJoins, sql` `)}
    ${
      source.knownAt === undefined
        ? sql``
        : sql`where (cu.created_at < ${source.knownAt} or exists (select 1 from sales k where k.customer_id = cu.customer_id and k.sold_at < ${source.knownAt}))`
    }`;
}

/** The age as the population's `age` column has it: the raw age when plausible, else null. */
export function plausibleAgeOf(rawAge: number | null): number | null {
  return rawAge !== null && rawAge >= MIN_PLAUSIBLE_AGE && rawAge <= MAX_PLAUSIBLE_AGE ? rawAge : null;
}

function ageBandSql(age: RawBuilder<unknown>, edges: readonly number[]): RawBuilder<string> {
  const bands = ageBands(edges);
  const branches = bands.map((band) => sql`when ${age} <= ${sql.lit(band.high)} then ${sql.lit(band.label)}`);
  return sql<string>`case when ${age} is null then ${sql.lit(UNKNOWN)} ${sql.join(branches, sql` `)} else ${sql.lit(UNKNOWN)} end`;
}

/**
 * The population as a derived table `population` with columns d0…dk (one per dimension, the
 * age band computed in SQL), units, converted, holdout, value_cents, age and raw_age.
 */
export function population(request: Pick<AggregationRequest, 'source' | 'dimensions' | 'ageEdges'>): RawBuilder<unknown> {
  let attributeIndex = 0;
  const dimensionColumns = request.dimensions.map((dimension, index) => {
    let expression: RawBuilder<unknown>;
    if (dimension === 'age_band') expression = ageBandSql(sql.ref('base.age'), request.ageEdges);
    else if (isBuiltInDimension(dimension)) expression = sql.ref(`base.${dimension}`);
    else expression = sql.ref(`base.${attributeColumn(attributeIndex++)}`);
    return sql`${expression} as ${sql.ref(dimensionColumn(index))}`;
  });
  return sql`(select ${sql.join([...dimensionColumns, sql`base.units as units`, sql`base.converted as converted`, sql`base.holdout as holdout`, sql`base.value_cents as value_cents`, sql`base.age as age`, sql`base.raw_age as raw_age`])}
    from (${basePopulation(request.source, request.dimensions)}) base) population`;
}

export function toNumber(value: unknown): number {
  if (value === null || value === undefined) return 0;
  const number = typeof value === 'number' ? value : Number(value);
  if (!Number.isFinite(number)) throw new Error(`the database returned a non-numeric aggregate: ${String(value)}`);
  return number;
}

/**
 * Counts and totals of the whole population in one pass, the first of a report's queries:
 * its means, rounded to whole cents and years, become the shifts of the cell sums.
 */
export async function populationTotals(db: Executor, source: PopulationSource): Promise<PopulationTotals> {
  const { rows } = await sql<Record<string, unknown>>`
    select sum(${UNITS}) as n,
      sum(${UNITS} * ${CONVERTED}) as conversions,
      sum(${UNITS} * ${VALUE}) as value_cents,
      sum(case when ${CONVERTED} = 1 then ${UNITS} * ${VALUE} else 0 end) as converted_value_cents,
      sum(case when ${AGE} is null then 0 else ${UNITS} end) as aged_units,
      sum(${UNITS} * ${AGE}) as age_total
    from (${basePopulation(source, [])}) population`.execute(db);
  const row = rows[0] ?? {};
  return {
    n: toNumber(row['n']),
    conversions: toNumber(row['conversions']),
    valueCents: toNumber(row['value_cents']),
    convertedValueCents: toNumber(row['converted_value_cents']),
    agedUnits: toNumber(row['aged_units']),
    ageTotal: toNumber(row['age_total']),
  };
}

/** A campaign population: the source of a campaign report. */
type CampaignSource = Extract<PopulationSource, { kind: 'campaigns' }>;

/**
 * How many holdout contacts the campaigns hold: a campaign report splits its arms only when
 * there are some. Read from the report's own source, weighted like every other count of it.
 */
export async function holdoutContacts(db: Executor, source: CampaignSource): Promise<number> {
  if (source.campaignIds.length === 0) return 0;
  const { rows } = await sql<Record<string, unknown>>`
    select sum(${UNITS}) as n from (${basePopulation({ ...source, arm: 'holdout' }, [])}) population`.execute(db);
  return toNumber(rows[0]?.['n']);
}
