/** Upload mistakes answered with what to do: columns checked before rows, separators, single-line bodies, receipt notes. */
import { describe, expect, it } from 'vitest';
import { TEST_DIALECTS } from '../support/database.js';
import { countRows, CSV, CUSTOMER_HEADER, csvText, JSON_TYPE, NDJSON, problemOf, receiptOf, startApp, THREE_CUSTOMERS, upload } from '../support/upload-client.js';

describe.each(TEST_DIALECTS)('upload help on %s', (dialect) => {
  it('refuses a misspelt column once, naming the column meant, and writes nothing', async () => {
    const testApp = await startApp(dialect);
    const before = await countRows(testApp);
    const body = csvText('custmer_id,birth_date,region,channel,customer_type', 'C1,1985-04-12,Northvale,web,individual', 'C2,1972-11-30,Eastmoor,store,company');
    const problem = problemOf(await upload(testApp.app, '/v1/customers', CSV, body), 422);
    expect(problem.type).toBe('/problems/invalid-columns');
    expect(problem.detail).toBe('line 1: unknown column "custmer_id": did you mean customer_id?');
    expect(problem.errors).toEqual([{ row: null, line: 1, column: 'custmer_id', value: null, reason: 'unknown column "custmer_id": did you mean customer_id?', suggestion: 'customer_id' }]);
    expect(await countRows(testApp)).toEqual(before);
  });

  it.each(['Date of Birth', 'birthdate', 'DOB'])('refuses a %s column instead of keeping it as an attribute', async (heading) => {
    const testApp = await startApp(dialect);
    const body = csvText(`customer_id,${heading},region,channel,customer_type`, 'C1,1985-04-12,Northvale,web,individual');
    const problem = problemOf(await upload(testApp.app, '/v1/customers', CSV, body), 422);
    expect(problem.type).toBe('/problems/invalid-columns');
    expect(problem.detail).toMatch(/did you mean birth_date\? Send birth dates as birth_date \(YYYY-MM-DD\)\.$/);
  });

  it('checks the keys of the first JSON row the same way', async () => {
    const testApp = await startApp(dialect);
    const rows = [{ customer_id: 'C1', dob: '1985-04-12', region: 'Northvale', channel: 'web', customer_type: 'individual' }];
    const problem = problemOf(await upload(testApp.app, '/v1/customers', NDJSON, rows.map((row) => JSON.stringify(row)).join('\n')), 422);
    expect(problem.errors?.[0]).toMatchObject({ line: 1, column: 'dob', suggestion: 'birth_date' });
  });

  it('refuses a semicolon-separated file with the option that reads it, and reads it with that option', async () => {
    const testApp = await startApp(dialect);
    const body = csvText('customer_id;birth_date;region;channel;customer_type', 'C1;1985-04-12;Northvale;web;individual', 'C2;1972-11-30;Eastmoor;store;company');
    const problem = problemOf(await upload(testApp.app, '/v1/customers', CSV, body), 422);
    expect(problem.type).toBe('/problems/invalid-columns');
    expect(problem.detail).toBe(
      'line 1: the header is one column that ";" would split into 5: the file looks semicolon-separated; send it with ?delimiter=semicolon, or save it as comma-separated CSV',
    );
    const receipt = receiptOf(await upload(testApp.app, '/v1/customers', CSV, body, { query: 'delimiter=semicolon' }));
    expect(receipt).toMatchObject({ rows: 2, inserted: 2, rejected: 0 });
  });

  it('reads a tab-separated file with delimiter=tab and refuses the option for JSON', async () => {
    const testApp = await startApp(dialect);
    const body = csvText(CUSTOMER_HEADER.replaceAll(',', '\t'), 'C1\t1985-04-12\tNorthvale\tweb\tindividual');
    expect(problemOf(await upload(testApp.app, '/v1/customers', CSV, body), 422).detail).toMatch(/looks tab-separated; send it with \?delimiter=tab/);
    expect(receiptOf(await upload(testApp.app, '/v1/customers', CSV, body, { query: 'delimiter=tab' })).inserted).toBe(1);
    const problem = problemOf(await upload(testApp.app, '/v1/customers', JSON_TYPE, '[]', { query: 'delimiter=semicolon' }), 400);
    expect(problem.detail).toBe('delimiter applies to text/csv uploads only (got application/json)');
  });

  it('lists the allowed delimiters when given another', async () => {
    const testApp = await startApp(dialect);
    const problem = problemOf(await upload(testApp.app, '/v1/customers', CSV, THREE_CUSTOMERS, { query: 'delimiter=pipe' }), 400);
    expect(problem.detail).toBe('querystring/delimiter must be equal to one of the allowed values: comma, semicolon, tab');
  });

  it('says a single-line body lost its line breaks to curl -d', async () => {
    const testApp = await startApp(dialect);
    // What `curl -d @file` sends: the file with its line breaks removed.
    const problem = problemOf(await upload(testApp.app, '/v1/customers', CSV, THREE_CUSTOMERS.replaceAll('\n', '')), 400);
    expect(problem.detail).toBe(
      'the upload holds no data rows: the body is a single line, as when `curl -d @file` strips the line breaks; send the file with `curl --data-binary @file`' +
        ' (read as one line: the header names column "northvale" twice)',
    );
    const headerOnly = problemOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER)), 400);
    expect(headerOnly.detail).toBe('the upload holds no data rows: the CSV has a header row but nothing below it');
  });

  it('lists the extra attributes a customer upload stored, on the receipt and when read back', async () => {
    const testApp = await startApp(dialect);
    const body = csvText(`${CUSTOMER_HEADER},Loyalty Tier,store`, 'C1,1985-04-12,Northvale,web,individual,gold,', 'C2,1972-11-30,Eastmoor,store,company,,Mill Lane');
    const receipt = receiptOf(await upload(testApp.app, '/v1/customers', CSV, body));
    expect(receipt.extra_attributes).toEqual(['loyalty_tier', 'store']);
    expect(receipt.warnings).toEqual([]);
    const readBack = await testApp.app.inject({ method: 'GET', url: `/v1/ingests/${receipt.ingest_id}` });
    expect(readBack.json()).toEqual(receipt);
  });

  it('warns about labels that differ only in case or spacing, within the upload and from stored ones', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,Web Shop,individual')));
    const receipt = receiptOf(
      await upload(
        testApp.app,
        '/v1/customers',
        CSV,
        csvText(`${CUSTOMER_HEADER},tier`, 'C2,1972-11-30,Eastmoor,web shop,company,Gold', 'C3,2000-02-29,northvale,Web Shop,individual,gold', 'C4,1990-01-01,Eastmoor,web,individual,Gold'),
      ),
    );
    expect(receipt.warnings).toEqual([
      'channel: "Web Shop" and "web shop" differ only in case or spacing and are reported as separate segments; send one spelling to merge them',
      'region: "Northvale" and "northvale" differ only in case or spacing and are reported as separate segments; send one spelling to merge them',
      'tier: "Gold" and "gold" differ only in case or spacing and are reported as separate segments; send one spelling to merge them',
    ]);
    expect(receipt.inserted).toBe(3);
  });
});
