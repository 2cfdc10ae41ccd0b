/** The SQL that lists what uploads have stored: campaigns with their counts, and receipts newest first. */
import type { Executor } from '../db/executor.js';
import type { IngestKind, IngestsTable } from '../db/tables.js';

export interface CampaignCounts {
  campaign_id: string;
  created_at: string;
  contacts: number;
  holdout_contacts: number;
  conversions: number;
  first_contacted_at: string | null;
  last_contacted_at: string | null;
  last_upload_at: string | null;
}

/** Every campaign with its contact, holdout and conversion counts and its latest upload, in no particular order. */
export async function listCampaignCounts(db: Executor): Promise<CampaignCounts[]> {
  const [campaigns, uploads] = await Promise.all([
    db
      .selectFrom('campaigns as c')
      .leftJoin('campaign_contacts as cc', 'cc.campaign_id', 'c.campaign_id')
      .select((eb) => [
        'c.campaign_id',
        'c.created_at',
        eb.fn.count<number | string | bigint>('cc.customer_id').as('contacts'),
        eb.fn.sum<number | string | bigint | null>('cc.holdout').as('holdout_contacts'),
        eb.fn.sum<number | string | bigint | null>('cc.converted').as('conversions'),
        eb.fn.min<string | null>('cc.contacted_at').as('first_contacted_at'),
        eb.fn.max<string | null>('cc.contacted_at').as('last_contacted_at'),
      ])
      .groupBy(['c.campaign_id', 'c.created_at'])
      .execute(),
    db
      .selectFrom('ingests')
      .select((eb) => ['campaign_id', eb.fn.max<string>('received_at').as('last_upload_at')])
      .where('campaign_id', 'is not', null)
      .groupBy('campaign_id')
      .execute(),
  ]);
  const lastUpload = new Map(uploads.map((row) => [row.campaign_id, row.last_upload_at]));
  return campaigns.map((row) => ({
    campaign_id: row.campaign_id,
    created_at: row.created_at,
    contacts: Number(row.contacts),
    holdout_contacts: Number(row.holdout_contacts ?? 0),
    conversions: Number(row.conversions ?? 0),
    first_contacted_at: row.first_contacted_at,
    last_contacted_at: row.last_contacted_at,
    last_upload_at: lastUpload.get(row.campaign_id) ?? null,
  }));
}

export interface IngestFilter {
  kind: IngestKind | null;
  campaignId: string | null;
}

/** One page of stored receipts, newest first, and how many match in all. */
export async function listIngests(db: Executor, filter: IngestFilter, page: { limit: number; offset: number }): Promise<{ rows: IngestsTable[]; total: number }> {
  let query = db.selectFrom('ingests');
  if (filter.kind !== null) query = query.where('kind', '=', filter.kind);
  if (filter.campaignId !== null) query = query.where('campaign_id', '=', filter.campaignId);
  const [rows, counted] = await Promise.all([
    query.selectAll().orderBy('received_at', 'desc').orderBy('ingest_id', 'desc').limit(page.limit).offset(page.offset).execute(),
    query.select((eb) => eb.fn.countAll<number | string | bigint>().as('total')).executeTakeFirstOrThrow(),
  ]);
  return { rows, total: Number(counted.total) };
}
