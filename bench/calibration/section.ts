/** What a calibration section is: a named simulation that measures some rules and says what it found. */
export interface CalibrationOptions {
  /** simulated reports per scenario */
  replicates: number;
  /** the seed of the first replicate; replicate i uses seed + i */
  seed: number;
}

/** One measured figure of one rule, with the target it must meet (if any). */
export interface CalibrationFigure {
  rule: string;
  /** the measured figure, e.g. a proportion */
  value: number | null;
  /** how the figure is shown, e.g. "4.1 % (12 of 290)" */
  shown: string;
  /** the target in words, e.g. "≤ 10 %"; absent for figures given for information */
  target?: string;
  /** whether the target is met; absent when there is no target */
  met?: boolean;
}

export interface SectionResult {
  figures: CalibrationFigure[];
  /** the scenarios in words, for the reader of CALIBRATION.md */
  notes: string[];
}

export interface CalibrationSection {
  name: string;
  run(options: CalibrationOptions): SectionResult;
}

/** A proportion shown with its counts. */
function shownShare(part: number, whole: number): string {
  return whole === 0 ? 'no cases' : `${((100 * part) / whole).toFixed(1)} % (${part} of ${whole})`;
}

/** A figure with an upper target on a proportion. */
export function atMost(rule: string, part: number, whole: number, limit: number): CalibrationFigure {
  const value = whole === 0 ? null : part / whole;
  return { rule, value, shown: shownShare(part, whole), target: `≤ ${(100 * limit).toFixed(0)} %`, met: value === null || value <= limit };
}

/** A figure with a lower target on a proportion. */
export function atLeast(rule: string, part: number, whole: number, limit: number): CalibrationFigure {
  const value = whole === 0 ? null : part / whole;
  return { rule, value, shown: shownShare(part, whole), target: `≥ ${(100 * limit).toFixed(0)} %`, met: value !== null && value >= limit };
}

/** A figure given for information. */
export function information(rule: string, part: number, whole: number): CalibrationFigure {
  return { rule, value: whole === 0 ? null : part / whole, shown: shownShare(part, whole) };
}
