/**
 * CPU time of counting 250,000 contacts into `CellDeltas` (the upload's pending changes to
 * contact_value_counts), medians of 7, for this checkout and optionally another one's module
 * (e.g. an earlier commit unpacked with `git archive`):
 *
 *   npx tsx bench/cell-deltas.ts [/path/to/other/src/aggregates/cell-deltas.ts]
 */
import path from 'node:path';
import { pathToFileURL } from 'node:url';

interface Deltas {
  add(contact: Record<string, unknown>, sign: 1 | -1): void;
  readonly size: number;
}

const REGIONS = ['Highcombe', 'Lowmarsh', 'Eastbury', 'Westfold', 'Northwick'];
const CHANNELS = ['friend referral', 'catalogue mail', 'web', 'store'];
const contacts = Array.from({ length: 250_000 }, (_, index) => ({
  campaign_id: 'spring',
  region: REGIONS[index % REGIONS.length],
  channel: CHANNELS[index % CHANNELS.length],
  customer_type: index % 9 === 0 ? 'company' : 'individual',
  age_at_contact: index % 50 === 0 ? null : 18 + (index % 70),
  holdout: index % 10 === 0 ? 1 : 0,
  converted: index % 7 === 0 ? 1 : 0,
  revenue_cents: index % 7 === 0 ? (index % 5000) * 100 : 0,
}));

async function medianMs(modulePath: string): Promise<{ ms: number; keys: number }> {
  const { CellDeltas } = (await import(pathToFileURL(path.resolve(modulePath)).href)) as { CellDeltas: new () => Deltas };
  const times: number[] = [];
  let keys = 0;
  for (let run = 0; run < 7; run++) {
    const deltas = new CellDeltas();
    const started = performance.now();
    for (const contact of contacts) deltas.add(contact, 1);
    times.push(performance.now() - started);
    keys = deltas.size;
  }
  times.sort((left, right) => left - right);
  return { ms: times[3] as number, keys };
}

for (const modulePath of ['src/aggregates/cell-deltas.ts', ...process.argv.slice(2)]) {
  const { ms, keys } = await medianMs(modulePath);
  console.log(`${modulePath}: ${ms.toFixed(1)} ms per 250,000 contacts (median of 7), ${keys} keys`);
}
