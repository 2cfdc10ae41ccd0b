/**
 * The stored age at contact, kept right when a birth date changes, and the erasure of a
 * customer. Ages are worked by hand by exact birthday arithmetic (common practice: the age goes
 * up on the birthday; a 29 February birthday counts from 1 March in common years).
 */
import { describe, expect, it } from 'vitest';
import type { TestApp } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import { countRows, CSV, CUSTOMER_HEADER, csvText, onlyRowError, problemOf, receiptOf, seedCustomers, startApp, upload } from '../support/upload-client.js';

const CONTACT_HEADER = 'customer_id,contacted_at,converted,revenue';

/** One contact of `customerId` per campaign, named after its date. */
async function contactOn(testApp: TestApp, customerId: string, dates: string[]): Promise<void> {
  for (const date of dates) {
    receiptOf(await upload(testApp.app, `/v1/campaigns/mailing-${date}/contacts`, CSV, csvText(CONTACT_HEADER, `${customerId},${date},0,`)));
  }
}

async function agesOf(testApp: TestApp, customerId: string): Promise<Array<{ contacted_at: string; age_at_contact: number | null }>> {
  return testApp.database.handle.db
    .selectFrom('campaign_contacts')
    .select(['contacted_at', 'age_at_contact'])
    .where('customer_id', '=', customerId)
    .orderBy('contacted_at')
    .execute();
}

const setBirthDate = (testApp: TestApp, customerId: string, birthDate: string) =>
  upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, `${customerId},${birthDate},Northvale,web,individual`));

describe.each(TEST_DIALECTS)('age at contact on %s', (dialect) => {
  it('is stored by exact birthday arithmetic, a 29 February birthday going up on 1 March in a common year', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await setBirthDate(testApp, 'L1', '2000-02-29'));
    await contactOn(testApp, 'L1', ['2023-02-28', '2023-03-01', '2024-02-28', '2024-02-29']);
    expect(await agesOf(testApp, 'L1')).toEqual([
      { contacted_at: '2023-02-28', age_at_contact: 22 },
      { contacted_at: '2023-03-01', age_at_contact: 23 },
      { contacted_at: '2024-02-28', age_at_contact: 23 },
      { contacted_at: '2024-02-29', age_at_contact: 24 },
    ]);
  });

  it('is derived again for every stored contact when the birth date changes, 29 February included', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await setBirthDate(testApp, 'L1', '1998-06-01'));
    await contactOn(testApp, 'L1', ['2023-02-28', '2023-03-01', '2024-02-29']);
    expect((await agesOf(testApp, 'L1')).map((row) => row.age_at_contact)).toEqual([24, 24, 25]);

    const receipt = receiptOf(await setBirthDate(testApp, 'L1', '2000-02-29'));
    expect(receipt).toMatchObject({ updated: 1 });
    expect(await agesOf(testApp, 'L1')).toEqual([
      { contacted_at: '2023-02-28', age_at_contact: 22 },
      { contacted_at: '2023-03-01', age_at_contact: 23 },
      { contacted_at: '2024-02-29', age_at_contact: 24 },
    ]);
  });

  it('is derived again on the birthday boundary when the birth date moves by one day', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await setBirthDate(testApp, 'L1', '1990-06-15'));
    await contactOn(testApp, 'L1', ['2020-06-15']);
    expect((await agesOf(testApp, 'L1'))[0]?.age_at_contact).toBe(30);
    receiptOf(await setBirthDate(testApp, 'L1', '1990-06-16'));
    expect((await agesOf(testApp, 'L1'))[0]?.age_at_contact).toBe(29);
  });

  it('becomes unknown when the birth date is cleared', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await setBirthDate(testApp, 'L1', '1990-06-15'));
    await contactOn(testApp, 'L1', ['2020-06-15']);
    receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'L1,,Northvale,web,individual')));
    expect(await agesOf(testApp, 'L1')).toEqual([{ contacted_at: '2020-06-15', age_at_contact: null }]);
  });

  it('is derived when a birth date becomes known after the contacts were stored', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'L1,,Northvale,web,individual')));
    await contactOn(testApp, 'L1', ['2020-06-15']);
    expect((await agesOf(testApp, 'L1'))[0]?.age_at_contact).toBeNull();
    receiptOf(await setBirthDate(testApp, 'L1', '1990-06-15'));
    expect((await agesOf(testApp, 'L1'))[0]?.age_at_contact).toBe(30);
  });

  it("leaves other customers' ages alone when one birth date changes", async () => {
    const testApp = await startApp(dialect);
    receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'L1,1990-06-15,Northvale,web,individual', 'L2,1980-01-01,Eastmoor,store,individual')));
    receiptOf(await upload(testApp.app, '/v1/campaigns/summer/contacts', CSV, csvText(CONTACT_HEADER, 'L1,2020-06-15,0,', 'L2,2020-06-15,0,')));
    receiptOf(await setBirthDate(testApp, 'L1', '1991-06-15'));
    expect((await agesOf(testApp, 'L1'))[0]?.age_at_contact).toBe(29);
    expect((await agesOf(testApp, 'L2'))[0]?.age_at_contact).toBe(40);
  });

  it('refuses a new birth date later than a stored contact of the customer', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await setBirthDate(testApp, 'L1', '1990-06-15'));
    await contactOn(testApp, 'L1', ['2020-06-15']);
    expect(onlyRowError(await setBirthDate(testApp, 'L1', '2021-01-01'))).toEqual({
      row: 1,
      line: 2,
      column: 'birth_date',
      value: '2021-01-01',
      reason: "birth_date 2021-01-01 is after this customer's earliest stored sale or contact (2020-06-15)",
    });
    expect((await agesOf(testApp, 'L1'))[0]?.age_at_contact).toBe(30);
  });

  it('refuses a new birth date later than a stored sale of the customer', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await setBirthDate(testApp, 'L1', '1990-06-15'));
    receiptOf(await upload(testApp.app, '/v1/sales', CSV, csvText('sale_id,customer_id,sold_at,amount', 'S1,L1,2010-03-03,5.00', 'S2,L1,2012-03-03,5.00')));
    expect(onlyRowError(await setBirthDate(testApp, 'L1', '2011-01-01'))).toMatchObject({ column: 'birth_date', reason: expect.stringContaining('(2010-03-03)') });
    expect((await setBirthDate(testApp, 'L1', '2010-03-03')).statusCode).toBe(201);
  });
});

describe.each(TEST_DIALECTS)('erasure on %s', (dialect) => {
  async function seedTwoCustomersWithEverything(testApp: TestApp): Promise<void> {
    receiptOf(
      await upload(
        testApp.app,
        '/v1/customers',
        CSV,
        csvText(`${CUSTOMER_HEADER},loyalty_tier`, 'C1,1985-04-12,Northvale,web,individual,gold', 'C2,1972-11-30,Eastmoor,store,company,silver'),
      ),
    );
    receiptOf(await upload(testApp.app, '/v1/sales', CSV, csvText('sale_id,customer_id,sold_at,amount', 'S1,C1,2026-01-05,19.99', 'S2,C1,2026-02-05,5.00', 'S3,C2,2026-01-07,7.00')));
    receiptOf(await upload(testApp.app, '/v1/campaigns/spring-mailing/contacts', CSV, csvText(CONTACT_HEADER, 'C1,2026-03-02,1,40.00', 'C2,2026-03-02,0,')));
    receiptOf(await upload(testApp.app, '/v1/campaigns/autumn-mailing/contacts', CSV, csvText(CONTACT_HEADER, 'C1,2025-10-02,0,')));
  }

  it('DELETE /v1/customers/{customer_id} removes the customer from customers, customer_attributes, sales and campaign_contacts', async () => {
    const testApp = await startApp(dialect);
    await seedTwoCustomersWithEverything(testApp);
    const response = await testApp.app.inject({ method: 'DELETE', url: '/v1/customers/C1' });
    expect(response.statusCode).toBe(204);
    expect(response.body).toBe('');

    const db = testApp.database.handle.db;
    for (const table of ['customers', 'customer_attributes', 'sales', 'campaign_contacts'] as const) {
      const rows = await db.selectFrom(table).select('customer_id').execute();
      expect(rows, table).toEqual([{ customer_id: 'C2' }]);
    }
  });

  it('removes the rejected rows kept about the customer, and only those', async () => {
    const testApp = await startApp(dialect);
    await seedTwoCustomersWithEverything(testApp);
    const skipped = receiptOf(
      await upload(testApp.app, '/v1/sales', CSV, csvText('sale_id,customer_id,sold_at,amount', 'S8,C1,2026-01-05,-1', 'S9,C2,2026-01-05,-2', 'S10,C2,2026-01-05,2.00'), { query: 'on_error=skip' }),
    );
    expect(skipped.rejected).toBe(2);
    expect((await testApp.app.inject({ method: 'DELETE', url: '/v1/customers/C1' })).statusCode).toBe(204);
    const kept = await testApp.database.handle.db.selectFrom('rejected_rows').select(['customer_id', 'value']).execute();
    expect(kept).toEqual([{ customer_id: 'C2', value: '-2' }]);
  });

  it('leaves every row of other customers in place', async () => {
    const testApp = await startApp(dialect);
    await seedTwoCustomersWithEverything(testApp);
    const before = await countRows(testApp);
    expect((await testApp.app.inject({ method: 'DELETE', url: '/v1/customers/C1' })).statusCode).toBe(204);
    // C1 had 1 customer row, 1 attribute, 2 sales and 2 contacts.
    expect(await countRows(testApp)).toEqual({ ...before, customers: 1, customer_attributes: 1, sales: 1, campaign_contacts: 1 });
  });

  it('answers 404 problem details for an unknown customer', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    const before = await countRows(testApp);
    const problem = problemOf(await testApp.app.inject({ method: 'DELETE', url: '/v1/customers/C9' }), 404);
    expect(problem).toMatchObject({ type: '/problems/not-found', detail: 'no customer with id C9' });
    expect(await countRows(testApp)).toEqual(before);
  });

  it('touches nothing, not even rejected rows naming that id, when the customer was never stored', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    receiptOf(await upload(testApp.app, '/v1/sales', CSV, csvText('sale_id,customer_id,sold_at,amount', 'S1,C9,2026-01-05,1.00', 'S2,C1,2026-01-05,1.00'), { query: 'on_error=skip' }));
    const before = await countRows(testApp);
    expect(before.rejected_rows).toBe(1);
    problemOf(await testApp.app.inject({ method: 'DELETE', url: '/v1/customers/C9' }), 404);
    expect(await countRows(testApp)).toEqual(before);
  });

  it('answers 404 when the same customer is erased a second time', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    expect((await testApp.app.inject({ method: 'DELETE', url: '/v1/customers/C2' })).statusCode).toBe(204);
    problemOf(await testApp.app.inject({ method: 'DELETE', url: '/v1/customers/C2' }), 404);
  });

  it('erases a customer whose id needs URL encoding', async () => {
    const testApp = await startApp(dialect);
    receiptOf(await upload(testApp.app, '/v1/customers', CSV, csvText(CUSTOMER_HEADER, 'acct 7/b,1985-04-12,Northvale,web,individual')));
    expect((await testApp.app.inject({ method: 'DELETE', url: `/v1/customers/${encodeURIComponent('acct 7/b')}` })).statusCode).toBe(204);
    expect((await countRows(testApp)).customers).toBe(0);
  });

  it('makes a later sale of an erased customer an unknown-customer error', async () => {
    const testApp = await startApp(dialect);
    await seedCustomers(testApp.app);
    expect((await testApp.app.inject({ method: 'DELETE', url: '/v1/customers/C1' })).statusCode).toBe(204);
    expect(onlyRowError(await upload(testApp.app, '/v1/sales', CSV, csvText('sale_id,customer_id,sold_at,amount', 'S1,C1,2026-01-05,1.00')))).toMatchObject({
      column: 'customer_id',
      value: 'C1',
      reason: 'customer_id C1 is not a known customer; upload the customer first',
    });
  });
});
