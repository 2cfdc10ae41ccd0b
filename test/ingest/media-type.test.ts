import { describe, expect, it } from 'vitest';
import { formatFromContentType, parseContentType } from '../../src/ingest/media-type.js';

describe('parseContentType', () => {
  it('reads the media type without parameters, lower-cased', () => {
    expect(parseContentType(' Application/JSON ; charset=UTF-8')).toEqual({ mediaType: 'application/json', charset: 'utf-8' });
    expect(parseContentType('text/csv')).toEqual({ mediaType: 'text/csv', charset: null });
  });

  it('reads a quoted charset and one that is not the first parameter', () => {
    expect(parseContentType('text/csv; header=present; Charset="ISO-8859-1"')).toEqual({ mediaType: 'text/csv', charset: 'iso-8859-1' });
  });

  it('gives an empty media type when there is no header', () => {
    expect(parseContentType(undefined)).toEqual({ mediaType: '', charset: null });
    expect(parseContentType('')).toEqual({ mediaType: '', charset: null });
  });
});

describe('formatFromContentType', () => {
  it('maps the three upload media types and ignores parameters and case', () => {
    expect(formatFromContentType('text/csv; charset=utf-8')).toBe('csv');
    expect(formatFromContentType('Application/JSON')).toBe('json');
    expect(formatFromContentType('application/x-ndjson')).toBe('ndjson');
  });

  it('returns null for any other media type', () => {
    expect(formatFromContentType('text/plain')).toBeNull();
    expect(formatFromContentType(undefined)).toBeNull();
  });
});
