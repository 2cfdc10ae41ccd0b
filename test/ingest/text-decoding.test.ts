/** Strict UTF-8 decoding names the line and byte offset of the first byte that is not UTF-8. */
import { describe, expect, it } from 'vitest';
import { MalformedBodyError } from '../../src/ingest/records.js';
import { firstInvalidUtf8, strictUtf8Decoder } from '../../src/ingest/text-decoding.js';

/** Decodes the chunks in turn, then ends, and returns the failure. */
function failureOf(chunks: Buffer[]): MalformedBodyError {
  const decoder = strictUtf8Decoder('CSV');
  try {
    for (const chunk of chunks) decoder.decode(chunk, { stream: true });
    decoder.decode();
  } catch (error) {
    if (error instanceof MalformedBodyError) return error;
    throw error;
  }
  throw new Error('the chunks decoded without a failure');
}

describe('firstInvalidUtf8', () => {
  // Byte ranges of RFC 3629 §4 (well-formed UTF-8 sequences).
  it.each([
    ['ASCII', [0x61, 0x62], 2],
    ['é as two bytes', [0xc3, 0xa9], 2],
    ['é as Latin-1', [0x61, 0xe9, 0x62], 1],
    ['an overlong slash', [0xc0, 0xaf], 0],
    ['a surrogate', [0x61, 0xed, 0xa0, 0x80], 1],
    ['a character cut off at the end', [0x61, 0xe2, 0x82], 1],
    ['a four-byte character', [0xf0, 0x9f, 0x98, 0x80], 4],
    ['above U+10FFFF', [0xf4, 0x90, 0x80, 0x80], 0],
  ])('%s', (_name, bytes, expected) => {
    expect(firstInvalidUtf8(Uint8Array.from(bytes))).toBe(expected);
  });
});

describe('StrictUtf8Decoder', () => {
  it('names the line and byte offset of a Latin-1 byte and says to re-save as UTF-8', () => {
    const failure = failureOf([Buffer.from('a,b\nCaf'), Buffer.from([0xe9]), Buffer.from(',1\n')]);
    expect(failure.line).toBe(2);
    expect(failure.message).toBe(
      'the CSV body is not valid UTF-8 text at byte offset 7 (byte 0xE9); if it was saved as Latin-1 or Windows-1252, save it again as UTF-8 and upload it again',
    );
  });

  it('places a bad byte right when a valid character is split across chunks before it', () => {
    // "x\n€" with € (E2 82 AC) split after its first byte, then 0xFF at offset 5 on line 2.
    const failure = failureOf([Buffer.from([0x78, 0x0a, 0xe2]), Buffer.from([0x82, 0xac, 0xff])]);
    expect(failure.line).toBe(2);
    expect(failure.message).toMatch(/at byte offset 5 \(byte 0xFF\)/);
  });

  it('places a character broken across chunks at its lead byte', () => {
    const failure = failureOf([Buffer.from('a\nb\n'), Buffer.from([0x63, 0xe2]), Buffer.from([0x41])]);
    expect(failure.line).toBe(3);
    expect(failure.message).toMatch(/at byte offset 5 \(byte 0xE2\)/);
  });

  it('says when the text ends inside a character', () => {
    const failure = failureOf([Buffer.from([0x61, 0x0a, 0xe2, 0x82])]);
    expect(failure.message).toMatch(/at byte offset 2 \(the text ends inside a character\)/);
  });

  it('recognises UTF-16 by its byte order mark', () => {
    const failure = failureOf([Buffer.from([0xff, 0xfe, 0x61, 0x00])]);
    expect(failure.message).toMatch(/at byte offset 0 \(byte 0xFF\); it begins with a UTF-16 byte order mark, save it again as UTF-8/);
  });
});
