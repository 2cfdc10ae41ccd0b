/**
 * Cached better-sqlite3 prepared statements, for the few hot statements that run outside
 * kysely (kysely compiles and prepares a statement again on every call). Statements live as long
 * as their connection; the texts are few and fixed (one per statement and column set), so the
 * cache stays small.
 */
import type SqliteDatabase from 'better-sqlite3';

const preparedStatements = new WeakMap<SqliteDatabase.Database, Map<string, SqliteDatabase.Statement>>();

/**
 * The statement for `text` on `connection`, prepared on first use. `values` returns rows as
 * arrays, `first column` returns the first column alone.
 * @throws whatever better-sqlite3 throws for SQL it cannot prepare
 */
export function prepared(connection: SqliteDatabase.Database, text: string, mode: 'rows' | 'values' | 'first column' = 'rows'): SqliteDatabase.Statement {
  let cache = preparedStatements.get(connection);
  if (cache === undefined) {
    cache = new Map();
    preparedStatements.set(connection, cache);
  }
  const key = `${mode}\u0000${text}`;
  let statement = cache.get(key);
  if (statement === undefined) {
    statement = connection.prepare(text);
    if (mode === 'values') statement.raw(true);
    if (mode === 'first column') statement.pluck(true);
    cache.set(key, statement);
  }
  return statement;
}
