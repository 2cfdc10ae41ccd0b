/**
 * Crash safety: the real service, killed with SIGKILL in the middle of a large upload, must
 * come back with every earlier upload whole and nothing of the killed one.
 */
import { afterEach, describe, expect, it } from 'vitest';
import { openDatabase } from '../../src/db/connect.js';
import type { DatabaseSettings } from '../../src/config.js';
import { TEST_DIALECTS, dropTestDatabase, testDatabaseSettings } from '../support/database.js';
import { postStream, startServiceProcess, type RunningService } from '../support/service-process.js';

function databaseEnv(settings: DatabaseSettings): Record<string, string> {
  return settings.dialect === 'sqlite' ? { DATABASE_URL: settings.file } : { DATABASE_URL: settings.connectionString, DATABASE_SCHEMA: settings.schema };
}

async function* customerRows(from: number, count: number): AsyncGenerator<string> {
  yield 'customer_id,birth_date,region,channel,customer_type\n';
  let chunk = '';
  for (let index = from; index < from + count; index++) {
    chunk += `C${index},1980-01-01,Fennwick,web shop,individual\n`;
    if (chunk.length > 64 * 1024) {
      yield chunk;
      chunk = '';
      // Give the service time to parse and log progress while the body is still arriving.
      await new Promise((resolve) => setImmediate(resolve));
    }
  }
  yield chunk;
}

async function* contactRows(count: number): AsyncGenerator<string> {
  yield 'customer_id,contacted_at,converted,revenue\n';
  let chunk = '';
  for (let index = 0; index < count; index++) {
    chunk += index % 9 === 0 ? `C${index},2026-03-02,1,12.50\n` : `C${index},2026-03-02,0,0\n`;
    if (chunk.length > 64 * 1024) {
      yield chunk;
      chunk = '';
    }
  }
  yield chunk;
}

async function tableCounts(settings: DatabaseSettings) {
  const handle = await openDatabase(settings);
  try {
    const count = async (table: 'customers' | 'ingests' | 'rejected_rows') =>
      Number((await handle.db.selectFrom(table).select((eb) => eb.fn.countAll<number>().as('n')).executeTakeFirstOrThrow()).n);
    return { customers: await count('customers'), ingests: await count('ingests'), rejected: await count('rejected_rows') };
  } finally {
    await handle.close();
  }
}

describe.each(TEST_DIALECTS)('a SIGKILL in the middle of an upload on %s', (dialect) => {
  let service: RunningService | undefined;
  let settings: DatabaseSettings | undefined;
  afterEach(async () => {
    await service?.kill();
    if (settings) await dropTestDatabase(settings);
  });

  it('keeps every earlier upload whole and nothing of the killed one', { timeout: 120_000 }, async () => {
    settings = testDatabaseSettings(dialect);
    const env = { ...databaseEnv(settings), LOG_LEVEL: 'info', INGEST_PROGRESS_EVERY_ROWS: '5000' };
    service = await startServiceProcess(env);
    const first = await postStream(`${service.url}/v1/customers`, customerRows(0, 1000));
    expect(first.status).toBe(201);

    const killed = postStream(`${service.url}/v1/customers`, customerRows(1000, 2_000_000)).catch((error: unknown) => error);
    await service.waitForOutput(/"msg":"upload progress"/);
    await service.kill();
    expect(await killed).toBeInstanceOf(Error); // the connection died with the process

    const afterCrash = await tableCounts(settings);
    expect(afterCrash).toEqual({ customers: 1000, ingests: 1, rejected: 0 });

    service = await startServiceProcess(env);
    const health = await fetch(`${service.url}/healthz`);
    expect(await health.json()).toEqual({ status: 'ok', database: 'ok' });
    const again = await postStream(`${service.url}/v1/customers`, customerRows(1000, 500));
    expect(again.status).toBe(201);
    await service.stop();
    expect(await tableCounts(settings)).toEqual({ customers: 1500, ingests: 2, rejected: 0 });
  });
});

describe.each(TEST_DIALECTS)('a SIGKILL in the middle of a refresh on %s', (dialect) => {
  let service: RunningService | undefined;
  let settings: DatabaseSettings | undefined;
  afterEach(async () => {
    await service?.kill();
    if (settings) await dropTestDatabase(settings);
  });

  it('leaves only whole snapshots, and the next refresh works', { timeout: 180_000 }, async () => {
    settings = testDatabaseSettings(dialect);
    const env = { ...databaseEnv(settings), MAX_EVENT_LOOP_DELAY_MS: '0' };
    service = await startServiceProcess(env);
    const customerCount = 60_000;
    expect((await postStream(`${service.url}/v1/customers`, customerRows(0, customerCount))).status).toBe(201);
    expect((await postStream(`${service.url}/v1/campaigns/crash-test/contacts`, contactRows(customerCount))).status).toBe(201);
    const created = await fetch(`${service.url}/v1/reports`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ name: 'crash test', source: { campaign_ids: ['crash-test'] } }),
    });
    expect(created.status).toBe(201);
    const reportId = ((await created.json()) as { report_id: string }).report_id;
    const first = await fetch(`${service.url}/v1/reports/${reportId}/refresh`, { method: 'POST' });
    expect(first.status).toBe(201);
    const refreshMs = ((await first.json()) as { duration_ms: number }).duration_ms;

    // Refreshes back to back, so that a kill at any moment most likely lands inside one.
    let answered = 1;
    let stopped = false;
    const url = service.url;
    const loop = (async () => {
      while (!stopped) {
        const response = await fetch(`${url}/v1/reports/${reportId}/refresh`, { method: 'POST' }).catch(() => null);
        if (response?.status !== 201) break;
        await response.arrayBuffer().then(() => (answered += 1)).catch(() => undefined);
      }
    })();
    await new Promise((resolve) => setTimeout(resolve, refreshMs * 2.5));
    await service.kill();
    stopped = true;
    await loop;

    // Every stored snapshot is whole: its body parses and agrees with its own row. At most one
    // more than the answered refreshes may exist (committed, killed before the answer went out).
    const handle = await openDatabase(settings);
    const stored = await handle.db.selectFrom('report_snapshots').select(['sequence', 'segment_count', 'body']).orderBy('sequence').execute();
    await handle.close();
    expect(stored.length).toBeGreaterThanOrEqual(answered);
    expect(stored.length).toBeLessThanOrEqual(answered + 1);
    stored.forEach((row, index) => {
      const body = JSON.parse(row.body) as { sequence: number; segments: unknown[] };
      expect(Number(row.sequence)).toBe(index + 1);
      expect(body.sequence).toBe(index + 1);
      expect(body.segments.length).toBe(Number(row.segment_count));
    });

    service = await startServiceProcess(env);
    const again = await fetch(`${service.url}/v1/reports/${reportId}/refresh`, { method: 'POST' });
    expect(again.status).toBe(201);
    expect(((await again.json()) as { sequence: number }).sequence).toBe(stored.length + 1);
  });
});
