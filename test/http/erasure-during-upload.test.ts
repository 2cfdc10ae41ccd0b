/**
 * An erasure that arrives while an `on_error=skip` upload is writing waits for it, so a rejected
 * row (or anything else) about the erased customer is not left behind once the erasure answers.
 */
import { sql } from 'kysely';
import { describe, expect, it } from 'vitest';
import { TEST_DIALECTS } from '../support/database.js';
import { captureLogs } from '../support/log-capture.js';
import { REPORT_TEST_SETTINGS } from '../support/report-data.js';
import { CSV, csvText, startApp, upload } from '../support/upload-client.js';

const OTHER_CUSTOMERS = 200;
const SALES = 20_000;

describe.each(TEST_DIALECTS)('erasure during an upload on %s', (dialect) => {
  it('leaves nothing of the erased customer, the rejected rows of the racing upload included', { timeout: 60_000 }, async () => {
    const logs = captureLogs('debug');
    const testApp = await startApp(dialect, REPORT_TEST_SETTINGS, undefined, logs.logger);
    const { app } = testApp;
    const customers = ['customer_id,birth_date,region,channel,customer_type', 'X1,1980-01-01,Fennwick,web shop,individual'];
    for (let index = 0; index < OTHER_CUSTOMERS; index++) customers.push(`K${index},1980-01-01,Saltmere,web shop,individual`);
    expect((await upload(app, '/v1/customers', CSV, csvText(...customers))).statusCode).toBe(201);

    // Many good sales of other customers, and last a bad one about X1, kept as a rejected row.
    const sales = ['sale_id,customer_id,sold_at,amount'];
    for (let index = 0; index < SALES; index++) sales.push(`T${index},K${index % OTHER_CUSTOMERS},2026-03-02,12.50`);
    sales.push('T-bad,X1,2026-03-02,not money');
    logs.lines.length = 0;
    let uploadSettled = false;
    const racing = upload(app, '/v1/sales', CSV, csvText(...sales), { query: 'on_error=skip' }).finally(() => (uploadSettled = true));

    await logs.waitFor('upload writing');
    expect(uploadSettled).toBe(false);
    const erased = await app.inject({ method: 'DELETE', url: '/v1/customers/X1' });
    expect(erased.statusCode).toBe(204);
    // The erasure waited for the upload in flight to commit (and then removed its rejected row).
    expect(logs.lines.some((line) => line.msg === 'upload stored')).toBe(true);
    const db = testApp.database.handle.db;
    const leftAbout = async () => {
      const { rows } = await sql<{ count: number | string }>`select count(*) as count from rejected_rows where customer_id = ${'X1'}`.execute(db);
      return Number(rows[0]?.count);
    };
    expect(await leftAbout()).toBe(0);

    const receipt = (await racing).json<{ rejected: number; inserted: number }>();
    expect(receipt).toMatchObject({ rejected: 1, inserted: SALES });
    expect(await leftAbout()).toBe(0);
    expect((await db.selectFrom('customers').select('customer_id').where('customer_id', '=', 'X1').execute()).length).toBe(0);
  });
});
