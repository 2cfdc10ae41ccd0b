/**
 * The read half of a refresh (`readReportAggregates`) on a kept SQLite database, in this
 * process on the main thread, alternated with the same read preceded by the two reads a report
 * on the kept counts no longer makes (the holdout probe and the label bounds): wall and CPU time,
 * medians. The database is one `bench/event-loop.ts --database FILE` kept; its first report is read.
 *
 *   npx tsx bench/refresh-read.ts FILE [--runs 9]
 */
import { parseArgs } from 'node:util';
import { sql } from 'kysely';
import { openDatabase, sqliteConnectionOf } from '../src/db/connect.js';
import type { ReportDefinition } from '../src/report/definition/index.js';
import { refuseLabelsPastLimit } from '../src/report/snapshot/label-limit.js';
import { populationSource, readReportAggregates } from '../src/report/snapshot/read-aggregates.js';
import { holdoutContacts } from '../src/segments/index.js';
import { median } from './process-readings.js';

const { values: options, positionals } = parseArgs({ options: { runs: { type: 'string', default: '9' } }, allowPositionals: true });
const file = positionals[0];
if (file === undefined) throw new Error('usage: npx tsx bench/refresh-read.ts FILE [--runs 9]');
const LIMIT = 1000;

const handle = await openDatabase({ dialect: 'sqlite', file });
try {
  const report = (await sql<{ report_id: string; definition: string }>`select report_id, definition from reports order by created_at limit 1`.execute(handle.readDb)).rows[0];
  if (report === undefined) throw new Error(`${file} holds no report`);
  const definition = JSON.parse(report.definition) as ReportDefinition;
  const source = populationSource(definition);
  if (source.kind !== 'campaigns') throw new Error('the first report is not a campaign report');
  const read = () => readReportAggregates(handle.readDb, report.report_id, definition, { dialect: 'sqlite', sqlite: sqliteConnectionOf(handle.readDb), maxLabelsPerDimension: LIMIT });
  const withEarlierReads = async () => {
    await holdoutContacts(handle.readDb, source);
    const request = { source, dimensions: definition.dimensions, ageEdges: definition.age_bands };
    await handle.readDb.transaction().execute((trx) => refuseLabelsPastLimit(trx, report.report_id, request, LIMIT));
    await read();
  };
  const variants = [
    { name: 'the read', run: read, wall: [] as number[], cpu: [] as number[] },
    { name: 'holdout probe and label bounds, then the read', run: withEarlierReads, wall: [] as number[], cpu: [] as number[] },
  ];
  // The first round warms the page cache and the code; it is not counted.
  for (let round = 0; round <= Number(options.runs); round++) {
    for (const variant of variants) {
      const started = performance.now();
      const cpuBefore = process.cpuUsage();
      await variant.run();
      const cpu = process.cpuUsage(cpuBefore);
      if (round === 0) continue;
      variant.wall.push(performance.now() - started);
      variant.cpu.push((cpu.user + cpu.system) / 1000);
    }
  }
  for (const variant of variants) {
    console.log(`${variant.name}: wall median ${median(variant.wall).toFixed(0)} ms, CPU median ${median(variant.cpu).toFixed(0)} ms (${variant.cpu.length} runs)`);
  }
} finally {
  await handle.close();
}
