/**
 * PostgreSQL's bulk path: `COPY … FROM STDIN` inside a kysely transaction. kysely hides the pg
 * client a transaction runs on, so the pools opened by connect.ts let their clients recognise a
 * marker query carrying a one-off token: a transaction runs one through kysely (once per
 * transaction), the client that receives it records itself under the token, and the COPY then
 * runs on that same client between kysely's queries, so it belongs to the transaction: a
 * failure rolls it back like any other statement. (The server's process id would name the
 * connection too, but not behind a pooler such as PgBouncer, which docs/SCALING.md suggests.)
 *
 * Rows go in COPY's text format, which the server parses as it stores them: no statement to
 * plan and no array parameters to build, bind and unnest (docs/SCALING.md has what the upload
 * cost before and after, together with migration 0011).
 */
import { randomUUID } from 'node:crypto';
import { pipeline } from 'node:stream/promises';
import { Readable } from 'node:stream';
import { sql, type Transaction } from 'kysely';
import type pg from 'pg';
import { from as copyFrom } from 'pg-copy-streams';

const MARKER = 'select 1 as copy_client -- ';
const clientsByToken = new Map<string, pg.PoolClient>();
const clientsOfTransactions = new WeakMap<object, pg.PoolClient>();

/** Makes the clients of `pool` findable by `copyRows`; call once, before the pool is used. */
export function registerCopyClients(pool: pg.Pool): void {
  pool.on('connect', (client: pg.PoolClient) => {
    const query = client.query.bind(client) as (...args: unknown[]) => unknown;
    const recognising = (...args: unknown[]): unknown => {
      const text = args[0];
      if (typeof text === 'string' && text.startsWith(MARKER)) clientsByToken.set(text.slice(MARKER.length), client);
      return query(...args);
    };
    client.query = recognising as typeof client.query;
  });
}

async function clientOf<T>(trx: Transaction<T>): Promise<pg.PoolClient> {
  const known = clientsOfTransactions.get(trx);
  if (known !== undefined) return known;
  const token = randomUUID();
  await sql.raw(`${MARKER}${token}`).execute(trx);
  const client = clientsByToken.get(token);
  clientsByToken.delete(token);
  if (client === undefined) throw new Error('COPY needs the connection of its transaction, which was not opened by openDatabase');
  clientsOfTransactions.set(trx, client);
  return client;
}

/** One value in COPY's text format: NULL as \N; backslash, tab, newline and carriage return escaped. */
function copyText(value: unknown): string {
  if (value === null || value === undefined) return '\\N';
  const text = typeof value === 'string' ? value : String(value);
  return /[\\\t\n\r]/.test(text) ? text.replace(/[\\\t\n\r]/g, (character) => COPY_ESCAPES[character] as string) : text;
}

const COPY_ESCAPES: Record<string, string> = { '\\': '\\\\', '\t': '\\t', '\n': '\\n', '\r': '\\r' };

/** Rows per chunk of COPY text handed to the stream: about a megabyte of contacts. */
const ROWS_PER_CHUNK = 10_000;

function* copyChunks(rows: ReadonlyArray<Record<string, unknown>>, columns: readonly string[]): Generator<string> {
  for (let start = 0; start < rows.length; start += ROWS_PER_CHUNK) {
    let text = '';
    const end = Math.min(rows.length, start + ROWS_PER_CHUNK);
    for (let index = start; index < end; index++) {
      const row = rows[index] as Record<string, unknown>;
      for (let column = 0; column < columns.length; column++) {
        text += copyText(row[columns[column] as string]);
        text += column === columns.length - 1 ? '\n' : '\t';
      }
    }
    yield text;
  }
}

/**
 * Writes `rows` (each with at least `columns`) into `table` with one COPY, inside `trx`.
 * Values are written as text and converted by the server to each column's type, as an INSERT
 * of text literals would be.
 * @throws whatever the server reports (a unique violation, a value that does not convert)
 */
export async function copyRows<T>(trx: Transaction<T>, table: string, columns: readonly string[], rows: ReadonlyArray<Record<string, unknown>>): Promise<void> {
  if (rows.length === 0) return;
  const client = await clientOf(trx);
  const quoted = (name: string) => `"${name.replace(/"/g, '""')}"`;
  const stream = client.query(copyFrom(`copy ${quoted(table)} (${columns.map(quoted).join(', ')}) from stdin`));
  await pipeline(Readable.from(copyChunks(rows, columns)), stream);
}
