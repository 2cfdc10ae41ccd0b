/** Whether the service can reach its database, as the health check reports it. */
import type { Kysely } from 'kysely';
import type { Logger } from '../logger.js';
import { pingDatabase } from './connect.js';
import type { Database } from './tables.js';

export type Health = { status: 'ok'; database: 'ok' } | { status: 'unavailable'; database: 'unreachable' };

/** One round trip to the database; a failure is logged here and reported as unavailable, never thrown. */
export async function checkHealth(db: Kysely<Database>, logger: Logger): Promise<Health> {
  try {
    await pingDatabase(db);
    return { status: 'ok', database: 'ok' };
  } catch (error) {
    logger.error({ err: error }, 'health check: database unreachable');
    return { status: 'unavailable', database: 'unreachable' };
  }
}
