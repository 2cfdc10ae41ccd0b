import { gzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { SegmentTableCache, entityTag, type RenderedTable } from '../../src/present/index.js';

const table = (snapshotId: string): RenderedTable => ({
  snapshotId,
  body: `body of ${snapshotId}`,
  bytes: Buffer.from(`body of ${snapshotId}`),
  entityTag: entityTag(`body of ${snapshotId}`),
  gzipped: gzipSync(`body of ${snapshotId}`),
  gzippedEntityTag: `"gzip of ${snapshotId}"`,
});

describe('SegmentTableCache', () => {
  it('returns a stored table for the same report, snapshot and format only', () => {
    const cache = new SegmentTableCache(4);
    cache.set('r1', 'csv', table('s1'));
    expect(cache.get('r1', 's1', 'csv')?.body).toBe('body of s1');
    expect(cache.get('r1', 's1', 'json')).toBeUndefined();
    expect(cache.get('r2', 's1', 'csv')).toBeUndefined();
    expect(cache.get('r1', 's2', 'csv')).toBeUndefined();
  });

  it('drops the least recently used table when full', () => {
    const cache = new SegmentTableCache(2);
    cache.set('r', 'csv', table('a'));
    cache.set('r', 'csv', table('b'));
    expect(cache.get('r', 'a', 'csv')).toBeDefined(); // a is now the most recent
    cache.set('r', 'csv', table('c'));
    expect(cache.size).toBe(2);
    expect(cache.get('r', 'b', 'csv')).toBeUndefined();
    expect(cache.get('r', 'a', 'csv')).toBeDefined();
    expect(cache.get('r', 'c', 'csv')).toBeDefined();
  });

  it('gives different bodies different entity tags', () => {
    expect(entityTag('x')).not.toBe(entityTag('y'));
    expect(entityTag('x')).toMatch(/^"[A-Za-z0-9_-]{32}"$/);
  });
});
