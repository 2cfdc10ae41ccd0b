/** A JSON array of row objects → records, without holding the array whole in memory. */
import type { Readable } from 'node:stream';
import { objectRecord, parseJsonText } from './json-row.js';
import { MalformedBodyError, type ParsedRecord, type ParseLimits } from './records.js';
import { strictUtf8Decoder, toMalformed } from './text-decoding.js';

export async function* parseJsonArrayRecords(body: Readable, limits: ParseLimits): AsyncGenerator<ParsedRecord> {
  let row = 0;
  for await (const { text, line } of splitJsonArray(body, limits)) {
    row += 1;
    yield objectRecord(parseJsonText(text, line), text, row, line);
  }
}

/**
 * Splits a top-level JSON array into the text of its elements by tracking string and nesting
 * state, so each element can be handed to JSON.parse on its own. Rows must be flat objects;
 * nesting deeper than that is refused as soon as it is seen rather than after buffering it.
 */
async function* splitJsonArray(body: Readable, limits: ParseLimits): AsyncGenerator<{ text: string; line: number }> {
  const maxDepth = 3; // array → row object → one level inside a value, which row validation then rejects
  const decoder = strictUtf8Decoder('JSON');
  let depth = 0;
  let inString = false;
  let escaped = false;
  let sawArray = false;
  let finished = false;
  // Between rows the array allows exactly one comma: none before the first row or before ].
  let expecting: 'first row or ]' | 'row' | 'comma or ]' = 'first row or ]';
  let element = '';
  let elementStart = -1;
  let elementLine = 1;
  let line = 1;
  const fail = (message: string): never => {
    throw new MalformedBodyError(message, line);
  };
  try {
    for await (const chunk of body as AsyncIterable<Buffer>) {
      const text = decoder.decode(chunk, { stream: true });
      for (let index = 0; index < text.length; index++) {
        const char = text[index] as string;
        if (char === '\n') line += 1;
        if (inString) {
          if (escaped) escaped = false;
          else if (char === '\\') escaped = true;
          else if (char === '"') inString = false;
          continue;
        }
        if (char === ' ' || char === '\t' || char === '\n' || char === '\r') continue;
        if (finished) fail('unexpected content after the closing ] of the array');
        if (!sawArray) {
          if (char !== '[') fail('a JSON upload must be an array of row objects, starting with [');
          sawArray = true;
          depth = 1;
          continue;
        }
        if (depth === 1) {
          if (char === ',') {
            if (expecting !== 'comma or ]') fail('unexpected comma in the array');
            expecting = 'row';
            continue;
          }
          if (char === ']') {
            if (expecting === 'row') fail('unexpected comma before the closing ] of the array');
            depth = 0;
            finished = true;
            continue;
          }
          if (char !== '{') fail('each element of the array must be a row object in braces');
          if (expecting === 'comma or ]') fail('rows of the array must be separated by commas');
          elementStart = index;
          elementLine = line;
          element = '';
        }
        if (char === '"') inString = true;
        else if (char === '{' || char === '[') {
          depth += 1;
          if (depth > maxDepth) fail('rows must be flat objects; nesting this deep is not accepted');
        } else if (char === '}' || char === ']') {
          depth -= 1;
        }
        if (depth === 1 && elementStart !== -1) {
          const completed = element + text.slice(elementStart, index + 1);
          // A row that arrived within one chunk is held to the same limit as one spread over many.
          if (completed.length > limits.maxRecordChars) fail(`a row is longer than ${limits.maxRecordChars} characters`);
          element = '';
          elementStart = -1;
          expecting = 'comma or ]';
          yield { text: completed, line: elementLine };
        }
      }
      if (elementStart !== -1) {
        element += text.slice(elementStart);
        elementStart = 0;
        if (element.length > limits.maxRecordChars) fail(`a row is longer than ${limits.maxRecordChars} characters`);
      }
    }
    decoder.decode();
  } catch (error) {
    throw toMalformed(error, 'JSON', line);
  }
  if (!sawArray) throw new MalformedBodyError('the upload is empty: expected a JSON array of row objects', 1);
  if (!finished) throw new MalformedBodyError('the JSON array is not closed (missing ])', line);
}
