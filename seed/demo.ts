/**
 * `npm run demo`: a fresh embedded database with the invented demo data, loaded through the
 * ingest routes, then the service listening, with the URLs to try printed.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { Config } from '../src/config.js';
import { createKey } from '../src/auth/keys.js';
import { startService } from '../src/server.js';
import { DEFAULT_DEMO_OPTIONS, generateDemoData } from './generate.js';
import { loadDemoData } from './load.js';

export const DEMO_SQLITE_FILE = path.join('data', 'demo.sqlite');

export async function runDemo(_args: string[], config: Config): Promise<number> {
  const usesDefaultDatabase = process.env['DATABASE_URL'] === undefined || process.env['DATABASE_URL'] === '';
  const demoConfig: Config = usesDefaultDatabase ? { ...config, database: { dialect: 'sqlite', file: DEMO_SQLITE_FILE } } : config;
  if (usesDefaultDatabase) {
    // The demo always starts from the same data: remove the previous demo database only.
    for (const suffix of ['', '-wal', '-shm']) fs.rmSync(DEMO_SQLITE_FILE + suffix, { force: true });
  }
  const { app, database } = await startService(demoConfig);
  const keys = demoConfig.authMode === 'keys'
    ? { ingest: (await createKey(database.db, 'ingest', 'demo uploads')).key, read: (await createKey(database.db, 'read', 'demo dashboard')).key }
    : null;
  const data = generateDemoData(DEFAULT_DEMO_OPTIONS);
  const receipts = await loadDemoData(app, data, keys ? { authorization: `Bearer ${keys.ingest}` } : {});
  const readHeader = keys ? ` -H 'Authorization: Bearer ${keys.read}'` : '';
  const address = app.server.address();
  const base = typeof address === 'object' && address !== null ? `http://${demoConfig.host}:${address.port}` : `http://${demoConfig.host}:${demoConfig.port}`;

  const lines = [
    '',
    'segrank demo: Quillfeather Garden Supply (an invented business; all data is made up)',
    `database: ${demoConfig.database.dialect === 'sqlite' ? demoConfig.database.file : 'PostgreSQL (DATABASE_URL)'}`,
    ...receipts.map((receipt) => `loaded ${receipt.what}: ${receipt.rows} rows (${receipt.inserted} new, ${receipt.updated} updated, ${receipt.unchanged} unchanged, ${receipt.rejected} rejected)`),
    ...(keys ? ['', `ingest key: ${keys.ingest}`, `read key:   ${keys.read}`] : ['', 'AUTH_MODE=open: no keys needed (allowed on this machine only)']),
    '',
    'try:',
    `  curl ${base}/healthz`,
    `  curl${readHeader} ${base}/v1/ingests/${receipts[0]?.ingest_id ?? ''}`,
    `  curl ${base}/openapi.yaml`,
    '',
    'Press Ctrl+C to stop.',
  ];
  console.log(lines.join('\n'));
  return new Promise<number>(() => {
    // keeps running until a signal stops the service
  });
}
