/**
 * The health check answers while a long read transaction holds the read connection (a report
 * refresh reading a large population), on both engines.
 */
import { afterEach, describe, expect, it } from 'vitest';
import { checkHealth } from '../../src/db/health.js';
import { createLogger } from '../../src/logger.js';
import { TEST_DIALECTS, createTestDatabase, type TestDatabase } from '../support/database.js';

describe.each(TEST_DIALECTS)('the health check during a read transaction on %s', (dialect) => {
  let database: TestDatabase | undefined;
  afterEach(async () => {
    await database?.destroy();
  });

  it('answers before the transaction ends', async () => {
    database = await createTestDatabase(dialect);
    const { readDb } = database.handle;
    const order: string[] = [];
    let release: () => void = () => undefined;
    const held = new Promise<void>((resolve) => (release = resolve));
    let opened: () => void = () => undefined;
    const isOpen = new Promise<void>((resolve) => (opened = resolve));
    const transaction = readDb.transaction().execute(async (trx) => {
      await trx.selectFrom('reports').select('report_id').execute();
      opened();
      await held;
      order.push('transaction ended');
    });
    await isOpen;
    const health = checkHealth(readDb, createLogger('silent')).then((result) => {
      order.push('health answered');
      return result;
    });
    // The transaction is released only after the health check had every chance to answer.
    await Promise.race([health, new Promise((resolve) => setTimeout(resolve, 2_000))]);
    release();
    await transaction;
    expect(await health).toEqual({ status: 'ok', database: 'ok' });
    expect(order).toEqual(['health answered', 'transaction ended']);
  });
});
