/** Data-quality counts of a report that the cells do not show. */
import { sql } from 'kysely';
import type { Dialect } from '../db/connect.js';
import type { Executor } from '../db/executor.js';
import { toNumber, type PopulationSource } from './population.js';
import { compareText } from './text-order.js';

/** Data-quality counts that are not visible in the cells. */
export interface SourceQuality {
  /** Stored customers outside the population (campaign reports: never contacted in these campaigns). */
  customersOutsidePopulation: number;
  /** Customers without any sale at all, in or out of the window (sales reports). */
  customersWithoutAnySale: number;
  rejectedRows: Array<{ kind: string; ingests: number; rejected: number }>;
}

/** Counts of stored customers outside the population (or without sales) and the rejected rows of the ingests a report draws on. */
export async function sourceQuality(db: Executor, source: PopulationSource, dialect: Dialect): Promise<SourceQuality> {
  const customers = toNumber((await sql<{ n: unknown }>`select count(*) as n from customers`.execute(db)).rows[0]?.n);
  let customersOutsidePopulation = 0;
  let customersWithoutAnySale = 0;
  if (source.kind === 'campaigns') {
    const campaigns = sql.join(source.campaignIds);
    // SQLite: one probe per customer into the (customer, campaign) index, rather than a sort of
    // every contact. PostgreSQL: one pass over the campaigns' contacts, whose plan does not hang
    // on the tables' statistics; the probe's semi-join ran as a nested loop over every customer
    // on tables not yet analysed after a large upload (1.9 s against 0.39 s at 1,000,000
    // contacts in psql; bench/pg-refresh-reads.ts times it).
    const contactedQuery =
      dialect === 'sqlite'
        ? sql<{ n: unknown }>`select count(*) as n from customers c where exists (
          select 1 from campaign_contacts cc where cc.customer_id = c.customer_id and cc.campaign_id in (${campaigns}))`
        : sql<{ n: unknown }>`select count(distinct customer_id) as n from campaign_contacts where campaign_id in (${campaigns})`;
    const contacted = toNumber((await contactedQuery.execute(db)).rows[0]?.n);
    customersOutsidePopulation = customers - contacted;
  } else {
    const withSales = toNumber((await sql<{ n: unknown }>`select count(*) as n from (select distinct customer_id from sales) buyers`.execute(db)).rows[0]?.n);
    customersWithoutAnySale = customers - withSales;
  }
  const ingestFilter =
    source.kind === 'campaigns'
      ? sql`kind = 'customers' or (kind = 'contacts' and campaign_id in (${sql.join(source.campaignIds)}))`
      : sql`kind in ('customers', 'sales')`;
  const { rows } = await sql<Record<string, unknown>>`
    select kind, count(*) as ingests, sum(rejected) as rejected from ingests where ${ingestFilter} group by kind`.execute(db);
  const rejectedRows = rows
    .map((row) => ({ kind: String(row['kind']), ingests: toNumber(row['ingests']), rejected: toNumber(row['rejected']) }))
    .sort((left, right) => compareText(left.kind, right.kind));
  return { customersOutsidePopulation, customersWithoutAnySale, rejectedRows };
}
