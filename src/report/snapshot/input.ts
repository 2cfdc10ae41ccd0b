/** What a snapshot is built from: the aggregates of the database and who the snapshot is. */
import type {
  AgeCount,
  AgeValueBinCount,
  AgeValueGridAxes,
  CampaignCellCount,
  CellAggregate,
  PopulationValueCount,
  Shifts,
  SourceQuality,
  ValueCount,
} from '../../segments/index.js';
import type { PreviousWindow } from '../analysis/index.js';
import type { ReportDefinition } from '../definition/index.js';
import type { Snapshot } from '../shapes/index.js';
import type { HoldoutCells } from './holdout.js';

interface SnapshotIdentity {
  snapshotId: string;
  reportId: string;
  reportName: string;
  sequence: number;
  createdAt: string;
  trigger: Snapshot['trigger'];
}

export interface SnapshotInput {
  identity: SnapshotIdentity;
  definition: ReportDefinition;
  shifts: Shifts;
  arithmetic: 'exact' | 'floating';
  cells: CellAggregate[];
  ageCounts: AgeCount[];
  valueCounts: ValueCount[];
  /**
   * Value counts over the whole population (`valueCountsOf(valueCountsByAgeBin(…))`), for its histogram and descriptives.
   * Absent: the cell value counts are used when they cover every unit of the value metric.
   */
  populationValueCounts?: PopulationValueCount[];
  /** Counts of the age × value grid (`gridCountsOf`) with the axes they were binned on; null or absent: no grid. */
  ageValueGrid?: { axes: AgeValueGridAxes; counts: AgeValueBinCount[] } | null;
  quality: SourceQuality;
  /** reports over several campaigns: units and conversions per cell and campaign; absent or empty: one sample */
  strata?: CampaignCellCount[];
  /** sales reports: the window of the same length just before this one */
  previousWindow: PreviousWindow | null;
  previousSnapshot: Snapshot | null;
  /**
   * Campaign reports: contacts the previous snapshot held were changed or erased since it, so
   * the contacts added since cannot be told apart by subtraction. Absent: false.
   */
  earlierContactsChanged?: boolean;
  /**
   * Campaign reports whose population has holdout customers: the holdout arm's cells; the other
   * aggregates then describe the contacted customers only. Null or absent: no holdout.
   */
  holdout?: HoldoutCells | null;
  /** No published figure describes fewer units than this (withholding.ts); the service's setting, 10 when absent. */
  publicationThreshold?: number;
}
