/** Where a statement runs: the database itself, or a transaction opened on it. */
import type { Kysely, Transaction } from 'kysely';
import type { Database } from './tables.js';

export type Executor = Kysely<Database> | Transaction<Database>;
