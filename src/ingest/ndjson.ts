/** NDJSON (one JSON object per line) → records. */
import type { Readable } from 'node:stream';
import { objectRecord, parseJsonText } from './json-row.js';
import { MalformedBodyError, type ParsedRecord, type ParseLimits } from './records.js';
import { strictUtf8Decoder, toMalformed } from './text-decoding.js';

export async function* parseNdjsonRecords(body: Readable, limits: ParseLimits): AsyncGenerator<ParsedRecord> {
  let row = 0;
  for await (const { text, line } of splitLines(body, limits)) {
    if (text.trim() === '') continue;
    row += 1;
    yield objectRecord(parseJsonText(text, line), text, row, line);
  }
}

async function* splitLines(body: Readable, limits: ParseLimits): AsyncGenerator<{ text: string; line: number }> {
  const decoder = strictUtf8Decoder('NDJSON');
  let pending = '';
  let line = 1;
  try {
    for await (const chunk of body as AsyncIterable<Buffer>) {
      pending += decoder.decode(chunk, { stream: true });
      let newline = pending.indexOf('\n');
      while (newline !== -1) {
        // Checked on whole lines too, not only on the unfinished rest, so the limit does not
        // depend on how the body happens to be split into chunks.
        if (newline > limits.maxRecordChars) throw new MalformedBodyError(`line is longer than ${limits.maxRecordChars} characters`, line);
        yield { text: pending.slice(0, newline).replace(/\r$/, ''), line };
        line += 1;
        pending = pending.slice(newline + 1);
        newline = pending.indexOf('\n');
      }
      if (pending.length > limits.maxRecordChars) {
        throw new MalformedBodyError(`line is longer than ${limits.maxRecordChars} characters`, line);
      }
    }
    pending += decoder.decode();
  } catch (error) {
    throw toMalformed(error, 'NDJSON', line);
  }
  if (pending !== '') yield { text: pending.replace(/\r$/, ''), line };
}
