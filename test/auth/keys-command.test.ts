/** `segrank keys`: a listing with a header row, and no secret printed by revoke even when given the whole key. */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { keysCommand } from '../../src/auth/commands.js';
import { loadConfig } from '../../src/config.js';

/** Runs one `segrank keys …` command on `file` and returns what it printed. */
async function run(file: string, args: string[]): Promise<{ code: number; printed: string }> {
  const lines: string[] = [];
  const log = vi.spyOn(console, 'log').mockImplementation((...parts: unknown[]) => void lines.push(parts.join(' ')));
  try {
    const code = await keysCommand(args, loadConfig({ DATABASE_URL: `sqlite:${file}` }));
    return { code, printed: lines.join('\n') };
  } finally {
    log.mockRestore();
  }
}

describe('segrank keys', () => {
  const folders: string[] = [];
  afterEach(() => {
    for (const folder of folders.splice(0)) fs.rmSync(folder, { recursive: true, force: true });
  });
  const databaseFile = () => {
    const folder = fs.mkdtempSync(path.join(os.tmpdir(), 'segrank-keys-'));
    folders.push(folder);
    return path.join(folder, 'keys.sqlite');
  };

  it('lists keys under a header row, aligned, and says how to create the first', async () => {
    const file = databaseFile();
    expect((await run(file, ['list'])).printed).toBe('no keys; create one with: segrank keys create --role admin --name NAME');
    const created = await run(file, ['create', '--role', 'read', '--name', 'dashboard']);
    const keyId = /created key ([0-9a-f]{16})/.exec(created.printed)?.[1] as string;
    const { printed } = await run(file, ['list']);
    const [header, row, ...rest] = printed.split('\n');
    expect(rest).toEqual([]);
    expect(header).toMatch(/^KEY ID {12}ROLE {2}STATUS {2}CREATED {19}NAME$/);
    expect(row).toMatch(new RegExp(`^${keyId}  read  active  \\d{4}-\\d\\d-\\d\\dT[\\d:.]+Z  dashboard$`));
    expect(header?.indexOf('NAME')).toBe(row?.indexOf('dashboard'));
  });

  it('revokes by the whole key without printing its secret', async () => {
    const file = databaseFile();
    const created = await run(file, ['create', '--role', 'ingest', '--name', 'loader']);
    const key = created.printed.split('\n')[1] as string;
    const [, keyId, secret] = /^sgr_([0-9a-f]{16})_(.+)$/.exec(key) as unknown as [string, string, string];
    const revoked = await run(file, ['revoke', key]);
    expect(revoked).toEqual({ code: 0, printed: `revoked key ${keyId}` });
    const again = await run(file, ['revoke', key]);
    expect(again).toEqual({ code: 1, printed: `no active key ${keyId}` });
    expect(again.printed).not.toContain(secret);
  });
});
