/**
 * The bad-input corpus (test/fixtures/bad/) sent through the HTTP routes, on every dialect. Each
 * refused input must answer its 4xx problem details and leave every table as it was; each
 * deliberately valid one (SQL fragments as text, -0, lone CR line ends) must be stored exactly as
 * sent. After every case the service still answers /healthz and Object.prototype is untouched.
 *
 * One app per dialect serves the whole corpus: a refused case changes nothing by definition, and
 * the valid cases use ids of their own.
 */
import { sql } from 'kysely';
import type { LightMyRequestResponse } from 'fastify';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PROBLEM_TYPES, type ProblemSlug } from '../../src/http/problems.js';
import { Readable } from 'node:stream';
import { BAD_INPUT_CASES, CORPUS_MAX_LABELS_PER_DIMENSION, CORPUS_UPLOAD_IDLE_TIMEOUT_MS, bodyOf, type BadInputCase, type StoredCheck } from '../fixtures/bad/cases.js';
import { CSV, THREE_CUSTOMERS, upload, type ProblemResponseBody, type ReceiptBody } from '../support/upload-client.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import { countTableRows, listTables, readDatabaseState, rowDelta } from '../support/database-state.js';

/** The body as a stream that sends every byte and then neither ends nor errs, as a stalled client. */
function stalledStream(body: Buffer | string): Readable {
  let sent = false;
  return new Readable({
    read() {
      if (!sent) this.push(body);
      sent = true;
    },
  });
}

function send(testApp: TestApp, badCase: BadInputCase): Promise<LightMyRequestResponse> {
  const fileBody = bodyOf(badCase);
  const body = badCase.stallAfterBody && fileBody !== undefined ? stalledStream(fileBody) : fileBody;
  return testApp.app.inject({
    method: badCase.method ?? 'POST',
    url: badCase.query === undefined ? badCase.path : `${badCase.path}?${badCase.query}`,
    headers: { ...(badCase.contentType === null ? {} : { 'content-type': badCase.contentType }), ...badCase.headers },
    ...(body === undefined ? {} : { payload: body }),
  });
}

async function storedRows(testApp: TestApp, check: StoredCheck): Promise<Array<Record<string, unknown>>> {
  const conditions = Object.entries(check.where).map(([column, value]) => sql`${sql.ref(column)} = ${value}`);
  const result = await sql<Record<string, unknown>>`select * from ${sql.table(check.table)} where ${sql.join(conditions, sql` and `)}`.execute(
    testApp.database.handle.db,
  );
  return result.rows;
}

/** The detail and one line per listed error, as the `mentions` patterns of the corpus read them. */
function readableProblem(problem: ProblemResponseBody): string {
  const errors = (problem.errors ?? []).map((error) => `row ${error.row}, line ${error.line}, column ${error.column}, value ${error.value}: ${error.reason}`);
  return [problem.detail, ...errors].join('\n');
}

/** PostgreSQL returns bigint columns as text; the expected value's type decides the comparison. */
function comparable(stored: unknown, expected: string | number | null): unknown {
  return typeof expected === 'number' && stored !== null ? Number(stored) : stored;
}

describe.each(TEST_DIALECTS)('bad input corpus on %s', (dialect) => {
  let testApp: TestApp;
  /** The tables after migration; every case must leave all of them in place. */
  let tables: string[];

  beforeAll(async () => {
    // inject hands each generated 10 MB body to the parser as one chunk, read in one go; on a busy
    // shared machine that can pass the event-loop delay limit and shed the next requests with 503.
    // Load shedding is not under test here (test/robustness/health-under-load.test.ts covers it).
    testApp = await createTestApp(dialect, { maxEventLoopDelayMs: 0, uploadIdleTimeoutMs: CORPUS_UPLOAD_IDLE_TIMEOUT_MS, maxLabelsPerDimension: CORPUS_MAX_LABELS_PER_DIMENSION });
    const seeded = await upload(testApp.app, '/v1/customers', CSV, THREE_CUSTOMERS);
    expect(seeded.statusCode, seeded.body).toBe(201);
    tables = await listTables(testApp);
  });

  afterAll(async () => {
    await testApp.close();
  });

  it('finds the tables it watches', () => {
    expect(tables).toEqual(expect.arrayContaining(['customers', 'customer_attributes', 'sales', 'campaigns', 'campaign_contacts', 'ingests', 'rejected_rows']));
  });

  it('holds at least 40 cases, each with a body file, a generator or no body by design', () => {
    expect(BAD_INPUT_CASES.length).toBeGreaterThanOrEqual(40);
    expect(new Set(BAD_INPUT_CASES.map((badCase) => badCase.name)).size).toBe(BAD_INPUT_CASES.length);
    for (const badCase of BAD_INPUT_CASES) {
      const hasBody = badCase.file !== null || badCase.generate !== undefined;
      expect(hasBody || badCase.method === 'GET' || badCase.method === 'DELETE', badCase.name).toBe(true);
    }
  });

  it.each(BAD_INPUT_CASES)('$name', async (caseAsListed) => {
    const badCase = dialect === 'postgres' && caseAsListed.onPostgres ? { ...caseAsListed, ...caseAsListed.onPostgres } : caseAsListed;
    const prototypeKeys = Object.getOwnPropertyNames(Object.prototype).sort();
    const before = { tables, counts: await countTableRows(testApp, tables) };

    const response = await send(testApp, badCase);
    const summary = response.body.slice(0, 600);
    expect(response.statusCode, summary).toBe(badCase.status);
    const after = await readDatabaseState(testApp);

    if (badCase.problemType === null) {
      expect(response.headers['content-type'], summary).toMatch(/^application\/json/);
      const receipt = response.json<ReceiptBody>();
      expect(receipt).toMatchObject(badCase.receipt ?? {});
      expect(receipt.inserted + receipt.updated + receipt.unchanged + receipt.rejected).toBe(receipt.rows);
      expect(rowDelta(before, after)['ingests']).toBe(1);
      for (const check of badCase.stored ?? []) {
        const rows = await storedRows(testApp, check);
        expect(rows, JSON.stringify(check.where)).toHaveLength(1);
        const stored = rows[0] as Record<string, unknown>;
        for (const [column, expected] of Object.entries(check.values)) {
          expect(comparable(stored[column], expected), `${check.table}.${column}`).toStrictEqual(expected);
        }
      }
    } else {
      expect(response.headers['content-type'], summary).toMatch(/^application\/problem\+json/);
      const problem = response.json<ProblemResponseBody>();
      const slug = problem.type.replace(/^\/problems\//, '') as ProblemSlug;
      expect(problem.type).toBe(badCase.problemType);
      expect(problem.status).toBe(badCase.status);
      expect(problem.title).toBe(PROBLEM_TYPES[slug].title);
      expect(problem.detail).not.toBe('');
      if (badCase.mentions) expect(readableProblem(problem)).toMatch(badCase.mentions);
      expect(after.counts).toEqual(before.counts);
    }

    expect(after.tables).toEqual(before.tables);
    const health = await testApp.app.inject({ method: 'GET', url: '/healthz' });
    expect(health.statusCode, health.body).toBe(200);
    expect(Object.getOwnPropertyNames(Object.prototype).sort()).toEqual(prototypeKeys);
    expect(({} as Record<string, unknown>)['polluted']).toBeUndefined();
  });
});
