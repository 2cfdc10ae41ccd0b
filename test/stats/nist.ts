/**
 * Loader for the NIST StRD univariate datasets kept in test/fixtures/nist (where they come from
 * and how they were checked: SOURCES.md there), plus the exact-arithmetic and scoring functions
 * the accuracy tests need.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const nistDirectory = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../fixtures/nist');

interface CertifiedEntry {
  name: string;
  data_lines: [number, number];
  n: number;
  certified_text: { mean: string; sd: string };
  certified: { mean: number; sd: number };
}

export interface NistDataset {
  readonly name: string;
  /** the data lines exactly as printed in the file */
  readonly texts: string[];
  /** the same values read as binary64 numbers */
  readonly values: number[];
  readonly certifiedMean: number;
  readonly certifiedSd: number;
  readonly certifiedMeanText: string;
  readonly certifiedSdText: string;
}

export function loadNistDatasets(): NistDataset[] {
  const certified = JSON.parse(readFileSync(path.join(nistDirectory, 'certified-values.json'), 'utf8')) as {
    datasets: CertifiedEntry[];
  };
  return certified.datasets.map((entry) => {
    const lines = readFileSync(path.join(nistDirectory, 'data', `${entry.name}.dat`), 'utf8').split(/\r?\n/);
    const [firstLine, lastLine] = entry.data_lines;
    const texts = lines.slice(firstLine - 1, lastLine).map((line) => line.trim());
    if (texts.length !== entry.n || texts.some((text) => !/^-?\d+(\.\d+)?$/.test(text))) {
      throw new Error(`${entry.name}: expected ${entry.n} numeric data lines at ${firstLine}–${lastLine}`);
    }
    return {
      name: entry.name,
      texts,
      values: texts.map(Number),
      certifiedMean: entry.certified.mean,
      certifiedSd: entry.certified.sd,
      certifiedMeanText: entry.certified_text.mean,
      certifiedSdText: entry.certified_text.sd,
    };
  });
}

/**
 * NIST's log relative error, −log10(|estimate − certified|/|certified|), capped at 15: the
 * number of correct significant digits.
 */
export function logRelativeError(estimate: number, certified: number): number {
  if (estimate === certified) return 15;
  return Math.min(15, -Math.log10(Math.abs(estimate - certified) / Math.abs(certified)));
}

function parseDecimal(text: string): { digits: bigint; scale: number } {
  const [whole = '', fraction = ''] = text.split('.');
  return { digits: BigInt(whole + fraction), scale: fraction.length };
}

/**
 * The values shifted by an integer c in exact decimal arithmetic, then read as binary64:
 * v − c with c the integer part of the first value. This is what a shifted sum in the
 * database does when the column holds exact decimals; it keeps digits that reading
 * 10000000.2 directly as binary64 loses.
 */
export function decimalShifted(texts: ReadonlyArray<string>): { shift: number; shifted: number[] } {
  const parsed = texts.map(parseDecimal);
  const scale = Math.max(...parsed.map((entry) => entry.scale));
  const aligned = parsed.map((entry) => entry.digits * 10n ** BigInt(scale - entry.scale));
  const power = 10n ** BigInt(scale);
  const shiftUnits = ((aligned[0] as bigint) / power) * power;
  return {
    shift: Number(shiftUnits / power),
    shifted: aligned.map((units) => Number(units - shiftUnits) / 10 ** scale),
  };
}

function divideToNumber(numerator: bigint, denominator: bigint): number {
  const digits = 10n ** 40n;
  return Number((numerator * digits) / denominator) / 1e40;
}

/**
 * Exact mean and sample standard deviation of binary64 values, in integer arithmetic: each
 * value times 2^k is an integer for a common k, so the sums are exact BigInts. This is the
 * best any binary64 algorithm could return for these inputs.
 */
export function exactStatisticsOfDoubles(values: ReadonlyArray<number>): { mean: number; sd: number } {
  let exponent = 0;
  while (!values.every((value) => Number.isInteger(value * 2 ** exponent))) exponent += 1;
  const scaled = values.map((value) => BigInt(value * 2 ** exponent));
  const n = BigInt(values.length);
  let sum = 0n;
  let sumOfSquares = 0n;
  for (const value of scaled) {
    sum += value;
    sumOfSquares += value * value;
  }
  const scale = 2n ** BigInt(exponent);
  const mean = divideToNumber(sum, n * scale);
  const variance = divideToNumber(n * sumOfSquares - sum * sum, n * (n - 1n) * scale * scale);
  return { mean, sd: Math.sqrt(variance) };
}
