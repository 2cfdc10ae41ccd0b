/**
 * Property tests of the upload routes with random input (fast-check): random CSV text with
 * random quoting, separators, line ends and Unicode; random JSON values; random field values for
 * each of the three upload kinds; and random content types. Whatever arrives, the service must
 * never answer 5xx, must answer every refusal with problem details, and must never write part of
 * an upload: a refusal leaves every table as it was, and an accepted upload changes the counts
 * exactly as its receipt says.
 *
 * fast-check prints the seed and the shrunk counterexample of a failure; FUZZ_SEED=<seed> replays
 * a run. Runs per property are bounded (FUZZ_RUNS) and so is the time each property may take.
 */
import type { LightMyRequestResponse } from 'fastify';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Dialect } from '../../src/db/connect.js';
import { PROBLEM_TYPES, type ProblemSlug } from '../../src/http/problems.js';
import { CSV, JSON_TYPE, NDJSON, THREE_CUSTOMERS, upload, type ProblemResponseBody, type ReceiptBody } from '../support/upload-client.js';
import { createTestApp, type TestApp } from '../support/app.js';
import { TEST_DIALECTS } from '../support/database.js';
import { countTableRows, listTables, rowDelta, type DatabaseState } from '../support/database-state.js';

/** Runs per property: PostgreSQL round trips are slower, so it gets fewer (FUZZ_RUNS overrides both). */
const RUNS: Record<Dialect, number> = { sqlite: 150, postgres: 100 };
/** Time each property may take before fast-check stops starting new runs (the runs done still count). */
const TIME_LIMIT_MS = 12_000;
const PROPERTY_TIMEOUT_MS = 60_000;
const seedOverride = process.env['FUZZ_SEED'] === undefined ? {} : { seed: Number(process.env['FUZZ_SEED']) };
const runsOverride = Number(process.env['FUZZ_RUNS'] ?? Number.NaN);

type Kind = 'customers' | 'sales' | 'contacts';
type OnError = 'reject' | 'skip';
type Cell = string | number | boolean | null;
type Row = Record<string, Cell>;

interface UploadAttempt {
  kind: Kind;
  campaignId: string;
  onError: OnError;
  contentType: string;
  body: string | Buffer;
}

const MAIN_TABLE: Record<Kind, string> = { customers: 'customers', sales: 'sales', contacts: 'campaign_contacts' };
/**
 * Tables an accepted upload of each kind may change besides its main table, ingests and
 * rejected_rows. Customer attributes may also shrink: an empty cell clears a stored attribute;
 * the contact value counts follow the contacts (and customers whose contacts change cells).
 */
const SIDE_TABLES: Record<Kind, Record<string, 'any' | 'zero or one'>> = {
  customers: { customer_attributes: 'any', contact_value_counts: 'any' },
  sales: {},
  contacts: { campaigns: 'zero or one', contact_value_counts: 'any' },
};
const COLUMNS: Record<Kind, readonly string[]> = {
  customers: ['customer_id', 'birth_date', 'region', 'channel', 'customer_type'],
  sales: ['sale_id', 'customer_id', 'sold_at', 'amount'],
  contacts: ['customer_id', 'contacted_at', 'converted', 'revenue'],
};

function pathOf(kind: Kind, campaignId: string): string {
  return kind === 'contacts' ? `/v1/campaigns/${encodeURIComponent(campaignId)}/contacts` : `/v1/${kind}`;
}

// ---- Arbitraries -------------------------------------------------------------------------

const kindArbitrary = fc.constantFrom<Kind>('customers', 'sales', 'contacts');
const onErrorArbitrary = fc.constantFrom<OnError>('reject', 'skip');
/** Campaign ids stay short: fastify's router answers a path parameter over 100 characters itself, without problem details. */
const campaignIdArbitrary = fc.oneof(fc.constantFrom('spring-mailing', 'autumn-post', "x'; DROP TABLE campaigns; --"), fc.string({ unit: 'grapheme', minLength: 1, maxLength: 6 }));

/** Characters that trouble CSV and JSON readers, to build text from. */
const TROUBLE_CHARACTERS = ['"', ',', '\n', '\r', '\r\n', ' ', '\t', ';', '\\', "'", '{', '}', '[', ']', ':', 'a', 'Z', '0', '9', '.', '-', 'é', 'ß', '中', '😀', '\u0301', '\u200b', '\u2028', '\uFEFF', '\u0000', '\u007f', '\ud800'];
const troubleText = fc.string({ unit: fc.constantFrom(...TROUBLE_CHARACTERS), maxLength: 12 });
const CORNER_VALUES = ['', ' ', 'NaN', 'Infinity', '-Infinity', '-0', '1e309', '0x10', '1,234.50', '12.345', '$5', '0000-00-00', '2023-02-30', '2024-03-01T25:00:00Z', '9999-12-31', 'null', 'true', '__proto__', 'constructor', "'; DROP TABLE customers; --", 'C1', 'C2'];
const nastyText = fc.oneof(
  fc.string({ unit: 'grapheme', maxLength: 20 }),
  fc.string({ unit: 'binary', maxLength: 10 }),
  troubleText,
  fc.constantFrom(...CORNER_VALUES),
);

function isoDay(daysFromEpoch: number): string {
  return new Date(daysFromEpoch * 86_400_000).toISOString().slice(0, 10);
}
// Day numbers since 1970-01-01: births 1920-01-02 to 2009-01-01, events 2019-01-01 to today, 2026-06-15.
const birthDate = fc.integer({ min: -18_262, max: 14_245 }).map(isoDay);
const eventDate = fc.integer({ min: 17_897, max: 20_619 }).map(isoDay);
const customerId = fc.integer({ min: 1, max: 12 }).map((number) => `C${number}`);
const money = fc.integer({ min: 0, max: 5_000_000 }).map((cents) => (cents / 100).toFixed(2));
const jsonScalar: fc.Arbitrary<Cell> = fc.oneof(nastyText, fc.double(), fc.integer(), fc.boolean(), fc.constant(null));

/** Mostly a valid value, sometimes a hostile one; JSON bodies may also carry it as a number or boolean. */
function field(valid: fc.Arbitrary<Cell>): fc.Arbitrary<Cell> {
  // Weighted so that a good share of rows (about a third) is valid and whole uploads get written too.
  return fc.oneof({ arbitrary: valid, weight: 20 }, { arbitrary: nastyText, weight: 2 }, { arbitrary: jsonScalar, weight: 1 }, { arbitrary: fc.constant(null), weight: 1 });
}

const ROW_FIELDS: Record<Kind, Record<string, fc.Arbitrary<Cell>>> = {
  customers: {
    customer_id: field(customerId),
    birth_date: field(birthDate),
    region: field(fc.constantFrom('Northvale', 'Eastmoor', 'Fennwick')),
    channel: field(fc.constantFrom('web', 'store', 'referral')),
    customer_type: field(fc.constantFrom('individual', 'company')),
    loyalty_tier: field(fc.constantFrom('gold', 'silver')),
  },
  sales: {
    sale_id: field(fc.integer({ min: 1, max: 2000 }).map((number) => `S${number}`)),
    customer_id: field(customerId),
    sold_at: field(eventDate),
    amount: field(fc.oneof(money, fc.integer({ min: 0, max: 10_000 }))),
  },
  contacts: {
    customer_id: field(customerId),
    contacted_at: field(eventDate),
    converted: field(fc.constantFrom<Cell>('0', '1', 0, 1, true, false, 'yes')),
    revenue: field(fc.oneof(money, fc.constant('0'))),
  },
};

/** One time in ten a value, otherwise null. */
function sometimes<T>(arbitrary: fc.Arbitrary<T>): fc.Arbitrary<T | null> {
  return fc.oneof({ arbitrary: fc.constant(null), weight: 9 }, { arbitrary, weight: 1 });
}

/** A row of the kind with random values, sometimes missing a column or carrying a stray one. */
function rowOf(kind: Kind): fc.Arbitrary<Row> {
  const missing = sometimes(fc.constantFrom(...Object.keys(ROW_FIELDS[kind])));
  const stray = sometimes(fc.tuple(nastyText, jsonScalar));
  return fc.tuple(fc.record(ROW_FIELDS[kind]), missing, stray).map(([row, missingColumn, strayField]) => {
    const result: Row = {};
    for (const [name, value] of Object.entries(row)) if (name !== missingColumn) result[name] = value;
    // defineProperty, so that a stray "__proto__" becomes a key of the row rather than its prototype.
    if (strayField !== null) Object.defineProperty(result, strayField[0], { value: strayField[1], enumerable: true, writable: true, configurable: true });
    return result;
  });
}

type Quoting = 'when needed' | 'always' | 'never' | 'unclosed';
const quotingArbitrary: fc.Arbitrary<Quoting> = fc.oneof(
  { arbitrary: fc.constant('when needed' as const), weight: 12 },
  { arbitrary: fc.constant('always' as const), weight: 3 },
  { arbitrary: fc.constant('never' as const), weight: 2 },
  { arbitrary: fc.constant('unclosed' as const), weight: 1 },
);
const lineEndArbitrary = fc.constantFrom('\n', '\r\n', '\r');

function csvCell(value: Cell, quoting: Quoting): string {
  const text = value === null ? '' : String(value);
  switch (quoting) {
    case 'when needed':
      return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
    case 'always':
      return `"${text.replace(/"/g, '""')}"`;
    case 'never':
      return text;
    case 'unclosed':
      return `"${text}`;
  }
}

/** CSV text from lines of cells, each cell quoted its own way, lines ended as chosen. */
function csvText(lines: ReadonlyArray<readonly Cell[]>, quotings: readonly Quoting[], lineEnd: string, byteOrderMark: boolean): string {
  let cellIndex = 0;
  const quotingOfNextCell = (): Quoting => quotings[cellIndex++ % Math.max(1, quotings.length)] ?? 'when needed';
  const rendered = lines.map((cells) => cells.map((cell) => csvCell(cell, quotingOfNextCell())).join(','));
  return `${byteOrderMark ? '\uFEFF' : ''}${rendered.join(lineEnd)}${lineEnd}`;
}

function csvBody(header: readonly string[], rows: readonly Row[], lineEnd: string): string {
  return csvText([header, ...rows.map((row) => header.map((name) => row[name] ?? null))], ['when needed'], lineEnd, false);
}

/** The columns of the rows in first-seen order, as a CSV header would name them. */
function headerOf(rows: readonly Row[]): string[] {
  return [...new Set(rows.flatMap((row) => Object.keys(row)))];
}

/** Property 1: free-form CSV text, with a header drawn from real and hostile column names. */
const randomCsvAttempt: fc.Arbitrary<UploadAttempt> = kindArbitrary.chain((kind) =>
  fc
    .record({
      campaignId: campaignIdArbitrary,
      onError: onErrorArbitrary,
      // Often the kind's own columns in some order, so that rows get as far as the field checks.
      header: fc.oneof(
        fc.shuffledSubarray([...COLUMNS[kind]], { minLength: COLUMNS[kind].length }),
        fc.array(fc.oneof(fc.constantFrom(...COLUMNS.customers, ...COLUMNS.sales, ...COLUMNS.contacts), nastyText), { maxLength: 7 }),
      ),
      cells: fc.array(fc.array(fc.oneof(nastyText, eventDate, birthDate, customerId, money, fc.constantFrom('individual', 'company', '0', '1')), { maxLength: 7 }), { maxLength: 6 }),
      quotings: fc.array(quotingArbitrary, { minLength: 1, maxLength: 8 }),
      lineEnd: lineEndArbitrary,
      byteOrderMark: fc.boolean(),
    })
    // Rows are positional cells, so a row may be shorter or longer than the header.
    .map(({ campaignId, onError, header, cells, quotings, lineEnd, byteOrderMark }) => ({
      kind,
      campaignId,
      onError,
      contentType: CSV,
      body: csvText([header, ...cells], quotings, lineEnd, byteOrderMark),
    })),
);

/** Property 2: random JSON values, as a JSON array, a single JSON value, or NDJSON lines. */
const randomJsonAttempt: fc.Arbitrary<UploadAttempt> = fc
  .record({
    kind: kindArbitrary,
    campaignId: campaignIdArbitrary,
    onError: onErrorArbitrary,
    values: fc.array(
      fc.oneof(
        { arbitrary: fc.dictionary(fc.oneof(fc.constantFrom(...COLUMNS.sales, ...COLUMNS.contacts, ...COLUMNS.customers), nastyText), fc.jsonValue({ maxDepth: 2 }), { maxKeys: 7 }), weight: 4 },
        { arbitrary: fc.jsonValue({ maxDepth: 3 }), weight: 1 },
      ),
      { maxLength: 6 },
    ),
    shape: fc.constantFrom('array', 'array', 'ndjson', 'ndjson', 'single value'),
    indent: fc.constantFrom(0, 1, 2),
  })
  .map(({ kind, campaignId, onError, values, shape, indent }) => {
    if (shape === 'ndjson') return { kind, campaignId, onError, contentType: NDJSON, body: values.map((value) => JSON.stringify(value)).join('\n') + '\n' };
    const body = shape === 'array' ? JSON.stringify(values, null, indent) : (JSON.stringify(values[0] ?? null, null, indent) ?? '');
    return { kind, campaignId, onError, contentType: JSON_TYPE, body };
  });

/** Property 3: rows of one kind with random field values, in any of the three formats. */
const randomRowsAttempt: fc.Arbitrary<UploadAttempt> = kindArbitrary.chain((kind) =>
  fc
    .record({
      campaignId: campaignIdArbitrary,
      onError: onErrorArbitrary,
      rows: fc.array(rowOf(kind), { minLength: 1, maxLength: 5 }),
      format: fc.constantFrom('csv', 'json', 'ndjson'),
      lineEnd: lineEndArbitrary,
    })
    .map(({ campaignId, onError, rows, format, lineEnd }) => {
      if (format === 'json') return { kind, campaignId, onError, contentType: JSON_TYPE, body: JSON.stringify(rows) };
      if (format === 'ndjson') return { kind, campaignId, onError, contentType: NDJSON, body: rows.map((row) => JSON.stringify(row)).join('\n') + '\n' };
      return { kind, campaignId, onError, contentType: CSV, body: csvBody(headerOf(rows), rows, lineEnd) };
    }),
);

/** Header-safe text: printable ASCII, as an HTTP client can send it. */
const headerText = fc.string({ unit: fc.integer({ min: 0x20, max: 0x7e }).map((code) => String.fromCharCode(code)), maxLength: 40 });
const contentTypeArbitrary = fc.oneof(
  fc.constantFrom(CSV, JSON_TYPE, NDJSON, 'application/ndjson', 'application/jsonl', 'TEXT/CSV', 'text/csv; charset=utf-8', 'text/csv;charset="UTF-8"', 'text/csv; charset=latin1', 'application/json; charset=utf-16'),
  fc.constantFrom('text/plain', 'application/xml', 'multipart/form-data; boundary=x', 'application/x-www-form-urlencoded', 'application/octet-stream', 'application/problem+json', '*/*', ''),
  fc.tuple(fc.constantFrom(CSV, JSON_TYPE, NDJSON), headerText).map(([type, parameters]) => `${type};${parameters}`),
  headerText,
);

/** Property 4: random content types over bodies that may or may not match them, raw bytes included. */
const randomContentTypeAttempt: fc.Arbitrary<UploadAttempt> = fc
  .record({
    kind: kindArbitrary,
    campaignId: campaignIdArbitrary,
    onError: onErrorArbitrary,
    contentType: contentTypeArbitrary,
    body: fc.oneof(
      randomRowsAttempt.map((attempt) => attempt.body),
      fc.uint8Array({ maxLength: 300 }).map((bytes) => Buffer.from(bytes)),
      nastyText,
    ),
  });

// ---- The invariants ----------------------------------------------------------------------

async function send(testApp: TestApp, attempt: UploadAttempt): Promise<LightMyRequestResponse> {
  return upload(testApp.app, pathOf(attempt.kind, attempt.campaignId), attempt.contentType, attempt.body, { query: `on_error=${attempt.onError}` });
}

function expectNoPartialWrite(attempt: UploadAttempt, response: LightMyRequestResponse, before: DatabaseState, after: DatabaseState): void {
  const summary = `${response.statusCode} ${response.body.slice(0, 400)}`;
  expect(response.statusCode, summary).toBeLessThan(500);
  const delta = rowDelta(before, after);
  if (response.statusCode < 200 || response.statusCode >= 300) {
    expect(response.headers['content-type'], summary).toMatch(/^application\/problem\+json/);
    const problem = response.json<ProblemResponseBody>();
    expect(problem.type, summary).toMatch(/^\/problems\/[a-z-]+$/);
    expect(problem.title, summary).toBe(PROBLEM_TYPES[problem.type.slice('/problems/'.length) as ProblemSlug]?.title);
    expect(problem.status, summary).toBe(response.statusCode);
    expect(typeof problem.detail, summary).toBe('string');
    expect(after.counts, summary).toEqual(before.counts);
    return;
  }
  expect(response.statusCode, summary).toBe(201);
  const receipt = response.json<ReceiptBody>();
  expect(receipt.inserted + receipt.updated + receipt.unchanged + receipt.rejected, summary).toBe(receipt.rows);
  expect(delta[MAIN_TABLE[attempt.kind]], summary).toBe(receipt.inserted);
  expect(delta['ingests'], summary).toBe(1);
  if (attempt.onError === 'reject') {
    expect(receipt.rejected, summary).toBe(0);
    expect(delta['rejected_rows'], summary).toBe(0);
  } else if (receipt.rejected === 0) {
    expect(delta['rejected_rows'], summary).toBe(0);
  } else {
    // Each rejected row keeps one stored reason per problem it has, so at least one.
    expect(delta['rejected_rows'], summary).toBeGreaterThanOrEqual(receipt.rejected);
  }
  const allowed = SIDE_TABLES[attempt.kind];
  for (const [table, change] of Object.entries(delta)) {
    if (table === MAIN_TABLE[attempt.kind] || table === 'ingests' || table === 'rejected_rows') continue;
    if (allowed[table] === 'any') continue;
    if (allowed[table] === 'zero or one') expect([0, 1], `${table} ${summary}`).toContain(change);
    else expect(change, `${table} ${summary}`).toBe(0);
  }
}

/**
 * Runs one property against the app. fast-check's time limit abandons a run in flight rather than
 * waiting for it, so the last run is awaited here before the next property reads the counts.
 */
async function checkProperty(testApp: TestApp, dialect: Dialect, attempts: fc.Arbitrary<UploadAttempt>): Promise<void> {
  // A table that vanished would make the count fail, so the list is read once.
  const tables = await listTables(testApp);
  let inFlight: Promise<unknown> = Promise.resolve();
  let lateFailure: unknown = null;
  const property = fc.asyncProperty(attempts, (attempt) => {
    const run = (async () => {
      const before = { tables, counts: await countTableRows(testApp, tables) };
      const response = await send(testApp, attempt);
      expectNoPartialWrite(attempt, response, before, { tables, counts: await countTableRows(testApp, tables) });
      if (response.statusCode === 201) {
        // The stored receipt is the one the upload answered with.
        const receipt = response.json<ReceiptBody>();
        const stored = await testApp.app.inject({ method: 'GET', url: `/v1/ingests/${receipt.ingest_id}` });
        expect(stored.json<ReceiptBody>()).toEqual(receipt);
      }
    })();
    inFlight = run.catch((error: unknown) => {
      lateFailure = error;
    });
    return run;
  });
  await fc.assert(property, {
    numRuns: Number.isFinite(runsOverride) ? runsOverride : RUNS[dialect],
    plugins: [fc.interruptAfterTimeLimit(TIME_LIMIT_MS)],
    ...seedOverride,
  });
  await inFlight;
  // A failure of the run the time limit cut off would otherwise go unseen.
  if (lateFailure !== null) throw lateFailure;
  const health = await testApp.app.inject({ method: 'GET', url: '/healthz' });
  expect(health.statusCode, health.body).toBe(200);
}

describe.each(TEST_DIALECTS)('random uploads on %s', (dialect) => {
  let testApp: TestApp;

  beforeAll(async () => {
    // Neither the per-client rate limit nor load shedding is under test here; a long local run
    // (FUZZ_RUNS) would reach the one, and a busy shared machine can trip the other.
    testApp = await createTestApp(dialect, { rateLimitPerKey: 0, rateLimitPerAddress: 0, maxEventLoopDelayMs: 0 });
    const seeded = await upload(testApp.app, '/v1/customers', CSV, THREE_CUSTOMERS);
    expect(seeded.statusCode, seeded.body).toBe(201);
  });

  afterAll(async () => {
    await testApp.close();
  });

  it('never fails or writes part of an upload of random CSV text', { timeout: PROPERTY_TIMEOUT_MS }, async () => {
    await checkProperty(testApp, dialect, randomCsvAttempt);
  });

  it('never fails or writes part of an upload of random JSON values', { timeout: PROPERTY_TIMEOUT_MS }, async () => {
    await checkProperty(testApp, dialect, randomJsonAttempt);
  });

  it('never fails or writes part of an upload of rows with random field values', { timeout: PROPERTY_TIMEOUT_MS }, async () => {
    await checkProperty(testApp, dialect, randomRowsAttempt);
  });

  it('never fails or writes part of an upload under a random content type', { timeout: PROPERTY_TIMEOUT_MS }, async () => {
    await checkProperty(testApp, dialect, randomContentTypeAttempt);
  });
});
