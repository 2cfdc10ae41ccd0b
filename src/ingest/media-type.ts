/**
 * The media type and charset of a Content-Type header, read one way for every route, and the
 * upload format a media type names.
 */

export interface ContentType {
  /** The media type without parameters, lower-cased; '' when the header is absent or empty. */
  mediaType: string;
  /** The `charset` parameter, lower-cased and unquoted; null when there is none. */
  charset: string | null;
}

/** The media type and charset of a Content-Type header. */
export function parseContentType(header: string | undefined): ContentType {
  const text = header ?? '';
  const match = /;\s*charset\s*=\s*("?)([^";\s]*)\1/i.exec(text);
  return { mediaType: (text.split(';')[0] ?? '').trim().toLowerCase(), charset: match ? (match[2] ?? '').toLowerCase() : null };
}

export type UploadFormat = 'csv' | 'json' | 'ndjson';

/** The upload format a Content-Type header names; null for any other media type. */
export function formatFromContentType(contentType: string | undefined): UploadFormat | null {
  switch (parseContentType(contentType).mediaType) {
    case 'text/csv':
      return 'csv';
    case 'application/json':
      return 'json';
    case 'application/x-ndjson':
    case 'application/ndjson':
    case 'application/jsonl':
      return 'ndjson';
    default:
      return null;
  }
}
