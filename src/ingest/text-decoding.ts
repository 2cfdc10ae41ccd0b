/** Strict UTF-8 decoding of an upload body: text that is not UTF-8 fails the upload by name. */
import type { Readable } from 'node:stream';
import { MalformedBodyError } from './records.js';

/** A decoder that throws on bytes that are not UTF-8 rather than turning them into replacement characters. */
export function strictUtf8Decoder() {
  return new TextDecoder('utf-8', { fatal: true, ignoreBOM: false });
}

/** Sees the decoded text as it passes, and hears when it has ended. */
export interface TextObserver {
  read(text: string): void;
  finish(): void;
}

/** Decodes strictly: text that is not UTF-8 (UTF-16, binary) is refused rather than turned into replacement characters. */
export async function* decodeUtf8(body: Readable, format: string, observer: TextObserver): AsyncGenerator<string> {
  const decoder = strictUtf8Decoder();
  try {
    for await (const chunk of body as AsyncIterable<Buffer>) {
      const text = decoder.decode(chunk, { stream: true });
      if (text.includes('\u0000')) throw new MalformedBodyError(`the ${format} body contains NUL bytes; is it binary or UTF-16?`, null);
      if (text !== '') {
        observer.read(text);
        yield text;
      }
    }
    const rest = decoder.decode();
    if (rest !== '') {
      observer.read(rest);
      yield rest;
    }
    observer.finish();
  } catch (error) {
    throw toMalformed(error, format);
  }
}

/** A failure while reading a body as the error the upload reports: a decoding failure becomes a malformed body. */
export function toMalformed(error: unknown, format: string, line: number | null = null): Error {
  if (error instanceof MalformedBodyError) return error;
  if (error instanceof TypeError && /decode|encoded/i.test(error.message)) {
    return new MalformedBodyError(`the ${format} body is not valid UTF-8 text`, line);
  }
  return error instanceof Error ? error : new Error(String(error));
}
