/**
 * Removes API keys from text that leaves the key table: request URLs in log lines and problem
 * details. A client may put a key where it does not belong (`?api_key=sgr_…`, a path segment);
 * the request is refused, but the text around it is still logged and echoed, so every token
 * that starts like a key is replaced, its id too, and whether written plainly or URL-encoded.
 */

/** `sgr_` (or `sgr%5F`) and everything after it that a key or its URL encoding can hold. */
const KEY_TOKEN = /sgr(?:_|%5f)[A-Za-z0-9_%-]*/gi;

const REDACTED_KEY = 'sgr_[redacted]';

/** The text with every key-like token replaced by `sgr_[redacted]`. */
export function redactKeys(text: string): string {
  return text.replace(KEY_TOKEN, REDACTED_KEY);
}
