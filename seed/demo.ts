/**
 * `npm run demo`: a fresh embedded database with the invented demo data, loaded through the
 * ingest routes, two reports defined and refreshed through the report routes (who responded to
 * the spring campaign; what the autumn mailing added, measured against its holdout), then the service
 * listening. Its log is quiet (warnings only, unless LOG_LEVEL says otherwise), so the keys,
 * URLs and the `export` lines for the `segrank` commands are the last thing on the screen.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { FastifyInstance } from 'fastify';
import { createKey } from '../src/auth/keys.js';
import { DEMO_SQLITE_FILE, type Config } from '../src/config.js';
import { openDatabase } from '../src/db/connect.js';
import { migrateToLatest } from '../src/db/migrate.js';
import { startService } from '../src/server.js';
import { DEMO_CAMPAIGNS, DEMO_ECONOMICS, DEFAULT_DEMO_OPTIONS, generateDemoData } from './generate.js';
import { loadDemoData } from './load.js';


/** The report the demo defines: the spring campaign by age band, region, channel and the newsletter attribute. */
export const DEMO_REPORT = {
  name: 'Spring seed sale 2026: who responded',
  source: { campaign_ids: [DEMO_CAMPAIGNS[0].campaignId] },
  dimensions: ['age_band', 'region', 'channel', 'newsletter'],
  refresh: 'weekly',
};

/** The holdout report: what the autumn mailing added per segment, in profit after its invented costs. */
export const DEMO_HOLDOUT_REPORT = {
  name: 'Autumn bulb offer 2026: what the mailing added',
  source: { campaign_ids: [DEMO_CAMPAIGNS[1].campaignId] },
  dimensions: ['age_band', 'region', 'channel'],
  rank_by: 'incremental_profit',
  economics: DEMO_ECONOMICS,
  refresh: 'weekly',
};

interface RefreshedReport {
  reportId: string;
  tested: number;
  verdicts: Record<string, number>;
  advice: Record<string, number>;
}

/** "a 3, b 1" from counts, in the order first met. */
function counted(counts: Record<string, number>): string {
  return Object.entries(counts).map(([name, count]) => `${name} ${count}`).join(', ');
}

interface DemoKeys {
  admin: string;
  ingest: string;
  read: string;
}

/** Keys made before the service starts, so its first start does not print an admin key of its own. */
async function createDemoKeys(config: Config): Promise<DemoKeys> {
  const database = await openDatabase(config.database);
  try {
    await migrateToLatest(database.db, config.database);
    return {
      admin: (await createKey(database.db, 'admin', 'demo administrator')).key,
      ingest: (await createKey(database.db, 'ingest', 'demo uploads')).key,
      read: (await createKey(database.db, 'read', 'demo dashboard')).key,
    };
  } finally {
    await database.close();
  }
}

async function defineAndRefreshReport(app: FastifyInstance, headers: Record<string, string>, definition: object): Promise<RefreshedReport> {
  const created = await app.inject({ method: 'POST', url: '/v1/reports', headers, payload: definition });
  if (created.statusCode !== 201) throw new Error(`defining the demo report failed with ${created.statusCode}: ${created.body}`);
  const reportId = created.json<{ report_id: string }>().report_id;
  const refreshed = await app.inject({ method: 'POST', url: `/v1/reports/${reportId}/refresh`, headers });
  if (refreshed.statusCode !== 201) throw new Error(`refreshing the demo report failed with ${refreshed.statusCode}: ${refreshed.body}`);
  const snapshot = refreshed.json<{ segments: Array<{ verdict: string; advice?: string | null }> }>();
  const verdicts: Record<string, number> = {};
  const advice: Record<string, number> = {};
  for (const segment of snapshot.segments) {
    verdicts[segment.verdict] = (verdicts[segment.verdict] ?? 0) + 1;
    if (segment.advice) advice[segment.advice] = (advice[segment.advice] ?? 0) + 1;
  }
  return { reportId, tested: snapshot.segments.filter((segment) => segment.verdict !== 'too_small').length, verdicts, advice };
}

/** Whether the configured database is the demo's own file (then the demo may start it afresh). */
function isDemoFile(database: Config['database']): boolean {
  return database.dialect === 'sqlite' && path.resolve(database.file) === path.resolve(DEMO_SQLITE_FILE);
}

/** `export …` lines that point the `segrank` commands and the README's examples at this demo. */
function exportLines(config: Config, reportId: string, holdoutReportId: string, keys: DemoKeys | null): string[] {
  const database = config.database;
  const url = database.dialect === 'sqlite' ? path.resolve(database.file) : database.connectionString;
  return [
    `export DATABASE_URL='${url}'`,
    ...(database.dialect === 'postgres' && database.schema !== 'public' ? [`export DATABASE_SCHEMA=${database.schema}`] : []),
    `export REPORT_ID=${reportId} HOLDOUT_REPORT_ID=${holdoutReportId}`,
    ...(keys ? [`export ADMIN_KEY=${keys.admin} INGEST_KEY=${keys.ingest} READ_KEY=${keys.read}`] : []),
  ];
}

export async function runDemo(_args: string[], config: Config): Promise<number> {
  const usesDefaultDatabase = process.env['DATABASE_URL'] === undefined || process.env['DATABASE_URL'] === '';
  const database: Config['database'] = usesDefaultDatabase ? { dialect: 'sqlite', file: DEMO_SQLITE_FILE } : config.database;
  // Quiet by default: the demo's own lines are what a first-time reader needs; LOG_LEVEL still wins.
  const logLevel = process.env['LOG_LEVEL'] ? config.logLevel : 'warn';
  const demoConfig: Config = { ...config, database, logLevel };
  if (isDemoFile(database) && database.dialect === 'sqlite') {
    const existed = fs.existsSync(database.file);
    // The demo always starts from the same data: remove the previous demo database only, and say so.
    for (const suffix of ['', '-wal', '-shm']) fs.rmSync(database.file + suffix, { force: true });
    console.log(
      existed
        ? `segrank demo: removed the previous demo database ${database.file} and starting afresh (its keys no longer work; set DATABASE_URL to use a database of your own)`
        : `segrank demo: creating the demo database ${database.file}`,
    );
  } else {
    console.log(`segrank demo: loading the demo data into the database DATABASE_URL names (nothing is removed; rows with the demo's ids are updated)`);
  }
  console.log('loading the invented demo data and computing the reports …');
  const keys = demoConfig.authMode === 'keys' ? await createDemoKeys(demoConfig) : null;
  const bearer = (key: string | undefined): Record<string, string> => (key ? { authorization: `Bearer ${key}` } : {});
  const { app } = await startService(demoConfig);
  const receipts = await loadDemoData(app, generateDemoData(DEFAULT_DEMO_OPTIONS), bearer(keys?.ingest));
  const report = await defineAndRefreshReport(app, bearer(keys?.admin), DEMO_REPORT);
  const holdoutReport = await defineAndRefreshReport(app, bearer(keys?.admin), DEMO_HOLDOUT_REPORT);

  const address = app.server.address();
  const base = typeof address === 'object' && address !== null ? `http://${demoConfig.host}:${address.port}` : `http://${demoConfig.host}:${demoConfig.port}`;
  const readHeader = keys ? ` -H "Authorization: Bearer $READ_KEY"` : '';
  const lines = [
    '',
    'segrank demo: Quillfeather Garden Supply (an invented business; all data is made up)',
    `database: ${demoConfig.database.dialect === 'sqlite' ? demoConfig.database.file : 'PostgreSQL (DATABASE_URL)'}`,
    ...receipts.map((receipt) => `loaded ${receipt.what}: ${receipt.rows} rows (${receipt.inserted} new, ${receipt.updated} updated, ${receipt.unchanged} unchanged, ${receipt.rejected} rejected)`),
    `report "${DEMO_REPORT.name}": ${report.tested} segments tested; verdicts ${counted(report.verdicts)}`,
    `report "${DEMO_HOLDOUT_REPORT.name}" (with a holdout; margin ${DEMO_ECONOMICS.margin}, ${DEMO_ECONOMICS.cost_per_contact} per contact): ${holdoutReport.tested} segments tested; advice ${counted(holdoutReport.advice)}`,
    '',
    'try (after the export lines below):',
    `  ${base}/reports/${report.reportId}     the report page${keys ? ' (any user name, the read key as the password)' : ''}`,
    `  curl${readHeader} '${base}/v1/reports/${report.reportId}/segments?format=csv'`,
    `  curl${readHeader} ${base}/v1/reports/${report.reportId}/snapshots/latest`,
    `  ${base}/reports/${holdoutReport.reportId}     the holdout report's page: uplift and incremental profit per segment`,
    `  curl${readHeader} '${base}/v1/reports/${holdoutReport.reportId}/segments?format=csv'`,
    `  curl ${base}/openapi.yaml`,
    '  npx segrank keys list',
    '  npx segrank refresh --all',
    '',
    keys
      ? `keys: admin ${keys.admin}\n      ingest ${keys.ingest}\n      read ${keys.read}`
      : 'AUTH_MODE=open: no keys needed (allowed on this machine only)',
    '',
    'The service runs until Ctrl+C. In another terminal, paste these lines first:',
    '',
    ...exportLines(demoConfig, report.reportId, holdoutReport.reportId, keys),
    '',
  ];
  console.log(lines.join('\n'));
  return new Promise<number>(() => {
    // keeps running until a signal stops the service
  });
}
