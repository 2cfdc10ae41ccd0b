import { describe, expect, test } from 'vitest';
import { plainNumber, textCell } from '../../src/present/index.js';

describe('CSV cells', () => {
  test('ordinary numbers are written as JavaScript writes them', () => {
    expect(plainNumber(0.141)).toBe('0.141');
    expect(plainNumber(-0.0123)).toBe('-0.0123');
    expect(plainNumber(12345)).toBe('12345');
    expect(plainNumber(-0)).toBe('0');
  });

  test('very small numbers are written without an exponent and read back identically', () => {
    for (const value of [3.2e-15, 1e-7, -4.56e-9, 1.2345678901234e-300]) {
      const text = plainNumber(value);
      expect(text).not.toMatch(/e/i);
      expect(Number(text)).toBe(value);
    }
    expect(plainNumber(3.2e-15)).toBe('0.0000000000000032');
  });

  test('very large numbers are written without an exponent and read back identically', () => {
    expect(plainNumber(1.5e22)).toBe('15000000000000000000000');
    expect(Number(plainNumber(1.2345e25))).toBe(1.2345e25);
  });

  test('a non-finite number is refused', () => {
    expect(() => plainNumber(Number.NaN)).toThrow();
    expect(() => plainNumber(Number.POSITIVE_INFINITY)).toThrow();
  });

  test.each(['=1+2', '+SUM(A1)', '-3+4', '@cmd', '\tx', '\rx'])('text starting a formula (%j) gets a leading quote', (text) => {
    expect(textCell(text).replace(/^"|"$/g, '').startsWith(`'${text.charAt(0)}`)).toBe(true);
  });

  test('commas, quotes and line breaks are quoted as RFC 4180 asks', () => {
    expect(textCell('North, coast')).toBe('"North, coast"');
    expect(textCell('say "hi"')).toBe('"say ""hi"""');
    expect(textCell('two\nlines')).toBe('"two\nlines"');
    expect(textCell('plain')).toBe('plain');
  });
});
