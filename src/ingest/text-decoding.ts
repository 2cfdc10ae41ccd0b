/** Strict UTF-8 decoding of an upload body: text that is not UTF-8 fails the upload by name. */
import type { Readable } from 'node:stream';
import { MalformedBodyError } from './records.js';

/**
 * A strict UTF-8 decoder that, on bytes that are not UTF-8, says where: the line and the byte
 * offset of the first bad byte, with the usual cause (a spreadsheet saving as Latin-1 or
 * Windows-1252) and the fix. The position is worked out only on failure, from the bytes counted
 * so far and the last few bytes of the previous chunk, so valid uploads pay for a byte count.
 */
export class StrictUtf8Decoder {
  private readonly decoder = new TextDecoder('utf-8', { fatal: true, ignoreBOM: false });
  /** Bytes of every chunk before the current one. */
  private bytesBefore = 0;
  /** Line feeds in those bytes (0x0A never occurs inside a multi-byte character). */
  private lineFeedsBefore = 0;
  /** The last bytes of the previous chunk, where a character split across chunks begins. */
  private tail: Buffer = Buffer.alloc(0);

  constructor(private readonly format: string) {}

  decode(chunk?: Buffer, options?: { stream?: boolean }): string {
    try {
      const text = chunk === undefined ? this.decoder.decode() : this.decoder.decode(chunk, options);
      if (chunk !== undefined) this.advance(chunk);
      return text;
    } catch (error) {
      if (!(error instanceof TypeError)) throw error;
      throw this.failure(chunk ?? Buffer.alloc(0));
    }
  }

  private advance(chunk: Buffer): void {
    this.bytesBefore += chunk.length;
    for (let index = chunk.indexOf(0x0a); index !== -1; index = chunk.indexOf(0x0a, index + 1)) this.lineFeedsBefore += 1;
    this.tail = Buffer.from(chunk.subarray(Math.max(0, chunk.length - 3)));
  }

  private failure(chunk: Buffer): MalformedBodyError {
    // A character left unfinished by the previous chunk starts at a lead byte in its tail.
    let carried = this.tail.length;
    for (let index = 0; index < this.tail.length; index++) {
      const needed = sequenceLength(this.tail[index] as number);
      if (needed > 1 && index + needed > this.tail.length) {
        carried = index;
        break;
      }
    }
    const bytes = Buffer.concat([this.tail.subarray(carried), chunk]);
    const start = this.bytesBefore - (this.tail.length - carried);
    const bad = firstInvalidUtf8(bytes);
    let lineFeeds = this.lineFeedsBefore;
    for (let index = bytes.indexOf(0x0a); index !== -1 && index < bad; index = bytes.indexOf(0x0a, index + 1)) lineFeeds += 1;
    const line = lineFeeds + 1;
    const endsInside = chunk.length === 0;
    const shown = !endsInside ? ` (byte 0x${(bytes[bad] as number).toString(16).toUpperCase().padStart(2, '0')})` : ' (the text ends inside a character)';
    const first = bytes[0];
    const utf16 = start === 0 && bad === 0 && bytes.length > 1 && ((first === 0xff && bytes[1] === 0xfe) || (first === 0xfe && bytes[1] === 0xff));
    const cause = utf16 ? 'it begins with a UTF-16 byte order mark' : 'if it was saved as Latin-1 or Windows-1252';
    return new MalformedBodyError(
      `the ${this.format} body is not valid UTF-8 text at byte offset ${start + bad}${shown}; ${cause}, save it again as UTF-8 and upload it again`,
      line,
    );
  }
}

/** A strict UTF-8 decoder for an upload of the given format ("CSV", "JSON", "NDJSON"). */
export function strictUtf8Decoder(format: string): StrictUtf8Decoder {
  return new StrictUtf8Decoder(format);
}

/** Bytes of the character a lead byte begins; 1 for ASCII and for bytes that begin none. */
function sequenceLength(lead: number): number {
  if (lead >= 0xc2 && lead <= 0xdf) return 2;
  if (lead >= 0xe0 && lead <= 0xef) return 3;
  if (lead >= 0xf0 && lead <= 0xf4) return 4;
  return 1;
}

/**
 * The index of the first byte that does not begin a valid UTF-8 character (RFC 3629: no
 * overlong forms, no surrogates, nothing above U+10FFFF), or of a character cut off by the end;
 * `bytes.length` when all of it is valid.
 */
export function firstInvalidUtf8(bytes: Uint8Array): number {
  let index = 0;
  while (index < bytes.length) {
    const lead = bytes[index] as number;
    if (lead < 0x80) {
      index += 1;
      continue;
    }
    const length = sequenceLength(lead);
    if (length === 1) return index;
    // The second byte's range narrows for E0 (no overlong), ED (no surrogates), F0 and F4.
    const low = lead === 0xe0 ? 0xa0 : lead === 0xf0 ? 0x90 : 0x80;
    const high = lead === 0xed ? 0x9f : lead === 0xf4 ? 0x8f : 0xbf;
    if (index + length > bytes.length) return index;
    const second = bytes[index + 1] as number;
    if (second < low || second > high) return index;
    for (let offset = 2; offset < length; offset++) {
      const next = bytes[index + offset] as number;
      if (next < 0x80 || next > 0xbf) return index;
    }
    index += length;
  }
  return index;
}

/** Sees the decoded text as it passes, and hears when it has ended. */
export interface TextObserver {
  read(text: string): void;
  finish(): void;
}

/** Decodes strictly: text that is not UTF-8 (UTF-16, binary) is refused rather than turned into replacement characters. */
export async function* decodeUtf8(body: Readable, format: string, observer: TextObserver): AsyncGenerator<string> {
  const decoder = strictUtf8Decoder(format);
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
