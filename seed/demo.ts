/**
 * `npm run demo`: a fresh embedded database with the invented demo data, loaded through the
 * ingest routes, one report defined and refreshed through the report routes, then the service
 * listening, with keys and URLs to try printed.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { FastifyInstance } from 'fastify';
import { createKey } from '../src/auth/keys.js';
import type { Config } from '../src/config.js';
import { openDatabase } from '../src/db/connect.js';
import { migrateToLatest } from '../src/db/migrate.js';
import { startService } from '../src/server.js';
import { DEMO_CAMPAIGNS, DEFAULT_DEMO_OPTIONS, generateDemoData } from './generate.js';
import { loadDemoData } from './load.js';

export const DEMO_SQLITE_FILE = path.join('data', 'demo.sqlite');

/** The report the demo defines: the spring campaign by age band, region, channel and the newsletter attribute. */
export const DEMO_REPORT = {
  name: 'Spring seed sale 2026: who responded',
  source: { campaign_ids: [DEMO_CAMPAIGNS[0].campaignId] },
  dimensions: ['age_band', 'region', 'channel', 'newsletter'],
  refresh: 'weekly',
};

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

async function defineAndRefreshReport(app: FastifyInstance, headers: Record<string, string>): Promise<{ reportId: string; tested: number; verdicts: Record<string, number> }> {
  const created = await app.inject({ method: 'POST', url: '/v1/reports', headers, payload: DEMO_REPORT });
  if (created.statusCode !== 201) throw new Error(`defining the demo report failed with ${created.statusCode}: ${created.body}`);
  const reportId = created.json<{ report_id: string }>().report_id;
  const refreshed = await app.inject({ method: 'POST', url: `/v1/reports/${reportId}/refresh`, headers });
  if (refreshed.statusCode !== 201) throw new Error(`refreshing the demo report failed with ${refreshed.statusCode}: ${refreshed.body}`);
  const snapshot = refreshed.json<{ segments: Array<{ verdict: string }> }>();
  const verdicts: Record<string, number> = {};
  for (const segment of snapshot.segments) verdicts[segment.verdict] = (verdicts[segment.verdict] ?? 0) + 1;
  return { reportId, tested: snapshot.segments.filter((segment) => segment.verdict !== 'too_small').length, verdicts };
}

export async function runDemo(_args: string[], config: Config): Promise<number> {
  const usesDefaultDatabase = process.env['DATABASE_URL'] === undefined || process.env['DATABASE_URL'] === '';
  const demoConfig: Config = usesDefaultDatabase ? { ...config, database: { dialect: 'sqlite', file: DEMO_SQLITE_FILE } } : config;
  if (usesDefaultDatabase) {
    // The demo always starts from the same data: remove the previous demo database only.
    for (const suffix of ['', '-wal', '-shm']) fs.rmSync(DEMO_SQLITE_FILE + suffix, { force: true });
  }
  const keys = demoConfig.authMode === 'keys' ? await createDemoKeys(demoConfig) : null;
  const bearer = (key: string | undefined): Record<string, string> => (key ? { authorization: `Bearer ${key}` } : {});
  const { app } = await startService(demoConfig);
  const receipts = await loadDemoData(app, generateDemoData(DEFAULT_DEMO_OPTIONS), bearer(keys?.ingest));
  const report = await defineAndRefreshReport(app, bearer(keys?.admin));

  const address = app.server.address();
  const base = typeof address === 'object' && address !== null ? `http://${demoConfig.host}:${address.port}` : `http://${demoConfig.host}:${demoConfig.port}`;
  const readHeader = keys ? ` -H 'Authorization: Bearer ${keys.read}'` : '';
  const lines = [
    '',
    'segrank demo: Quillfeather Garden Supply (an invented business; all data is made up)',
    `database: ${demoConfig.database.dialect === 'sqlite' ? demoConfig.database.file : 'PostgreSQL (DATABASE_URL)'}`,
    ...receipts.map((receipt) => `loaded ${receipt.what}: ${receipt.rows} rows (${receipt.inserted} new, ${receipt.updated} updated, ${receipt.unchanged} unchanged, ${receipt.rejected} rejected)`),
    `report "${DEMO_REPORT.name}": ${report.tested} segments tested; verdicts ${Object.entries(report.verdicts).map(([verdict, count]) => `${verdict} ${count}`).join(', ')}`,
    ...(keys
      ? ['', `admin key:  ${keys.admin}`, `ingest key: ${keys.ingest}`, `read key:   ${keys.read}`, '(in a browser, give any user name and the read key as the password)']
      : ['', 'AUTH_MODE=open: no keys needed (allowed on this machine only)']),
    '',
    'try:',
    `  ${base}/reports/${report.reportId}                  the report page`,
    `  curl${readHeader} '${base}/v1/reports/${report.reportId}/segments?format=csv'`,
    `  curl${readHeader} ${base}/v1/reports/${report.reportId}/snapshots/latest`,
    `  curl ${base}/openapi.yaml`,
    '',
    'Press Ctrl+C to stop.',
  ];
  console.log(lines.join('\n'));
  return new Promise<number>(() => {
    // keeps running until a signal stops the service
  });
}
