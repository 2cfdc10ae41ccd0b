/**
 * Calibration of the change since the previous snapshot (campaign reports): a refresh with
 * no new contacts must report no change at all, and new contacts drawn from the same rates
 * as the earlier ones must rarely be reported as a change after adjustment.
 */
import type { CellAggregate } from '../../src/segments/index.js';
import { buildSnapshot } from '../../src/report/snapshot/index.js';
import { seededRandom } from './random.js';
import { atMost, information, type CalibrationFigure, type CalibrationSection } from './section.js';
import { drawCells, simulationDefinition, snapshotInputOf, type Scenario } from './simulate.js';

const SCENARIO: Scenario = {
  dimensions: [
    { name: 'region', labels: ['Ashgrove', 'Brindle', 'Copperfield', 'Dunmore'] },
    { name: 'channel', labels: ['web', 'phone', 'store'] },
  ],
  units: 3000,
  rateOf: (labels) => (labels[0] === 'Ashgrove' ? 0.14 : 0.1),
};

/** Cells of two batches of contacts together, as the database holds them after the second upload. */
function combined(first: CellAggregate[], second: CellAggregate[]): CellAggregate[] {
  const byKey = new Map(first.map((cell) => [JSON.stringify(cell.labels), structuredClone(cell)]));
  for (const cell of second) {
    const existing = byKey.get(JSON.stringify(cell.labels));
    if (!existing) {
      byKey.set(JSON.stringify(cell.labels), structuredClone(cell));
      continue;
    }
    existing.n += cell.n;
    existing.conversions += cell.conversions;
    for (const key of ['unitValue', 'convertedValue'] as const) {
      existing[key] = { n: existing[key].n + cell[key].n, sum: existing[key].sum + cell[key].sum, squares: existing[key].squares + cell[key].squares };
    }
  }
  return [...byKey.values()];
}

export const changeSection: CalibrationSection = {
  name: 'Change since the previous snapshot',
  run(options) {
    const definition = simulationDefinition(['region', 'channel'], { crosses: [['region', 'channel']] });
    let refreshChanges = 0;
    let refreshSegments = 0;
    let reportsWithChange = 0;
    let changesShown = 0;
    for (let replicate = 0; replicate < options.replicates; replicate += 1) {
      const random = seededRandom(options.seed + 40_000 + replicate);
      const firstDraw = drawCells(random, SCENARIO);
      const first = buildSnapshot(snapshotInputOf(firstDraw, definition, 1));
      // A refresh with nothing new.
      const again = buildSnapshot(snapshotInputOf(firstDraw, definition, 2, first));
      refreshSegments += again.segments.length;
      refreshChanges += again.segments.filter((segment) => segment.change !== null).length;
      // New contacts from the same rates: any change found is false.
      const secondDraw = drawCells(random, SCENARIO);
      const later = buildSnapshot(snapshotInputOf({ cells: combined(firstDraw.cells, secondDraw.cells), valueCounts: [...firstDraw.valueCounts, ...secondDraw.valueCounts] }, definition, 2, first));
      const alpha = 1 - definition.confidence;
      const withChange = later.segments.filter((segment) => segment.change !== null);
      changesShown += withChange.length;
      if (withChange.some((segment) => (segment.change?.rate_change_p_adjusted ?? 1) < alpha)) reportsWithChange += 1;
    }
    const figures: CalibrationFigure[] = [
      { ...atMost('refresh with no new contacts: segments that still report a change', refreshChanges, refreshSegments, 0), target: '0' },
      atMost('new contacts from unchanged rates (bh): reports with any change of rate at adjusted p < α', reportsWithChange, options.replicates, 0.05),
      information('new contacts from unchanged rates: segments with a change computed', changesShown, options.replicates * 19),
    ];
    const nullFigure = figures[1] as CalibrationFigure;
    nullFigure.met = (nullFigure.value ?? 0) <= 0.05 + 2 * Math.sqrt((0.05 * 0.95) / options.replicates);
    return {
      figures,
      notes: [
        '3,000 contacts (4 regions × 3 channels, one-way and crossed segments, 19 tests), then a refresh with nothing new, and a second batch of 3,000 contacts from the same rates.',
        'The change compares the contacts added since the previous snapshot with those before; its p-values are adjusted over the changes of the report (bh).',
      ],
    };
  },
};
