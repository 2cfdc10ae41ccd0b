/** CSV and JSON edge cases of real uploads, end to end through the HTTP routes. */
import { describe, expect, it } from 'vitest';
import { TEST_DIALECTS } from '../support/database.js';
import {
  countRows,
  CSV,
  CUSTOMER_HEADER,
  csvText,
  JSON_TYPE,
  NDJSON,
  onlyRowError,
  problemOf,
  receiptOf,
  seedCustomers,
  startApp,
  upload,
} from '../support/upload-client.js';

describe.each(TEST_DIALECTS)('CSV uploads on %s', (dialect) => {
  it('reads a body that starts with a UTF-8 byte order mark', async () => {
    const testApp = await startApp(dialect);
    const receipt = receiptOf(await upload(testApp.app, '/v1/customers', CSV, `\uFEFF${csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,individual')}`));
    expect(receipt.inserted).toBe(1);
    const stored = await testApp.database.handle.db.selectFrom('customers').select('customer_id').execute();
    expect(stored).toEqual([{ customer_id: 'C1' }]);
  });

  it('reads CRLF line ends and names the right line of a bad row', async () => {
    const testApp = await startApp(dialect);
    const body = [CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,individual', 'C2,1972-11-30,Eastmoor,store,partnership', ''].join('\r\n');
    expect(onlyRowError(await upload(testApp.app, '/v1/customers', CSV, body))).toEqual({
      row: 2,
      line: 3,
      column: 'customer_type',
      value: 'partnership',
      reason: 'customer_type must be one of individual, company',
    });
  });

  it('keeps a quoted field that holds a comma', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'C1,1985-04-12,"Northvale, coast",web,individual')));
    const stored = await testApp.database.handle.db.selectFrom('customers').select('region').executeTakeFirstOrThrow();
    expect(stored.region).toBe('Northvale, coast');
  });

  it('reads a quoted field that holds a line break whole, and names the right line of a later row', async () => {
    const testApp = await startApp(dialect);
    const body = csvText(CUSTOMER_HEADER, 'C1,1985-04-12,"North', 'vale",web,individual', 'C2,1972-11-30,Eastmoor,store,company', 'C3,2000-02-29,Northvale,referral,nobody');
    const receipt = receiptOf(await upload(testApp.app, '/v1/customers', CSV, body, { query: 'on_error=skip' }));
    expect(receipt).toMatchObject({ rows: 3, inserted: 1, rejected: 2 });
    const rejected = await testApp.app.inject({ method: 'GET', url: `/v1/ingests/${receipt.ingest_id}/rejected` });
    expect(rejected.json<{ rows: unknown[] }>().rows).toEqual([
      { row: 1, line: 2, column: 'region', value: 'North\nvale', reason: 'region must not contain control characters' },
      { row: 3, line: 5, column: 'customer_type', value: 'nobody', reason: 'customer_type must be one of individual, company' },
    ]);
  });

  it('counts a CRLF line break inside a quoted field as one line', async () => {
    const testApp = await startApp(dialect);
    const body = [CUSTOMER_HEADER, 'C1,1985-04-12,"North', 'vale",web,individual', 'C2,1972-11-30,Eastmoor,store,company', 'C3,2000-02-29,Northvale,referral,nobody', ''].join('\r\n');
    const problem = problemOf(await upload(testApp.app, '/v1/customers', CSV, body), 422);
    expect(problem.errors?.map((error) => [error.row, error.line, error.column])).toEqual([
      [1, 2, 'region'],
      [3, 5, 'customer_type'],
    ]);
  });

  it('counts skipped blank lines in the line numbers of later rows', async () => {
    const testApp = await startApp(dialect);
    const body = csvText(CUSTOMER_HEADER, '', 'C1,1985-04-12,Northvale,web,individual', '', 'C2,1972-11-30,Eastmoor,store,nobody');
    expect(onlyRowError(await upload(testApp.app, '/v1/customers', CSV, body))).toMatchObject({ row: 2, line: 5, column: 'customer_type' });
  });

  it('ignores an empty trailing line', async () => {
    const testApp = await startApp(dialect);
    const receipt = receiptOf(await upload(testApp.app, '/v1/customers', CSV, `${csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,individual')}\n`));
    expect(receipt).toMatchObject({ rows: 1, inserted: 1, rejected: 0 });
  });

  it('matches header names case- and space-insensitively ("Customer ID")', async () => {
    const testApp = await startApp(dialect);
    const receipt = receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText('Customer ID, Birth Date ,REGION,Channel,Customer-Type', 'C1,1985-04-12,Northvale,web,individual')));
    expect(receipt.inserted).toBe(1);
    const stored = await testApp.database.handle.db.selectFrom('customers').select(['customer_id', 'birth_date', 'region', 'channel', 'customer_type']).executeTakeFirstOrThrow();
    expect(stored).toEqual({ customer_id: 'C1', birth_date: '1985-04-12', region: 'Northvale', channel: 'web', customer_type: 'individual' });
  });

  it('refuses a ragged row, naming its row and line', async () => {
    const testApp = await startApp(dialect);
    const body = csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,individual', 'C2,1972-11-30,Eastmoor,store');
    expect(onlyRowError(await upload(testApp.app, '/v1/customers', CSV, body))).toEqual({ row: 2, line: 3, column: null, value: null, reason: 'row has 4 fields but the header names 5 columns' });
  });

  it('refuses a header that names a column twice with a 400 problem naming line 1', async () => {
    const testApp = await startApp(dialect);
    const problem = problemOf(await upload(testApp.app, '/v1/customers', CSV, csvText(`${CUSTOMER_HEADER},Region`, 'C1,1985-04-12,Northvale,web,individual,North')), 400);
    expect(problem).toMatchObject({ type: '/problems/malformed-body', detail: 'line 1: the header names column "region" twice' });
    expect(problem.errors).toEqual([{ row: null, line: 1, column: null, value: null, reason: 'the header names column "region" twice' }]);
  });

  it('refuses a quote opened inside an unquoted field with a 400 problem, not a server error', async () => {
    const testApp = await startApp(dialect);
    const problem = problemOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'C1,1985-04-12,North"vale",web,individual')), 400);
    expect(problem.type).toBe('/problems/malformed-body');
    expect(problem.errors?.[0]?.line).toBe(2);
  });

  it('refuses an unclosed quote with a 400 problem', async () => {
    const testApp = await startApp(dialect);
    const problem = problemOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'C1,1985-04-12,"Northvale,web,individual')), 400);
    expect(problem.detail).toMatch(/invalid CSV/);
  });

  it('refuses a body that is not UTF-8 with a 400 problem', async () => {
    const testApp = await startApp(dialect);
    const body = Buffer.concat([Buffer.from(`${CUSTOMER_HEADER}\nC1,1985-04-12,Nor`), Buffer.from([0xff]), Buffer.from('th,web,individual\n')]);
    const problem = problemOf(await upload(testApp.app, '/v1/customers', CSV, body), 400);
    // Line 2, and the offset of 0xFF: the header line (52 bytes with its line feed), then the 17 bytes of "C1,1985-04-12,Nor".
    expect(problem.detail).toBe(
      'line 2: the CSV body is not valid UTF-8 text at byte offset 69 (byte 0xFF); if it was saved as Latin-1 or Windows-1252, save it again as UTF-8 and upload it again',
    );
    expect(problem.errors?.[0]?.line).toBe(2);
  });

  it('keeps extra columns as customer attributes under their normalized names, leaving empty cells out', async () => {
    const testApp = await startApp(dialect);
    const body = csvText(`${CUSTOMER_HEADER},Loyalty Tier,Preferred Store`, 'C1,1985-04-12,Northvale,web,individual,gold,Harbour Street', 'C2,1972-11-30,Eastmoor,store,company,,Mill Lane');
    receiptOf(await upload(testApp.app, '/v1/customers', CSV, body));
    const attributes = await testApp.database.handle.db.selectFrom('customer_attributes').selectAll().orderBy('customer_id').orderBy('name').execute();
    expect(attributes).toEqual([
      { customer_id: 'C1', name: 'loyalty_tier', value: 'gold' },
      { customer_id: 'C1', name: 'preferred_store', value: 'Harbour Street' },
      { customer_id: 'C2', name: 'preferred_store', value: 'Mill Lane' },
    ]);
  });

  it('keeps an attribute through later uploads without its column, and lets a later upload change or clear it', async () => {
    const testApp = await startApp(dialect);
    const db = testApp.database.handle.db;
    const attributesOf = () => db.selectFrom('customer_attributes').select(['name', 'value']).where('customer_id', '=', 'C1').orderBy('name').execute();
    receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(`${CUSTOMER_HEADER},loyalty_tier,preferred_store`, 'C1,1985-04-12,Northvale,web,individual,gold,Harbour Street')));

    const without = receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,individual')));
    expect(without).toMatchObject({ unchanged: 1, updated: 0 });
    expect(await attributesOf()).toEqual([
      { name: 'loyalty_tier', value: 'gold' },
      { name: 'preferred_store', value: 'Harbour Street' },
    ]);

    const changed = receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(`${CUSTOMER_HEADER},loyalty_tier`, 'C1,1985-04-12,Northvale,web,individual,platinum')));
    expect(changed).toMatchObject({ unchanged: 0, updated: 1 });
    expect(await attributesOf()).toEqual([
      { name: 'loyalty_tier', value: 'platinum' },
      { name: 'preferred_store', value: 'Harbour Street' },
    ]);
    const customer = await db.selectFrom('customers').select('last_ingest_id').executeTakeFirstOrThrow();
    expect(customer.last_ingest_id).toBe(changed.ingest_id);

    const cleared = receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(`${CUSTOMER_HEADER},preferred_store`, 'C1,1985-04-12,Northvale,web,individual,')));
    expect(cleared).toMatchObject({ updated: 1 });
    expect(await attributesOf()).toEqual([{ name: 'loyalty_tier', value: 'platinum' }]);
  });
});

describe.each(TEST_DIALECTS)('JSON and NDJSON uploads on %s', (dialect) => {
  it('refuses a JSON body that is not an array with a 400 problem', async () => {
    const testApp = await startApp(dialect);
    const problem = problemOf(await upload(testApp.app, '/v1/customers', JSON_TYPE, '{"customer_id":"C1","region":"Northvale","channel":"web","customer_type":"individual"}'), 400);
    expect(problem).toMatchObject({ type: '/problems/malformed-body', detail: 'line 1: a JSON upload must be an array of row objects, starting with [' });
  });

  it('refuses a JSON array element that is not an object with a 400 problem naming its line', async () => {
    const testApp = await startApp(dialect);
    const body = '[\n{"customer_id":"C1","region":"Northvale","channel":"web","customer_type":"individual"},\n"C2"\n]';
    const problem = problemOf(await upload(testApp.app, '/v1/customers', JSON_TYPE, body), 400);
    expect(problem.errors).toEqual([{ row: null, line: 3, column: null, value: null, reason: 'each element of the array must be a row object in braces' }]);
  });

  it('refuses an NDJSON line that is not an object as a bad row', async () => {
    const testApp = await startApp(dialect);
    const body = '{"customer_id":"C1","region":"Northvale","channel":"web","customer_type":"individual"}\n["C2"]\n';
    expect(onlyRowError(await upload(testApp.app, '/v1/customers', NDJSON, body))).toEqual({ row: 2, line: 2, column: null, value: null, reason: 'each row must be a JSON object of column names to values' });
  });

  it('refuses JSON that does not parse with a 400 problem naming the line', async () => {
    const testApp = await startApp(dialect);
    const problem = problemOf(await upload(testApp.app, '/v1/customers', JSON_TYPE, '[\n{"customer_id":"C1"},\n{"customer_id":C2}\n]'), 400);
    expect(problem.errors?.[0]?.line).toBe(3);
  });

  it('reads several rows of a JSON array spread over lines, naming the line of a bad one', async () => {
    const testApp = await startApp(dialect);
    const body = JSON.stringify(
      [
        { customer_id: 'C1', birth_date: '1985-04-12', region: 'Northvale', channel: 'web', customer_type: 'individual' },
        { customer_id: 'C2', birth_date: '1972-11-30', region: 'Eastmoor', channel: 'store', customer_type: 'trust' },
      ],
      null,
      2,
    );
    // JSON.stringify with indent 2 puts the second object's brace on line 9.
    expect(onlyRowError(await upload(testApp.app, '/v1/customers', JSON_TYPE, body))).toMatchObject({ row: 2, line: 9, column: 'customer_type', value: 'trust' });
  });

  it('treats a __proto__ key as a plain unknown column of a sale and pollutes no prototype', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    const body = '[{"sale_id":"S1","customer_id":"C1","sold_at":"2026-01-05","amount":"1.00","__proto__":{"polluted":"yes"}}]';
    expect(onlyRowError(await upload(testApp.app, '/v1/sales', JSON_TYPE, body))).toEqual({
      row: 1,
      line: 1,
      column: 'proto',
      value: null,
      reason: 'unknown column "proto"; expected sale_id, customer_id, sold_at, amount',
    });
    expect(({} as Record<string, unknown>)['polluted']).toBeUndefined();
    expect(Object.prototype).not.toHaveProperty('polluted');
  });

  it('keeps a __proto__ key of a customer as an ordinary attribute and pollutes no prototype', async () => {
    const testApp = await startApp(dialect);
    const body = '{"customer_id":"C1","region":"Northvale","channel":"web","customer_type":"individual","__proto__":"polluted"}\n';
    receiptOf(await upload(testApp.app, '/v1/customers', NDJSON, body));
    const attributes = await testApp.database.handle.db.selectFrom('customer_attributes').select(['name', 'value']).execute();
    expect(attributes).toEqual([{ name: 'proto', value: 'polluted' }]);
    expect(({} as Record<string, unknown>)['polluted']).toBeUndefined();
    expect(Object.getPrototypeOf({})).toBe(Object.prototype);
  });

  it('treats JSON null as an empty cell and a whole number id as text', async () => {
    const testApp = await startApp(dialect);
    const body = JSON.stringify([{ customer_id: 1001, birth_date: null, region: 'Northvale', channel: 'web', customer_type: 'company' }]);
    receiptOf(await upload(testApp.app, '/v1/customers', JSON_TYPE, body));
    const stored = await testApp.database.handle.db.selectFrom('customers').select(['customer_id', 'birth_date']).executeTakeFirstOrThrow();
    expect(stored).toEqual({ customer_id: '1001', birth_date: null });
  });

  it('writes nothing when a JSON upload is malformed after some good rows', async () => {
    const testApp = await startApp(dialect);
    const before = await countRows(testApp);
    const body = '[{"customer_id":"C1","region":"Northvale","channel":"web","customer_type":"individual"},{"customer_id":"C2",';
    problemOf(await upload(testApp.app, '/v1/customers', JSON_TYPE, body), 400);
    expect(await countRows(testApp)).toEqual(before);
  });
});
