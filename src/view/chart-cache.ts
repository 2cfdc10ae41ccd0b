/**
 * The charts of recently shown report pages. Drawing them takes most of a page's time, and a
 * snapshot never changes, so a page shown again reuses its drawing (even one still in progress).
 */
import { LRUCache } from 'lru-cache';
import type { Snapshot } from '../report/shapes/index.js';
import type { ChartFigure } from './figure.js';
import { reportCharts } from './page.js';

/** Pages whose charts are kept. */
const CACHED_CHART_SETS = 16;

export interface ChartCache {
  /** The charts of `shown` with its trend over `history`, drawn once and then kept. */
  chartsFor(shown: Snapshot, history: readonly Snapshot[]): Promise<ChartFigure[]>;
  clear(): void;
}

export function createChartCache(capacity = CACHED_CHART_SETS): ChartCache {
  // Keyed by the shown snapshot and the snapshots of its trend.
  const drawings = new LRUCache<string, Promise<ChartFigure[]>>({ max: capacity });
  return {
    chartsFor(shown, history) {
      // An erasure may redact stored snapshots: the time it did is part of each snapshot's key.
      const version = (snapshot: Snapshot) => `${snapshot.snapshot_id}@${snapshot.disclosure?.redacted_at ?? ''}`;
      const key = [shown.report_id, version(shown), ...history.map(version)].join('|');
      let charts = drawings.get(key);
      if (charts === undefined) {
        const drawing = reportCharts(shown, history);
        drawings.set(key, drawing);
        // A failed drawing is not kept, so the next request tries again.
        drawing.catch(() => {
          if (drawings.peek(key) === drawing) drawings.delete(key);
        });
        charts = drawing;
      }
      return charts;
    },
    clear: () => drawings.clear(),
  };
}
