/**
 * The holdout figures of a campaign report's segments: the holdout cells rolled up like the
 * contacted ones, each segment's two arms and its rest's analysed, the uplift p-values adjusted
 * over their own family, and the advice read at the confidence that adjustment implies.
 * Pure: the caller passes the contacted segments already built.
 */
import { adjustPValues } from '../../stats/index.js';
import { cellStats, rollUp, subtractGroup, type CellAggregate, type GroupStats, type Shifts } from '../../segments/index.js';
import { adviceInterval, adviceOf, analyzeHoldout, segmentLabel, type HoldoutArms } from '../analysis/index.js';
import type { ReportDefinition } from '../definition/index.js';
import type { SnapshotSegment } from '../shapes/index.js';

/** The holdout arm of a campaign population, as the cell query returns it. */
export interface HoldoutCells {
  cells: CellAggregate[];
  shifts: Shifts;
}

interface ContactedSegment {
  stats: GroupStats;
  segment: SnapshotSegment;
}

/**
 * Fills the holdout fields of every segment in place (and adds the reasons for missing ones to
 * its notes). `minN`: both arms of a segment need this many customers (the report's min_n or
 * the publication threshold, whichever is larger).
 */
export function addHoldoutFigures(
  entries: readonly ContactedSegment[],
  contactedTotal: GroupStats,
  holdout: HoldoutCells,
  definition: ReportDefinition,
  minN: number,
): void {
  const cells = holdout.cells.map((cell) => ({ labels: cell.labels, stats: cellStats(cell, holdout.shifts) }));
  const { total: holdoutTotal, segments } = rollUp(cells, definition.dimensions, definition.crosses);
  const emptyArm = subtractGroup(holdoutTotal, holdoutTotal);
  const bySegment = new Map(segments.map((group) => [segmentLabel(group.dimensions, group.labels), group.stats]));
  const settings = { confidence: definition.confidence, minN, economics: definition.economics };
  const armsOf = ({ stats, segment }: ContactedSegment): HoldoutArms => {
    const held = bySegment.get(segment.segment) ?? emptyArm;
    return { segment: { contacted: stats, holdout: held }, rest: { contacted: subtractGroup(contactedTotal, stats), holdout: subtractGroup(holdoutTotal, held) } };
  };
  const arms = entries.map(armsOf);
  entries.forEach(({ segment }, index) => {
    const { figures, notes } = analyzeHoldout(arms[index] as HoldoutArms, settings);
    // A holdout arm too small to publish shows its size only.
    if (figures.holdout_n < minN) {
      figures.holdout_conversions = null;
      figures.holdout_rate = null;
    }
    Object.assign(segment, figures);
    segment.notes.push(...notes);
  });
  const adjusted = adjustPValues(
    entries.map(({ segment }) => segment.uplift_p_value),
    definition.adjustment,
  );
  const familySize = adjusted.filter((value) => value !== null).length;
  const alpha = 1 - definition.confidence;
  // The advice is read on an interval as wide as the family asks: Bonferroni's α/m, as the detectable difference does.
  const adviceConfidence = definition.adjustment === 'none' || familySize <= 1 ? definition.confidence : 1 - alpha / familySize;
  entries.forEach(({ segment }, index) => {
    segment.uplift_p_adjusted = adjusted[index] ?? null;
    segment.advice = adviceOf(adviceInterval(arms[index] as HoldoutArms, settings, adviceConfidence));
  });
}
