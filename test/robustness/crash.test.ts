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
