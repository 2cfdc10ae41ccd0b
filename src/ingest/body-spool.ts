/**
 * Receives an upload body completely before anything is written: the bytes are counted,
 * hashed and kept (in memory while small, then in a temporary file) so that the upload's write
 * transaction opens only once the whole body is here, and a client that stops sending holds no
 * database connection or lock. A body that stalls for longer than the idle timeout, or grows
 * past the size limit, is given up without reading the rest.
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';

export class UploadTooLargeError extends Error {
  override name = 'UploadTooLargeError';
  constructor(readonly limitBytes: number) {
    super(`the upload is larger than ${limitBytes} bytes`);
  }
}

/** The client sent part of a body (or none of it) and then nothing for `idleMs`. */
export class BodyIdleTimeoutError extends Error {
  override name = 'BodyIdleTimeoutError';
  constructor(
    readonly idleMs: number,
    readonly receivedBytes: number,
  ) {
    super(`no part of the upload body arrived for ${idleMs} ms (${receivedBytes} bytes received); send the whole body without pauses`);
  }
}

/** The client closed the connection before the body ended. */
export class ClientAbortedError extends Error {
  override name = 'ClientAbortedError';
  readonly code = 'ECONNRESET';
  constructor(readonly receivedBytes: number) {
    super(`the client closed the connection after ${receivedBytes} bytes of the body`);
  }
}

export interface SpoolLimits {
  maxBytes: number;
  idleTimeoutMs: number;
  /** Bodies up to this size stay in memory; larger ones go to a temporary file. */
  memoryBytes?: number;
  /** Where that file is made (in a folder of its own); the system's temporary folder by default. */
  spoolDir?: string;
}

export interface SpooledBody {
  bytes: number;
  sha256: string;
  /** Whether any line break (LF or CR) arrived: a line-based body without one came as a single line. */
  sawLineBreak: boolean;
  /** The body again, from the start; may be called once. */
  open(): Readable;
  /** Removes the temporary file, if there is one. Safe to call twice. */
  dispose(): Promise<void>;
}

const DEFAULT_MEMORY_BYTES = 4 * 1024 * 1024;
const FILE_READ_CHUNK_BYTES = 256 * 1024;

/**
 * Reads `source` to its end into a spool.
 * @throws UploadTooLargeError past `maxBytes`, BodyIdleTimeoutError when nothing arrives for
 *   `idleTimeoutMs`, ClientAbortedError when the client goes away, or the stream's own error
 */
export function spoolBody(source: Readable, limits: SpoolLimits): Promise<SpooledBody> {
  const memoryBytes = limits.memoryBytes ?? DEFAULT_MEMORY_BYTES;
  const hash = createHash('sha256');
  let chunks: Buffer[] = [];
  let bytes = 0;
  let sawLineBreak = false;
  let file: { dir: string; path: string; stream: fs.WriteStream } | null = null;

  const removeFile = async () => {
    if (file === null) return;
    const { dir, stream } = file;
    stream.destroy();
    await fs.promises.rm(dir, { recursive: true, force: true });
  };

  return new Promise<SpooledBody>((resolve, reject) => {
    let settled = false;
    let idleTimer: NodeJS.Timeout | undefined;

    const cleanUp = () => {
      clearTimeout(idleTimer);
      source.off('data', onData);
      source.off('end', onEnd);
      source.off('error', onError);
      source.off('close', onClose);
      // A request stream may still fail after this (its socket reset); unheard, that would end the process.
      source.on('error', () => {});
    };
    const fail = (error: Error) => {
      if (settled) return;
      settled = true;
      cleanUp();
      // The rest of the body is not read: the caller answers and closes the connection.
      source.pause();
      chunks = [];
      void removeFile().finally(() => reject(error));
    };
    const armIdleTimer = () => {
      clearTimeout(idleTimer);
      idleTimer = setTimeout(() => fail(new BodyIdleTimeoutError(limits.idleTimeoutMs, bytes)), limits.idleTimeoutMs);
    };

    const onData = (chunk: Buffer) => {
      armIdleTimer();
      bytes += chunk.length;
      if (bytes > limits.maxBytes) {
        fail(new UploadTooLargeError(limits.maxBytes));
        return;
      }
      hash.update(chunk);
      if (!sawLineBreak && (chunk.includes(0x0a) || chunk.includes(0x0d))) sawLineBreak = true;
      if (file === null && bytes <= memoryBytes) {
        chunks.push(chunk);
        return;
      }
      if (file === null) {
        const dir = fs.mkdtempSync(path.join(limits.spoolDir ?? os.tmpdir(), 'segrank-upload-'));
        const filePath = path.join(dir, 'body');
        const stream = fs.createWriteStream(filePath, { mode: 0o600 });
        stream.on('error', (error) => fail(error));
        file = { dir, path: filePath, stream };
        for (const earlier of chunks) stream.write(earlier);
        chunks = [];
      }
      // Disk slower than the network: stop reading until the file catches up (not idle time).
      if (!file.stream.write(chunk)) {
        source.pause();
        clearTimeout(idleTimer);
        file.stream.once('drain', () => {
          if (settled) return;
          armIdleTimer();
          source.resume();
        });
      }
    };
    const onEnd = () => {
      if (settled) return;
      settled = true;
      cleanUp();
      const sha256 = hash.digest('hex');
      if (file === null) {
        const kept = chunks;
        chunks = [];
        resolve({ bytes, sha256, sawLineBreak, open: () => Readable.from(kept), dispose: async () => {} });
        return;
      }
      const written = file;
      written.stream.end(() => {
        resolve({
          bytes,
          sha256,
          sawLineBreak,
          open: () => fs.createReadStream(written.path, { highWaterMark: FILE_READ_CHUNK_BYTES }),
          dispose: removeFile,
        });
      });
    };
    const onError = (error: Error) => {
      const code = (error as { code?: unknown }).code;
      fail(code === 'ECONNRESET' || error.message === 'aborted' ? new ClientAbortedError(bytes) : error);
    };
    // A request whose connection closes before its end emits close without end (or an error).
    const onClose = () => fail(new ClientAbortedError(bytes));

    source.on('data', onData);
    source.on('end', onEnd);
    source.on('error', onError);
    source.on('close', onClose);
    armIdleTimer();
  });
}
