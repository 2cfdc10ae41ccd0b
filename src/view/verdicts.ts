/**
 * How each verdict looks: a word, a shape and a colour, so it reads in greyscale and for
 * colour-blind readers (the shape and the word carry it; the colour only repeats it). Blue and
 * vermilion are from the Okabe–Ito palette (Okabe & Ito 2008, "Color Universal Design"; common
 * practice for colour-blind-safe charts); its orange is darkened here so a hollow mark keeps
 * its contrast on white, and the rest are greys.
 */
import type { Verdict } from '../report/shapes/index.js';

export interface VerdictStyle {
  /** the verdict in words, as the page and the charts print it */
  label: string;
  /** a Vega symbol shape */
  shape: 'triangle-up' | 'triangle-down' | 'circle' | 'diamond' | 'square';
  /** the same shape as a text character, for the table and the legend in text */
  symbol: string;
  colour: string;
  /** filled shapes for the clear verdicts, hollow ones for the rest */
  filled: boolean;
}

export const VERDICT_STYLES: Record<Verdict, VerdictStyle> = {
  better: { label: 'better than the rest', shape: 'triangle-up', symbol: '▲', colour: '#0072B2', filled: true },
  worse: { label: 'worse than the rest', shape: 'triangle-down', symbol: '▼', colour: '#D55E00', filled: true },
  equivalent: { label: 'equivalent to the rest (within the margin)', shape: 'circle', symbol: '○', colour: '#4D4D4D', filled: false },
  inconclusive: { label: 'inconclusive', shape: 'diamond', symbol: '◇', colour: '#9A6A00', filled: false },
  too_small: { label: 'too small to test', shape: 'square', symbol: '□', colour: '#777777', filled: false },
};

/** Verdicts of tested segments, in the order legends list them. */
export const TESTED_VERDICTS: readonly Verdict[] = ['better', 'worse', 'equivalent', 'inconclusive'];
