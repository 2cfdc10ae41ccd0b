/**
 * The invented demo scenario: Quillfeather Garden Supply, a made-up mail-order seller of
 * garden tools and seeds, with made-up regions and sales channels. Everything here is
 * generated from a seed, so the same seed always gives the same rows.
 *
 * Effects planted on purpose, so a report has something real to find:
 * - customers who came through "catalogue mail" convert about twice as often in the spring campaign;
 * - customers aged 55–64 spend more when they do convert;
 * - the Saltmere region converts less than the others;
 * - the "newsletter" attribute has no effect at all (a report should find nothing there);
 * - the autumn campaign keeps about 15 % of its customers out on purpose (holdout = 1): they are
 *   not mailed, so they convert at the organic rate, about half the mailed rate; customers who
 *   came by friend referral buy nearly as often without the mailing (it adds little for them).
 */

export const DEMO_REGIONS = ['Brackenmoor', 'Saltmere', 'Highcombe', 'Fennwick', 'Orrin Coast'] as const;
export const DEMO_CHANNELS = ['web shop', 'catalogue mail', 'market stall', 'friend referral'] as const;
export const DEMO_CAMPAIGNS = [
  { campaignId: 'spring-seed-sale-2026', contactedAt: '2026-03-16' },
  { campaignId: 'autumn-bulb-offer-2026', contactedAt: '2026-09-14' },
] as const;

/** Share of the autumn campaign's customers kept out of it on purpose (its holdout). */
const DEMO_HOLDOUT_SHARE = 0.15;
/** Invented economics of the autumn mailing: a printed card and postage, and the margin on bulbs. */
export const DEMO_ECONOMICS = { margin: 0.45, cost_per_contact: 0.6 } as const;

export interface DemoOptions {
  seed: number;
  customers: number;
  /** Share of customers contacted by each campaign. */
  contactShare: number;
  /** Sales rows per customer, on average. */
  salesPerCustomer: number;
}

export const DEFAULT_DEMO_OPTIONS: DemoOptions = { seed: 20260316, customers: 4000, contactShare: 0.8, salesPerCustomer: 1.5 };

export interface DemoData {
  customersCsv: string;
  salesCsv: string;
  contacts: Array<{ campaignId: string; csv: string }>;
}

/** mulberry32: a small, fast, well-distributed 32-bit generator; enough for invented data. */
export function seededRandom(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let mixed = state;
    mixed = Math.imul(mixed ^ (mixed >>> 15), mixed | 1);
    mixed ^= mixed + Math.imul(mixed ^ (mixed >>> 7), mixed | 61);
    return ((mixed ^ (mixed >>> 14)) >>> 0) / 4294967296;
  };
}

function pick<T>(random: () => number, items: readonly T[], weights?: readonly number[]): T {
  if (!weights) return items[Math.floor(random() * items.length)] as T;
  const total = weights.reduce((sum, weight) => sum + weight, 0);
  let threshold = random() * total;
  for (let index = 0; index < items.length; index++) {
    threshold -= weights[index] as number;
    if (threshold <= 0) return items[index] as T;
  }
  return items[items.length - 1] as T;
}

function isoDate(year: number, dayOfYear: number): string {
  return new Date(Date.UTC(year, 0, 1 + dayOfYear)).toISOString().slice(0, 10);
}

function ageOn(birthDate: string, onDate: string): number {
  const years = Number(onDate.slice(0, 4)) - Number(birthDate.slice(0, 4));
  return onDate.slice(5) < birthDate.slice(5) ? years - 1 : years;
}

/** Revenue of one converted contact: a skewed amount in whole cents, as real order values are. */
function orderValue(random: () => number, meanMajorUnits: number): string {
  const lognormal = Math.exp(Math.log(meanMajorUnits) - 0.18 + 0.6 * gaussian(random));
  return lognormal.toFixed(2);
}

function gaussian(random: () => number): number {
  const u = Math.max(random(), 1e-12);
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * random());
}

export function generateDemoData(options: DemoOptions = DEFAULT_DEMO_OPTIONS): DemoData {
  const random = seededRandom(options.seed);
  const customerLines = ['customer_id,birth_date,region,channel,customer_type,newsletter'];
  const salesLines = ['sale_id,customer_id,sold_at,amount'];
  // The holdout draw has a generator of its own, so the spring campaign, the sales and the
  // mailed autumn customers stay exactly as they were before the demo had a holdout.
  const holdoutRandom = seededRandom(options.seed ^ 0x5eed);
  const contactLines = DEMO_CAMPAIGNS.map(() => ['customer_id,contacted_at,converted,revenue,holdout']);
  let saleNumber = 0;

  for (let index = 1; index <= options.customers; index++) {
    const customerId = `QG-${String(index).padStart(6, '0')}`;
    const customerType = random() < 0.9 ? 'individual' : 'company';
    // About 3 % have no birth date on file (companies never do): they land in the unknown age band.
    const birthDate = customerType === 'company' || random() < 0.03 ? '' : isoDate(1942 + Math.floor(random() * 64), Math.floor(random() * 365));
    const region = pick(random, DEMO_REGIONS, [3, 2, 2, 2, 1]);
    const channel = pick(random, DEMO_CHANNELS, [5, 2, 2, 1]);
    const newsletter = random() < 0.4 ? 'yes' : 'no';
    customerLines.push([customerId, birthDate, region, channel, customerType, newsletter].join(','));

    DEMO_CAMPAIGNS.forEach((campaign, campaignIndex) => {
      if (random() >= options.contactShare) return;
      if (birthDate !== '' && birthDate > campaign.contactedAt) return;
      let rate = 0.1;
      if (campaignIndex === 0 && channel === 'catalogue mail') rate *= 2.1;
      if (region === 'Saltmere') rate *= 0.6;
      const age = birthDate === '' ? null : ageOn(birthDate, campaign.contactedAt);
      const meanValue = age !== null && age >= 55 && age <= 64 ? 62 : 44;
      // The mailed outcome is always drawn, so the main generator's sequence does not depend on the holdout.
      const mailedConverted = random() < rate;
      const mailedRevenue = mailedConverted ? orderValue(random, meanValue) : '0';
      const holdout = campaignIndex === 1 && holdoutRandom() < DEMO_HOLDOUT_SHARE;
      // Kept out of the mailing: only the organic purchases in the campaign's window remain.
      const organicRate = rate * (channel === 'friend referral' ? 0.9 : 0.5);
      const converted = holdout ? holdoutRandom() < organicRate : mailedConverted;
      const revenue = holdout ? (converted ? orderValue(holdoutRandom, meanValue) : '0') : mailedRevenue;
      (contactLines[campaignIndex] as string[]).push([customerId, campaign.contactedAt, converted ? 1 : 0, revenue, holdout ? 1 : 0].join(','));
    });

    const sales = Math.floor(random() * options.salesPerCustomer * 2 + 0.5);
    for (let sale = 0; sale < sales; sale++) {
      const soldAt = isoDate(2026, Math.floor(random() * 320));
      if (birthDate !== '' && soldAt < birthDate) continue;
      saleNumber += 1;
      salesLines.push([`S-${String(saleNumber).padStart(7, '0')}`, customerId, soldAt, orderValue(random, 38)].join(','));
    }
  }

  return {
    customersCsv: customerLines.join('\n') + '\n',
    salesCsv: salesLines.join('\n') + '\n',
    contacts: DEMO_CAMPAIGNS.map((campaign, index) => ({ campaignId: campaign.campaignId, csv: (contactLines[index] as string[]).join('\n') + '\n' })),
  };
}
