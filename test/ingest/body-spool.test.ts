/** Receiving an upload body before anything is written: in memory or in a file, limits and stalls. */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { PassThrough, Readable } from 'node:stream';
import { afterEach, describe, expect, it } from 'vitest';
import { BodyIdleTimeoutError, spoolBody, UploadTooLargeError } from '../../src/ingest/body-spool.js';

async function readAll(stream: Readable): Promise<Buffer> {
  const chunks: Buffer[] = [];
  for await (const chunk of stream) chunks.push(chunk as Buffer);
  return Buffer.concat(chunks);
}

const spoolDirs: string[] = [];
afterEach(() => {
  for (const dir of spoolDirs.splice(0)) fs.rmSync(dir, { recursive: true, force: true });
});

function newSpoolDir(): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'spool-test-'));
  spoolDirs.push(dir);
  return dir;
}

describe('spooling an upload body', () => {
  it('keeps a small body in memory and gives back the same bytes and hash', async () => {
    const body = Buffer.from('customer_id\nA1\n');
    const spooled = await spoolBody(Readable.from([body]), { maxBytes: 1024, idleTimeoutMs: 1000 });
    expect(spooled.bytes).toBe(body.length);
    expect(spooled.sha256).toBe(createHash('sha256').update(body).digest('hex'));
    expect(await readAll(spooled.open())).toEqual(body);
  });

  it('moves a large body into a private file in the spool folder and removes it afterwards', async () => {
    const dir = newSpoolDir();
    const parts = Array.from({ length: 40 }, (_unused, index) => Buffer.alloc(1000, index));
    const spooled = await spoolBody(Readable.from(parts), { maxBytes: 1_000_000, idleTimeoutMs: 1000, memoryBytes: 4096, spoolDir: dir });
    const [folder] = fs.readdirSync(dir);
    expect(folder).toMatch(/^segrank-upload-/);
    expect(fs.statSync(path.join(dir, folder as string, 'body')).mode & 0o777).toBe(0o600);
    expect(await readAll(spooled.open())).toEqual(Buffer.concat(parts));
    await spooled.dispose();
    expect(fs.readdirSync(dir)).toEqual([]);
  });

  it('refuses a body past the size limit and leaves no file behind', async () => {
    const dir = newSpoolDir();
    const parts = Array.from({ length: 20 }, () => Buffer.alloc(1000));
    await expect(spoolBody(Readable.from(parts), { maxBytes: 10_000, idleTimeoutMs: 1000, memoryBytes: 2000, spoolDir: dir })).rejects.toBeInstanceOf(UploadTooLargeError);
    expect(fs.readdirSync(dir)).toEqual([]);
  });

  it('gives up a body that stops arriving, saying how much came', async () => {
    const source = new PassThrough();
    source.write(Buffer.from('half a bo'));
    const error = await spoolBody(source, { maxBytes: 1000, idleTimeoutMs: 50 }).catch((caught: unknown) => caught);
    expect(error).toBeInstanceOf(BodyIdleTimeoutError);
    expect((error as BodyIdleTimeoutError).receivedBytes).toBe(9);
    source.destroy();
  });
});
