/**
 * What a customer upload's receipt notes about its labels: the extra attribute columns it
 * stored, and labels that differ from another stored label of the same dimension only in case
 * or spacing (`Web Shop`, `web  shop`). Those become separate segments in every report, which
 * is seldom meant, so the receipt says so; the rows are stored as sent.
 */
import type { Executor } from '../db/executor.js';
import * as repository from './repository.js';

/** Labels remembered per dimension; beyond this the upload's further labels are not compared. */
const MAX_LABELS_PER_DIMENSION = 5_000;
/** Warnings listed on one receipt; a longer list would bury the first ones. */
const MAX_WARNINGS = 20;

/** A label as people read it: case and runs of spacing do not tell two labels apart. */
function foldLabel(label: string): string {
  return label.normalize('NFC').toLowerCase().replace(/\s+/g, ' ').trim();
}

export class LabelNotes {
  private readonly seen = new Map<string, Set<string>>();
  private readonly attributes = new Set<string>();

  /** Notes the labels of one accepted customer row. */
  see(labels: Iterable<readonly [dimension: string, label: string | null]>, builtIn: readonly string[]): void {
    for (const [dimension, label] of labels) {
      if (!builtIn.includes(dimension)) this.attributes.add(dimension);
      if (label === null) continue;
      let labels = this.seen.get(dimension);
      if (labels === undefined) this.seen.set(dimension, (labels = new Set()));
      if (labels.size < MAX_LABELS_PER_DIMENSION) labels.add(label);
    }
  }

  /** The extra attribute columns noted, in code-unit order. */
  extraAttributes(): string[] {
    return [...this.attributes].sort();
  }

  /**
   * Labels of this upload that differ only in case or spacing from another label of the same
   * dimension, stored earlier or in this upload. Read inside the upload's transaction, so the
   * stored labels include this upload's own.
   */
  async warnings(db: Executor): Promise<string[]> {
    const warnings: string[] = [];
    for (const dimension of [...this.seen.keys()].sort()) {
      const uploaded = this.seen.get(dimension) as Set<string>;
      const spellings = new Map<string, Set<string>>();
      const stored = await repository.findStoredLabels(db, dimension, MAX_LABELS_PER_DIMENSION * 2);
      for (const label of [...stored, ...uploaded]) {
        const folded = foldLabel(label);
        let group = spellings.get(folded);
        if (group === undefined) spellings.set(folded, (group = new Set()));
        group.add(label);
      }
      for (const group of spellings.values()) {
        if (group.size < 2 || ![...group].some((label) => uploaded.has(label))) continue;
        const shown = [...group].sort().map((label) => `"${label}"`);
        warnings.push(`${dimension}: ${shown.join(' and ')} differ only in case or spacing and are reported as separate segments; send one spelling to merge them`);
        if (warnings.length >= MAX_WARNINGS) return warnings;
      }
    }
    return warnings;
  }
}
