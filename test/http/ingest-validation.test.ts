/**
 * Every row check, one bad input per test. Each rejected upload must answer 422 problem details
 * whose errors[] name the data row, the line of the upload, the column, the value as sent and
 * the reason. The good row placed before each bad one keeps row and line numbers non-trivial.
 * The fixed test clock makes today 2026-06-15.
 */
import { describe, expect, it } from 'vitest';
import { TEST_DIALECTS } from '../support/database.js';
import {
  CSV,
  CUSTOMER_HEADER,
  csvText,
  JSON_TYPE,
  ndjsonText,
  NDJSON,
  onlyRowError,
  problemOf,
  receiptOf,
  seedCustomers,
  startApp,
  upload,
} from '../support/upload-client.js';

const GOOD_CUSTOMER = 'C1,1985-04-12,Northvale,web,individual';
const SALE_HEADER = 'sale_id,customer_id,sold_at,amount';
const GOOD_SALE = 'S1,C1,2026-01-05,19.99';
const CONTACT_HEADER = 'customer_id,contacted_at,converted,revenue';
const GOOD_CONTACT = 'C2,2026-03-02,1,40.00';

describe.each(TEST_DIALECTS)('customer row checks on %s', (dialect) => {
  const customersWith = async (badLine: string, header = CUSTOMER_HEADER) => {
    const testApp = await startApp(dialect);
    return upload(testApp.app, '/v1/customers', CSV, csvText(header, GOOD_CUSTOMER, badLine));
  };

  it('names the problem type, title and counts of a rejected upload', async () => {
    const response = await customersWith(',1990-01-01,Eastmoor,web,individual');
    const problem = problemOf(response, 422);
    expect(problem).toMatchObject({
      type: '/problems/invalid-rows',
      title: 'The upload has invalid rows',
      status: 422,
      detail: '1 of 2 rows are invalid; nothing was written',
      rejected_count: 1,
      row_count: 2,
    });
  });

  it('requires customer_id', async () => {
    expect(onlyRowError(await customersWith(',1990-01-01,Eastmoor,web,individual'))).toEqual({ row: 2, line: 3, column: 'customer_id', value: '', reason: 'customer_id is required' });
  });

  it('requires region', async () => {
    expect(onlyRowError(await customersWith('C2,1990-01-01, ,web,individual'))).toEqual({ row: 2, line: 3, column: 'region', value: ' ', reason: 'region is required' });
  });

  it('requires channel', async () => {
    expect(onlyRowError(await customersWith('C2,1990-01-01,Eastmoor,,individual'))).toEqual({ row: 2, line: 3, column: 'channel', value: '', reason: 'channel is required' });
  });

  it('requires customer_type', async () => {
    expect(onlyRowError(await customersWith('C2,1990-01-01,Eastmoor,web,'))).toEqual({ row: 2, line: 3, column: 'customer_type', value: '', reason: 'customer_type is required' });
  });

  it('requires a column missing from the header, with a null value', async () => {
    const testApp = await startApp(dialect);
    const response = await upload(testApp.app, '/v1/customers', CSV, csvText('customer_id,birth_date,region,customer_type', 'C1,1985-04-12,Northvale,individual'));
    expect(onlyRowError(response)).toEqual({ row: 1, line: 2, column: 'channel', value: null, reason: 'channel is required' });
  });

  it('refuses a customer_type other than individual or company', async () => {
    expect(onlyRowError(await customersWith('C2,1990-01-01,Eastmoor,web,person'))).toEqual({
      row: 2,
      line: 3,
      column: 'customer_type',
      value: 'person',
      reason: 'customer_type must be one of individual, company',
    });
  });

  it('refuses a birth_date not written YYYY-MM-DD', async () => {
    expect(onlyRowError(await customersWith('C2,12/04/1985,Eastmoor,web,individual'))).toEqual({
      row: 2,
      line: 3,
      column: 'birth_date',
      value: '12/04/1985',
      reason: 'birth_date must be a date written YYYY-MM-DD',
    });
  });

  it('refuses a birth_date that is not a real calendar date (2023-02-30)', async () => {
    expect(onlyRowError(await customersWith('C2,2023-02-30,Eastmoor,web,individual'))).toEqual({
      row: 2,
      line: 3,
      column: 'birth_date',
      value: '2023-02-30',
      reason: 'birth_date is not a calendar date: February 2023 has 28 days',
    });
  });

  it('refuses a birth_date in the future', async () => {
    expect(onlyRowError(await customersWith('C2,2026-06-16,Eastmoor,web,individual'))).toEqual({
      row: 2,
      line: 3,
      column: 'birth_date',
      value: '2026-06-16',
      reason: 'birth_date 2026-06-16 is in the future',
    });
  });

  it('accepts a birth_date of today', async () => {
    expect((await customersWith('C2,2026-06-15,Eastmoor,web,individual')).statusCode).toBe(201);
  });

  it('refuses a birth_date that gives an age over 120', async () => {
    // Born 1905-06-15: 121 on 2026-06-15.
    expect(onlyRowError(await customersWith('C2,1905-06-15,Eastmoor,web,individual'))).toEqual({
      row: 2,
      line: 3,
      column: 'birth_date',
      value: '1905-06-15',
      reason: 'birth_date 1905-06-15 gives an age over 120',
    });
  });

  it('accepts a birth_date that gives an age of exactly 120', async () => {
    // Born 1905-06-16: still 120 on 2026-06-15, the day before the 121st birthday.
    expect((await customersWith('C2,1905-06-16,Eastmoor,web,individual')).statusCode).toBe(201);
  });

  it('accepts an empty birth_date as an unknown age', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'C2,,Eastmoor,web,company')));
    const stored = await testApp.database.handle.db.selectFrom('customers').select('birth_date').executeTakeFirstOrThrow();
    expect(stored.birth_date).toBeNull();
  });

  it('refuses a JSON customer_id that is not text or a whole number', async () => {
    const testApp = await startApp(dialect);
    const body = JSON.stringify([{ customer_id: true, region: 'Eastmoor', channel: 'web', customer_type: 'company' }]);
    expect(onlyRowError(await upload(testApp.app, '/v1/customers', JSON_TYPE, body))).toEqual({ row: 1, line: 1, column: 'customer_id', value: 'true', reason: 'customer_id must be text' });
  });

  it('refuses a JSON region that is an object', async () => {
    const testApp = await startApp(dialect);
    const body = ndjsonText([{ customer_id: 'C2', region: { name: 'Eastmoor' }, channel: 'web', customer_type: 'company' }]);
    expect(onlyRowError(await upload(testApp.app, '/v1/customers', NDJSON, body))).toEqual({ row: 1, line: 1, column: 'region', value: '{"name":"Eastmoor"}', reason: 'region must be text' });
  });

  it('refuses a JSON birth_date that is a number', async () => {
    const testApp = await startApp(dialect);
    const body = ndjsonText([{ customer_id: 'C2', birth_date: 19850412, region: 'Eastmoor', channel: 'web', customer_type: 'company' }]);
    expect(onlyRowError(await upload(testApp.app, '/v1/customers', NDJSON, body))).toEqual({
      row: 1,
      line: 1,
      column: 'birth_date',
      value: '19850412',
      reason: 'birth_date must be a date written YYYY-MM-DD',
    });
  });

  it('refuses an extra column that uses a reserved name', async () => {
    const testApp = await startApp(dialect);
    const response = await upload(testApp.app, '/v1/customers', CSV, csvText(`${CUSTOMER_HEADER},Age Band`, `${GOOD_CUSTOMER},young`));
    expect(onlyRowError(response)).toEqual({ row: 1, line: 2, column: 'age_band', value: 'young', reason: 'column age_band is a reserved name and cannot be an extra attribute' });
  });

  it('refuses an extra column whose name does not start with a letter', async () => {
    const testApp = await startApp(dialect);
    const response = await upload(testApp.app, '/v1/customers', CSV, csvText(`${CUSTOMER_HEADER},2nd_phone`, `${GOOD_CUSTOMER},yes`));
    expect(onlyRowError(response)).toMatchObject({ row: 1, line: 2, column: '2nd_phone', value: 'yes', reason: expect.stringContaining('must start with a letter') });
  });

  it('refuses a customer_id that appears twice in one upload, naming the first line', async () => {
    const testApp = await startApp(dialect);
    const response = await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, GOOD_CUSTOMER, 'C2,1990-01-01,Eastmoor,web,company', 'C1,1985-04-12,Northvale,store,individual'));
    expect(onlyRowError(response)).toEqual({ row: 3, line: 4, column: 'customer_id', value: 'C1', reason: 'customer_id C1 appears twice in this upload (first on line 2)' });
  });

  it('counts ids that differ only in surrounding spaces as the same customer', async () => {
    const testApp = await startApp(dialect);
    const response = await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, GOOD_CUSTOMER, ' C1 ,1985-04-12,Northvale,web,individual'));
    expect(onlyRowError(response)).toMatchObject({ row: 2, line: 3, column: 'customer_id', value: 'C1' });
  });

  it('lists every bad field of one row and counts the row once', async () => {
    const response = await customersWith('C2,2023-02-30,Eastmoor,web,person');
    const problem = problemOf(response, 422);
    expect(problem.rejected_count).toBe(1);
    expect(problem.errors).toEqual([
      { row: 2, line: 3, column: 'birth_date', value: '2023-02-30', reason: 'birth_date is not a calendar date: February 2023 has 28 days' },
      { row: 2, line: 3, column: 'customer_type', value: 'person', reason: 'customer_type must be one of individual, company' },
    ]);
  });
});

describe.each(TEST_DIALECTS)('sale row checks on %s', (dialect) => {
  const salesWith = async (badLine: string, header = SALE_HEADER) => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    return upload(testApp.app, '/v1/sales', CSV, csvText(header, GOOD_SALE, badLine));
  };
  const salesJson = async (rows: object[]) => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    return upload(testApp.app, '/v1/sales', JSON_TYPE, JSON.stringify(rows));
  };

  it('requires sale_id', async () => {
    expect(onlyRowError(await salesWith(',C1,2026-01-06,5.00'))).toEqual({ row: 2, line: 3, column: 'sale_id', value: '', reason: 'sale_id is required' });
  });

  it('requires customer_id', async () => {
    expect(onlyRowError(await salesWith('S2,,2026-01-06,5.00'))).toEqual({ row: 2, line: 3, column: 'customer_id', value: '', reason: 'customer_id is required' });
  });

  it('requires sold_at', async () => {
    expect(onlyRowError(await salesWith('S2,C1,,5.00'))).toEqual({ row: 2, line: 3, column: 'sold_at', value: '', reason: 'sold_at is required' });
  });

  it('requires amount', async () => {
    expect(onlyRowError(await salesWith('S2,C1,2026-01-06,'))).toEqual({ row: 2, line: 3, column: 'amount', value: '', reason: 'amount is required' });
  });

  it('refuses a sold_at that is not a real calendar date (2023-02-30)', async () => {
    expect(onlyRowError(await salesWith('S2,C1,2023-02-30,5.00'))).toEqual({
      row: 2,
      line: 3,
      column: 'sold_at',
      value: '2023-02-30',
      reason: 'sold_at is not a calendar date: February 2023 has 28 days',
    });
  });

  it('refuses a sold_at in the future', async () => {
    expect(onlyRowError(await salesWith('S2,C1,2026-06-16,5.00'))).toEqual({ row: 2, line: 3, column: 'sold_at', value: '2026-06-16', reason: 'sold_at 2026-06-16 is in the future' });
  });

  it("refuses a sold_at before the customer's birth date", async () => {
    // C1 was born on 1985-04-12.
    expect(onlyRowError(await salesWith('S2,C1,1985-04-11,5.00'))).toEqual({
      row: 2,
      line: 3,
      column: 'sold_at',
      value: '1985-04-11',
      reason: "sold_at 1985-04-11 is before the customer's birth date 1985-04-12",
    });
  });

  it("accepts a sold_at on the customer's birth date", async () => {
    expect((await salesWith('S2,C1,1985-04-12,5.00')).statusCode).toBe(201);
  });

  it('refuses a negative amount', async () => {
    expect(onlyRowError(await salesWith('S2,C1,2026-01-06,-5.00'))).toEqual({ row: 2, line: 3, column: 'amount', value: '-5.00', reason: 'amount must not be negative' });
  });

  it('refuses an amount that is not a plain number', async () => {
    expect(onlyRowError(await salesWith('S2,C1,2026-01-06,€5'))).toEqual({
      row: 2,
      line: 3,
      column: 'amount',
      value: '€5',
      reason: 'amount must be a plain number such as 12.50 (no currency signs or thousands separators)',
    });
  });

  it('refuses an amount written as Infinity', async () => {
    expect(onlyRowError(await salesWith('S2,C1,2026-01-06,Infinity'))).toMatchObject({ row: 2, line: 3, column: 'amount', value: 'Infinity', reason: expect.stringContaining('must be a plain number') });
  });

  it('refuses a JSON amount that overflows to infinity (1e309)', async () => {
    const response = await upload((await startApp(dialect)).app, '/v1/sales', JSON_TYPE, '[{"sale_id":"S2","customer_id":"C1","sold_at":"2026-01-06","amount":1e309}]');
    expect(onlyRowError(response)).toEqual({ row: 1, line: 1, column: 'amount', value: 'Infinity', reason: 'amount must be a finite number' });
  });

  it('refuses an amount with three decimals', async () => {
    expect(onlyRowError(await salesWith('S2,C1,2026-01-06,12.345'))).toEqual({ row: 2, line: 3, column: 'amount', value: '12.345', reason: 'amount must have at most two decimals' });
  });

  it('refuses a large JSON amount with three decimals rather than rounding it', async () => {
    const response = await salesJson([{ sale_id: 'S2', customer_id: 'C1', sold_at: '2026-01-06', amount: 12345.675 }]);
    expect(onlyRowError(response)).toEqual({ row: 1, line: 1, column: 'amount', value: '12345.675', reason: 'amount must have at most two decimals' });
  });

  it('refuses a JSON amount given as a boolean', async () => {
    const response = await salesJson([{ sale_id: 'S2', customer_id: 'C1', sold_at: '2026-01-06', amount: true }]);
    expect(onlyRowError(response)).toEqual({ row: 1, line: 1, column: 'amount', value: 'true', reason: 'amount must be a number' });
  });

  it('refuses a sale of an unknown customer', async () => {
    expect(onlyRowError(await salesWith('S2,C9,2026-01-06,5.00'))).toEqual({
      row: 2,
      line: 3,
      column: 'customer_id',
      value: 'C9',
      reason: 'customer_id C9 is not a known customer; upload the customer first',
    });
  });

  it('refuses a sale_id that appears twice in one upload', async () => {
    expect(onlyRowError(await salesWith('S1,C2,2026-01-07,8.00'))).toEqual({ row: 2, line: 3, column: 'sale_id', value: 'S1', reason: 'sale_id S1 appears twice in this upload (first on line 2)' });
  });

  it('refuses a column that sales do not have', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    const response = await upload(testApp.app, '/v1/sales', CSV, csvText(`${SALE_HEADER},discount`, `${GOOD_SALE},2.00`));
    expect(onlyRowError(response)).toEqual({
      row: 1,
      line: 2,
      column: 'discount',
      value: null,
      reason: 'unknown column "discount"; expected sale_id, customer_id, sold_at, amount',
    });
  });
});

describe.each(TEST_DIALECTS)('campaign contact row checks on %s', (dialect) => {
  const contactsWith = async (badLine: string) => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    return upload(testApp.app, '/v1/campaigns/spring-mailing/contacts', CSV, csvText(CONTACT_HEADER, GOOD_CONTACT, badLine));
  };

  it.each([
    ['1', 1],
    ['0', 0],
    ['true', 1],
    ['false', 0],
    ['yes', 1],
    ['no', 0],
    ['Yes', 1],
    ['FALSE', 0],
  ])('accepts converted written %s', async (written, stored) => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    receiptOf(await upload(testApp.app, '/v1/campaigns/spring-mailing/contacts', CSV, csvText(CONTACT_HEADER, `C1,2026-03-02,${written},`)));
    const row = await testApp.database.handle.db.selectFrom('campaign_contacts').select('converted').executeTakeFirstOrThrow();
    expect(Number(row.converted)).toBe(stored);
  });

  it('refuses converted written as a word other than 0, 1, true, false, yes or no', async () => {
    expect(onlyRowError(await contactsWith('C1,2026-03-02,maybe,'))).toEqual({
      row: 2,
      line: 3,
      column: 'converted',
      value: 'maybe',
      reason: 'converted must be one of 0, 1, true, false, yes, no',
    });
  });

  it('refuses converted written as 2', async () => {
    expect(onlyRowError(await contactsWith('C1,2026-03-02,2,'))).toMatchObject({ row: 2, line: 3, column: 'converted', value: '2' });
  });

  it('requires converted', async () => {
    expect(onlyRowError(await contactsWith('C1,2026-03-02,,'))).toEqual({ row: 2, line: 3, column: 'converted', value: '', reason: 'converted is required' });
  });

  it('requires contacted_at', async () => {
    expect(onlyRowError(await contactsWith('C1,,1,5.00'))).toEqual({ row: 2, line: 3, column: 'contacted_at', value: '', reason: 'contacted_at is required' });
  });

  it('refuses a negative revenue', async () => {
    expect(onlyRowError(await contactsWith('C1,2026-03-02,1,-1'))).toEqual({ row: 2, line: 3, column: 'revenue', value: '-1', reason: 'revenue must not be negative' });
  });

  it('refuses a revenue written as NaN', async () => {
    expect(onlyRowError(await contactsWith('C1,2026-03-02,1,NaN'))).toMatchObject({ row: 2, line: 3, column: 'revenue', value: 'NaN', reason: expect.stringContaining('must be a plain number') });
  });

  it('refuses a JSON revenue that overflows to infinity (1e309)', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    const body = '{"customer_id":"C1","contacted_at":"2026-03-02","converted":1,"revenue":1e309}\n';
    const response = await upload(testApp.app, '/v1/campaigns/spring-mailing/contacts', NDJSON, body);
    expect(onlyRowError(response)).toEqual({ row: 1, line: 1, column: 'revenue', value: 'Infinity', reason: 'revenue must be a finite number' });
  });

  it('refuses a revenue above 0 when the contact did not convert', async () => {
    expect(onlyRowError(await contactsWith('C1,2026-03-02,no,25.00'))).toEqual({ row: 2, line: 3, column: 'revenue', value: '25.00', reason: 'revenue above 0 needs converted = 1' });
  });

  it('accepts a revenue of 0 when the contact did not convert', async () => {
    expect((await contactsWith('C1,2026-03-02,0,0.00')).statusCode).toBe(201);
  });

  it('accepts a conversion without revenue', async () => {
    expect((await contactsWith('C1,2026-03-02,1,0')).statusCode).toBe(201);
  });

  it('refuses a contacted_at that is not a real calendar date (2023-02-30)', async () => {
    expect(onlyRowError(await contactsWith('C1,2023-02-30,1,5.00'))).toEqual({
      row: 2,
      line: 3,
      column: 'contacted_at',
      value: '2023-02-30',
      reason: 'contacted_at is not a calendar date: February 2023 has 28 days',
    });
  });

  it('refuses a contacted_at in the future', async () => {
    expect(onlyRowError(await contactsWith('C1,2026-06-16,1,5.00'))).toEqual({
      row: 2,
      line: 3,
      column: 'contacted_at',
      value: '2026-06-16',
      reason: 'contacted_at 2026-06-16 is in the future',
    });
  });

  it("refuses a contacted_at before the customer's birth date", async () => {
    // C3 was born on 2000-02-29.
    expect(onlyRowError(await contactsWith('C3,2000-02-28,0,'))).toEqual({
      row: 2,
      line: 3,
      column: 'contacted_at',
      value: '2000-02-28',
      reason: "contacted_at 2000-02-28 is before the customer's birth date 2000-02-29",
    });
  });

  it('refuses a contact with an unknown customer', async () => {
    expect(onlyRowError(await contactsWith('C9,2026-03-02,1,5.00'))).toEqual({
      row: 2,
      line: 3,
      column: 'customer_id',
      value: 'C9',
      reason: 'customer_id C9 is not a known customer; upload the customer first',
    });
  });

  it('refuses a customer contacted twice in one campaign upload', async () => {
    expect(onlyRowError(await contactsWith('C2,2026-03-03,0,'))).toEqual({
      row: 2,
      line: 3,
      column: 'customer_id',
      value: 'C2',
      reason: 'customer_id C2 appears twice in this upload (first on line 2)',
    });
  });

  it('accepts the same customer in two different campaigns', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    receiptOf(await upload(testApp.app, '/v1/campaigns/spring-mailing/contacts', CSV, csvText(CONTACT_HEADER, GOOD_CONTACT)));
    receiptOf(await upload(testApp.app, '/v1/campaigns/autumn-mailing/contacts', CSV, csvText(CONTACT_HEADER, GOOD_CONTACT)));
    const rows = await testApp.database.handle.db.selectFrom('campaign_contacts').select(['campaign_id', 'customer_id']).orderBy('campaign_id').execute();
    expect(rows).toEqual([
      { campaign_id: 'autumn-mailing', customer_id: 'C2' },
      { campaign_id: 'spring-mailing', customer_id: 'C2' },
    ]);
  });
});
