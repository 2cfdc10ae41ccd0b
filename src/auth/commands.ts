/**
 * `segrank keys create --role read --name dashboard`, `segrank keys list`,
 * `segrank keys revoke <key id>`: managing API keys from the command line, on the database
 * that DATABASE_URL names (the same one the service uses).
 */
import { parseArgs } from 'node:util';
import type { Config } from '../config.js';
import { openDatabase } from '../db/connect.js';
import { migrateToLatest } from '../db/migrate.js';
import type { ApiKeysTable } from '../db/tables.js';
import { ROLES, createKey, isRole, keyIdOf, listKeys, revokeKey } from './keys.js';

const USAGE = `usage:
  segrank keys create --role ${ROLES.join('|')} --name NAME
  segrank keys list
  segrank keys revoke KEY_ID`;

/** The keys as an aligned table under a header row; never a secret (only its hash is stored). */
export function keyTable(keys: ReadonlyArray<Omit<ApiKeysTable, 'secret_sha256'>>): string {
  const rows = [['KEY ID', 'ROLE', 'STATUS', 'CREATED', 'NAME'], ...keys.map((key) => [key.key_id, key.role, key.revoked_at ? `revoked ${key.revoked_at}` : 'active', key.created_at, key.name])];
  const widths = [0, 1, 2, 3].map((column) => Math.max(...rows.map((row) => (row[column] as string).length)));
  return rows.map((row) => row.map((cell, column) => (column < 4 ? cell.padEnd(widths[column] as number) : cell)).join('  ')).join('\n');
}

export async function keysCommand(args: string[], config: Config): Promise<number> {
  const [action, ...rest] = args;
  const { values, positionals } = parseArgs({ args: rest, options: { role: { type: 'string' }, name: { type: 'string' } }, allowPositionals: true });
  if (action === 'create' && (!values.role || !isRole(values.role) || !values.name?.trim())) {
    console.error(`keys create needs --role (${ROLES.join(', ')}) and --name\n${USAGE}`);
    return 64;
  }
  if (action !== 'create' && action !== 'list' && action !== 'revoke') {
    console.error(USAGE);
    return 64;
  }
  const database = await openDatabase(config.database);
  try {
    await migrateToLatest(database.db, config.database);
    if (action === 'create') {
      const issued = await createKey(database.db, values.role as (typeof ROLES)[number], (values.name as string).trim());
      console.log(`created key ${issued.keyId} (role ${issued.role}, name "${issued.name}"). It is shown only now:`);
      console.log(issued.key);
      return 0;
    }
    if (action === 'list') {
      const keys = await listKeys(database.db);
      console.log(keys.length === 0 ? 'no keys; create one with: segrank keys create --role admin --name NAME' : keyTable(keys));
      return 0;
    }
    const target = positionals[0];
    if (!target) {
      console.error(USAGE);
      return 64;
    }
    const revoked = await revokeKey(database.db, target);
    // The target may be the whole key; only its id is ever printed, so the secret stays off screens and logs.
    const keyId = keyIdOf(target);
    console.log(revoked ? `revoked key ${keyId}` : `no active key ${keyId}`);
    return revoked ? 0 : 1;
  } finally {
    await database.close();
  }
}
