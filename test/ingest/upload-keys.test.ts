import { describe, expect, it } from 'vitest';
import { UploadKeyRegister } from '../../src/ingest/upload-keys.js';

describe('UploadKeyRegister', () => {
  it('answers null for a new key and the first line for a repeated one', () => {
    const register = new UploadKeyRegister();
    expect(register.firstSeenOn('C1', 2)).toBeNull();
    expect(register.firstSeenOn('C2', 3)).toBeNull();
    expect(register.firstSeenOn('C1', 9)).toBe(2);
    expect(register.firstSeenOn('C1', 12)).toBe(2);
    expect(register.size).toBe(2);
  });

  it('tells apart keys that differ only in length, case or a character above U+00FF', () => {
    const register = new UploadKeyRegister();
    const keys = ['a', 'aa', 'A', '', 'é', 'e\u0301', 'Ā', 'ĀĀ', '中文', '中', '😀', 'x😀', '\u0100a', 'a\u0100'];
    keys.forEach((key, index) => expect(register.firstSeenOn(key, index + 1)).toBeNull());
    keys.forEach((key, index) => expect(register.firstSeenOn(key, 100 + index)).toBe(index + 1));
  });

  it('keeps every key and its line through the growth of its tables', () => {
    const register = new UploadKeyRegister();
    const count = 300_000;
    const keyOf = (index: number) => (index % 7 === 0 ? `客户-${index}` : `CUST-${index}`);
    const notNew: number[] = [];
    for (let index = 0; index < count; index++) if (register.firstSeenOn(keyOf(index), index + 2) !== null) notNew.push(index);
    expect(notNew).toEqual([]);
    const wrongLines: number[] = [];
    for (let index = 0; index < count; index++) if (register.firstSeenOn(keyOf(index), 0) !== index + 2) wrongLines.push(index);
    expect(wrongLines).toEqual([]);
    expect(register.firstSeenOn(`CUST-${count}`, 1)).toBeNull();
    expect(register.size).toBe(count + 1);
  });

  it('forgets every key on clear', () => {
    const register = new UploadKeyRegister();
    register.firstSeenOn('C1', 2);
    register.clear();
    expect(register.size).toBe(0);
    expect(register.firstSeenOn('C1', 5)).toBeNull();
  });
});
