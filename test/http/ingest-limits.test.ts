/** Uploads the service refuses as a whole: wrong media type, empty body, too many bytes or rows. */
import { Readable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { TEST_DIALECTS } from '../support/database.js';
import { countRows, CSV, CUSTOMER_HEADER, csvText, JSON_TYPE, NDJSON, problemOf, receiptOf, startApp, upload } from '../support/upload-client.js';

const fourCustomers = csvText(
  CUSTOMER_HEADER,
  'C1,1985-04-12,Northvale,web,individual',
  'C2,1972-11-30,Eastmoor,store,company',
  'C3,2000-02-29,Northvale,referral,individual',
  'C4,1999-09-09,Eastmoor,store,company',
);

describe.each(TEST_DIALECTS)('refused uploads on %s', (dialect) => {
  it.each(['text/plain', 'application/xml', 'multipart/form-data; boundary=x'])('answers 415 problem details for %s', async (contentType) => {
    const testApp = await startApp(dialect);
    const problem = problemOf(await upload(testApp.app, '/v1/customers', contentType, fourCustomers), 415);
    expect(problem).toMatchObject({ type: '/problems/unsupported-media-type', title: 'Unsupported content type' });
    expect(problem.detail).toContain(contentType);
    expect((await countRows(testApp)).ingests).toBe(0);
  });

  it('answers 415 when the upload has no content type', async () => {
    const testApp = await startApp(dialect);
    const response = await testApp.app.inject({ method: 'POST', url: '/v1/sales', payload: fourCustomers });
    expect(problemOf(response, 415).detail).toContain('(got "none")');
  });

  it.each([
    { contentType: CSV, detail: 'line 1: the upload is empty: a CSV upload needs a header row' },
    { contentType: JSON_TYPE, detail: 'line 1: the upload is empty: expected a JSON array of row objects' },
    { contentType: NDJSON, detail: 'the upload holds no data rows' },
  ])('answers 400 problem details for an empty $contentType body', async ({ contentType, detail }) => {
    const testApp = await startApp(dialect);
    const problem = problemOf(await upload(testApp.app, '/v1/customers', contentType, ''), 400);
    expect(problem).toMatchObject({ type: '/problems/malformed-body', detail });
    expect((await countRows(testApp)).ingests).toBe(0);
  });

  it('answers 400 when the request has no body at all', async () => {
    const testApp = await startApp(dialect);
    const response = await testApp.app.inject({ method: 'POST', url: '/v1/customers', headers: { 'content-type': CSV } });
    expect(problemOf(response, 400).type).toBe('/problems/malformed-body');
  });

  it('answers 400 for a CSV body with a header and no rows', async () => {
    const testApp = await startApp(dialect);
    const problem = problemOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER)), 400);
    expect(problem.detail).toBe('the upload holds no data rows: the CSV has a header row but nothing below it');
  });

  it('answers 400 for an empty JSON array', async () => {
    const testApp = await startApp(dialect);
    expect(problemOf(await upload(testApp.app, '/v1/customers', JSON_TYPE, '[]'), 400).detail).toBe('the upload holds no data rows');
  });

  it('answers 400 for an NDJSON body of blank lines', async () => {
    const testApp = await startApp(dialect);
    expect(problemOf(await upload(testApp.app, '/v1/customers', NDJSON, '\n\n  \n'), 400).detail).toBe('the upload holds no data rows');
  });

  it('answers 413 problem details for an upload over maxUploadBytes', async () => {
    const testApp = await startApp(dialect, { maxUploadBytes: 100 });
    expect(Buffer.byteLength(fourCustomers)).toBeGreaterThan(100);
    const problem = problemOf(await upload(testApp.app, '/v1/customers', CSV, fourCustomers), 413);
    expect(problem).toMatchObject({ type: '/problems/payload-too-large', limit_bytes: 100, detail: 'the upload is larger than 100 bytes' });
    expect(await countRows(testApp)).toMatchObject({ customers: 0, ingests: 0 });
  });

  it('answers 413 for a streamed upload without Content-Length once it passes maxUploadBytes, and keeps running', async () => {
    const testApp = await startApp(dialect, { maxUploadBytes: 100 });
    const chunks = fourCustomers.match(/[\s\S]{1,20}/g) ?? [];
    const response = await upload(testApp.app, '/v1/customers', CSV, Readable.from(chunks.map((chunk) => Buffer.from(chunk))));
    expect(response.headers['content-length']).not.toBeUndefined();
    const problem = problemOf(response, 413);
    expect(problem.limit_bytes).toBe(100);
    expect(await countRows(testApp)).toMatchObject({ customers: 0, ingests: 0 });
    // The app still answers after the refused stream.
    expect((await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,individual'))).statusCode).toBe(201);
  });

  it('accepts an upload of exactly maxUploadBytes', async () => {
    const body = csvText(CUSTOMER_HEADER, 'C1,1985-04-12,Northvale,web,individual');
    const testApp = await startApp(dialect, { maxUploadBytes: Buffer.byteLength(body) });
    expect(receiptOf(await upload(testApp.app, '/v1/customers', CSV, body)).inserted).toBe(1);
  });

  it('answers 413 problem details for more rows than maxUploadRows, and writes nothing', async () => {
    const testApp = await startApp(dialect, { maxUploadRows: 3 });
    const problem = problemOf(await upload(testApp.app, '/v1/customers', CSV, fourCustomers), 413);
    expect(problem).toMatchObject({ type: '/problems/payload-too-large', limit_rows: 3, detail: 'the upload has more than 3 rows' });
    expect(await countRows(testApp)).toMatchObject({ customers: 0, ingests: 0 });
  });

  it('answers 413 for too many rows in skip mode as well', async () => {
    const testApp = await startApp(dialect, { maxUploadRows: 3 });
    problemOf(await upload(testApp.app, '/v1/customers', CSV, fourCustomers, { query: 'on_error=skip' }), 413);
    expect((await countRows(testApp)).customers).toBe(0);
  });

  it('accepts exactly maxUploadRows rows', async () => {
    const testApp = await startApp(dialect, { maxUploadRows: 4 });
    expect(receiptOf(await upload(testApp.app, '/v1/customers', CSV, fourCustomers)).rows).toBe(4);
  });
});
