/**
 * The campaigns uploads have created, declared once (type, response validation, OpenAPI) and
 * listed with their counts, so a mistyped campaign id shows up as a campaign of its own.
 */
import type { Kysely } from 'kysely';
import { Type, type Static } from 'typebox';
import type { Database } from '../db/tables.js';
import { listCampaignCounts } from './listing-repository.js';

const date = (description: string) => Type.Union([Type.String({ format: 'date' }), Type.Null()], { description });

export const Campaign = Type.Object(
  {
    campaign_id: Type.String(),
    created_at: Type.String({ format: 'date-time', description: 'When the first upload of its contacts created the campaign.' }),
    contacts: Type.Integer({ minimum: 0, description: 'Contacts stored (one per listed customer, holdout included).' }),
    holdout_contacts: Type.Integer({ minimum: 0, description: 'Of the contacts, those kept out of the campaign on purpose (holdout = 1).' }),
    conversions: Type.Integer({ minimum: 0, description: 'Contacts with converted = 1.' }),
    first_contacted_at: date('The earliest contact date; null when no contact is stored.'),
    last_contacted_at: date('The latest contact date; null when no contact is stored.'),
    last_upload_at: Type.Union([Type.String({ format: 'date-time' }), Type.Null()], { description: 'When its latest accepted upload was received.' }),
  },
  { additionalProperties: false },
);

export const CampaignList = Type.Object({ campaigns: Type.Array(Campaign) }, { additionalProperties: false });

export type CampaignList = Static<typeof CampaignList>;

/** Every campaign with its counts, by id in code-unit order (the same on both engines). */
export async function listCampaigns(db: Kysely<Database>): Promise<CampaignList> {
  const campaigns = await listCampaignCounts(db);
  campaigns.sort((left, right) => (left.campaign_id < right.campaign_id ? -1 : left.campaign_id > right.campaign_id ? 1 : 0));
  return { campaigns };
}
