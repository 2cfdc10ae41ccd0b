/**
 * A campaign report's aggregates folded in code from its campaigns' rows of
 * contact_value_counts, read once (kept-rows.ts): the same cells, shifts, age counts, strata,
 * holdout arm, value counts per cell and values per age bin that the report's queries over the
 * kept counts return (`shiftsAndCellAggregates`, `valueDistribution`, `valueCountsByAgeBin`).
 *
 * The rows are first summed per group of campaign, customer columns, stored age and outcome
 * (one arm each), which is what the cell query groups by; the groups, put in the order of the
 * table's key, go through the cell query's own fold (`foldCellRows`), so the cells are the
 * query's to the last bit. Each row of the report's arm also keeps its group, value and units
 * in three flat arrays, from which the value counts are counted once the cells have said which
 * cells are described value by value and the ages which grid axis to use.
 *
 * Memory: 20 bytes per kept row of the report's arm (the flat arrays, doubled as they grow),
 * one object per group, and for the value counts one entry per distinct (cell, value) and
 * (age bin, value), as many as the two value queries returned. The rows themselves are not kept.
 */
import { binIndex, requireIntegerAxis, type AgeBinValueCount, type GridAxis, type ValuesByAge } from './age-value-grid.js';
import { countByBucketAndValue } from './bucket-value-counts.js';
import { foldCellGroups, type CellAggregate, type CellAggregates, type GroupSums } from './cells.js';
import { plausibleAgeOf, type AggregationRequest } from './population.js';
import { exactTotals, shiftsFromTotals, type Shifts } from './shifted-sums.js';
import { compareText } from './text-order.js';
import type { ValueCount, ValueDistributionScope } from './value-counts.js';

/** The customer columns of a kept row, which with the campaign make its text key; `row`: as the cell query's rows name them. */
interface TextKey {
  campaign: string;
  region: string;
  channel: string;
  customerType: string;
  row: Record<string, unknown>;
}

/** One group being summed: its key, units and exact Σ u·v, Σ u·v² (numbers while they stay exact, the rest in BigInt). */
interface GroupTally {
  text: TextKey;
  storedAge: number;
  converted: boolean;
  n: number;
  sum: number;
  squares: number;
  bigSum: bigint;
  bigSquares: bigint;
}

/** The groups of one text key, by stored age and outcome (age·2 + converted). */
interface TextTally {
  text: TextKey;
  groups: Map<number, number>;
}

/** The groups of one arm. Rows in key order come text key by text key, so the last one is kept at hand. */
class ArmTally {
  readonly groups: GroupTally[] = [];
  private readonly texts = new Map<string, TextTally>();
  private last: TextTally | null = null;

  /** The index of the group of a row among `groups`, created empty when new. */
  groupOf(campaign: string, region: string, channel: string, customerType: string, storedAge: number, converted: number): number {
    let text = this.last;
    if (text === null || text.text.campaign !== campaign || text.text.region !== region || text.text.channel !== channel || text.text.customerType !== customerType) {
      const key = `${campaign}\u0000${region}\u0000${channel}\u0000${customerType}`;
      text = this.texts.get(key) ?? null;
      if (text === null) {
        const row = { campaign_key: campaign, region, channel, customer_type: customerType };
        this.texts.set(key, (text = { text: { campaign, region, channel, customerType, row }, groups: new Map() }));
      }
      this.last = text;
    }
    const groupKey = storedAge * 2 + converted;
    let index = text.groups.get(groupKey);
    if (index === undefined) {
      index = this.groups.length;
      text.groups.set(groupKey, index);
      this.groups.push({ text: text.text, storedAge, converted: converted === 1, n: 0, sum: 0, squares: 0, bigSum: 0n, bigSquares: 0n });
    }
    return index;
  }
}

/** Adds `units` units worth `valueCents` each to a group, exactly. */
function addUnits(group: GroupTally, valueCents: number, units: number): void {
  group.n += units;
  const sum = units * valueCents;
  const squares = sum * valueCents;
  // A product or a sum past 2^53 is no longer exact as a number: that part goes to BigInt.
  if (Number.isSafeInteger(sum) && Number.isSafeInteger(group.sum + sum)) group.sum += sum;
  else group.bigSum += BigInt(units) * BigInt(valueCents);
  if (Number.isSafeInteger(squares) && Number.isSafeInteger(group.squares + squares)) group.squares += squares;
  else group.bigSquares += BigInt(units) * BigInt(valueCents) * BigInt(valueCents);
}

/** The order of contact_value_counts' key (text by code units, the order SQLite's BINARY collation gives). */
function compareGroups(left: GroupTally, right: GroupTally): number {
  return (
    compareText(left.text.campaign, right.text.campaign) ||
    compareText(left.text.region, right.text.region) ||
    compareText(left.text.channel, right.text.channel) ||
    compareText(left.text.customerType, right.text.customerType) ||
    left.storedAge - right.storedAge ||
    Number(left.converted) - Number(right.converted)
  );
}

function plausibleAgeOfStored(storedAge: number): number | null {
  // The table keeps an unknown age as -1.
  return plausibleAgeOf(storedAge < 0 ? null : storedAge);
}

/** The groups as the cell query returns them, in key order whatever order the rows came in; `sums[positionOf[g]]` is group g. */
function groupSumsOf(groups: readonly GroupTally[]): { sums: GroupSums[]; positionOf: Int32Array } {
  const order = groups.map((_group, index) => index).sort((left, right) => compareGroups(groups[left] as GroupTally, groups[right] as GroupTally));
  const positionOf = new Int32Array(groups.length);
  const sums = order.map((index, position): GroupSums => {
    positionOf[index] = position;
    const group = groups[index] as GroupTally;
    return {
      // One row object per text key, so that the cell fold sees a group's neighbours as of one cell.
      row: group.text.row,
      age: plausibleAgeOfStored(group.storedAge),
      n: group.n,
      converted: group.converted,
      valueSum: group.bigSum === 0n ? BigInt(group.sum) : BigInt(group.sum) + group.bigSum,
      valueSquares: group.bigSquares === 0n ? BigInt(group.squares) : BigInt(group.squares) + group.bigSquares,
    };
  });
  return { sums, positionOf };
}

/** An arm's cells with the shifts summed from its own groups, as `shiftsAndCellAggregates` gives them, and the cell of each group. */
function armAggregates(groups: readonly GroupSums[], request: AggregationRequest): { aggregates: CellAggregates & { shifts: Shifts }; cellOfGroup: Int32Array } {
  const shifts = shiftsFromTotals(exactTotals(groups));
  const { aggregates, cellOfGroup } = foldCellGroups(groups, request, shifts);
  return { aggregates: { shifts, ...aggregates }, cellOfGroup };
}

/** The rows of the report's arm, column by column: group index, value (cents), units. */
class RowColumns {
  length = 0;
  groups = new Int32Array(1024);
  values = new Float64Array(1024);
  units = new Float64Array(1024);

  push(group: number, valueCents: number, units: number): void {
    if (this.length === this.groups.length) {
      const size = this.length * 2;
      const groups = new Int32Array(size);
      groups.set(this.groups);
      this.groups = groups;
      const values = new Float64Array(size);
      values.set(this.values);
      this.values = values;
      const counts = new Float64Array(size);
      counts.set(this.units);
      this.units = counts;
    }
    this.groups[this.length] = group;
    this.values[this.length] = valueCents;
    this.units[this.length] = units;
    this.length += 1;
  }
}

/** What a report on contact_value_counts reads, folded from its rows. */
export interface KeptAggregates {
  /** The report's arm (the contacted one when the arms are split, else every row): as `shiftsAndCellAggregates`. */
  population: CellAggregates & { shifts: Shifts };
  /** The holdout arm when the arms are split, else null: as `shiftsAndCellAggregates` on it. */
  holdout: (CellAggregates & { shifts: Shifts }) | null;
  /** The holdout contacts among the rows read, split or not (`holdoutContacts` of the same campaigns). */
  holdoutUnits: number;
  /** As `valueDistribution(db, request, scope, population.cells)`: the value metric's units per cell and value, for the cells in `scope`. */
  valueCounts(scope: ValueDistributionScope): ValueCount[];
  /**
   * As `valueCountsByAgeBin(db, request, ageAxis, population.unconvertedByAge)`: the value
   * metric's units per age bin and value, one entry each.
   * @throws Error when the axis does not have whole-number bounds
   */
  valueCountsByAgeBin(ageAxis: GridAxis | null): AgeBinValueCount[];
  /**
   * As `valuesByAgeOf(this.valueCountsByAgeBin(ageAxis))`, without an entry per age bin and value.
   * @throws Error when the axis does not have whole-number bounds
   */
  valuesByAge(ageAxis: GridAxis | null): ValuesByAge;
}

/** The counts kept under `key` in `maps`, made empty when missing. */
function countsOf<K>(maps: Map<K, Map<number, number>>, key: K): Map<number, number> {
  let counts = maps.get(key);
  if (counts === undefined) maps.set(key, (counts = new Map()));
  return counts;
}

/**
 * Counts the units of every row per value into the counts `countsOfGroup` gives for its group
 * (null: the row is not counted), asked once per run of rows of one group.
 */
function countRows(rowCount: number, rowGroups: Int32Array, rowValues: Float64Array, rowUnits: Float64Array, countsOfGroup: (group: number) => Map<number, number> | null): void {
  let lastGroup = -1;
  let counts: Map<number, number> | null = null;
  for (let row = 0; row < rowCount; row++) {
    const group = rowGroups[row] as number;
    if (group !== lastGroup) {
      lastGroup = group;
      counts = countsOfGroup(group);
    }
    if (counts === null) continue;
    const valueCents = rowValues[row] as number;
    counts.set(valueCents, (counts.get(valueCents) ?? 0) + (rowUnits[row] as number));
  }
}

/**
 * Folds kept rows, given one at a time to `add` (in any order; key order is the fastest), into
 * a report's aggregates (`finish`). `splitArms`: the holdout rows are the holdout arm and the
 * others the report's; otherwise every row is the report's (a source without an arm).
 */
export class KeptCountsFold {
  private readonly reportArm = new ArmTally();
  private readonly holdoutArm = new ArmTally();
  private readonly rows = new RowColumns();
  private holdoutUnits = 0;

  constructor(
    private readonly request: AggregationRequest,
    private readonly splitArms: boolean,
  ) {
    if (request.source.kind !== 'campaigns') throw new Error('kept counts hold campaign contacts only');
  }

  /** One kept row: its key (stored age -1: unknown; holdout and converted 0 or 1) and its units. */
  add(campaign: string, region: string, channel: string, customerType: string, storedAge: number, holdout: number, converted: number, valueCents: number, units: number): void {
    if (holdout === 1) {
      this.holdoutUnits += units;
      if (this.splitArms) {
        const group = this.holdoutArm.groupOf(campaign, region, channel, customerType, storedAge, converted);
        addUnits(this.holdoutArm.groups[group] as GroupTally, valueCents, units);
        return;
      }
    }
    const group = this.reportArm.groupOf(campaign, region, channel, customerType, storedAge, converted);
    addUnits(this.reportArm.groups[group] as GroupTally, valueCents, units);
    this.rows.push(group, valueCents, units);
  }

  finish(): KeptAggregates {
    const request = this.request;
    const groups = this.reportArm.groups;
    const { sums, positionOf } = groupSumsOf(groups);
    const { aggregates: population, cellOfGroup: cellOfPosition } = armAggregates(sums, request);
    const holdout = this.splitArms ? armAggregates(groupSumsOf(this.holdoutArm.groups).sums, request).aggregates : null;
    const rows = this.rows;
    const { length: rowCount, groups: rowGroups, values: rowValues, units: rowUnits } = rows;
    // The value metric's units: every unit per unit, the converted ones per conversion.
    const counted = groups.map((group) => request.valueBasis === 'per_unit' || group.converted);
    const cellOf = groups.map((_group, index) => cellOfPosition[positionOf[index] as number] as number);
    // The value metric's units per age bin (the axis' bins, then no plausible age) and value.
    const ageValueTable = (ageAxis: GridAxis | null) => {
      if (ageAxis !== null) requireIntegerAxis('age', ageAxis);
      const unknownBucket = ageAxis === null ? 0 : ageAxis.bins;
      const bucketOfGroup = Int32Array.from(groups, (group, index) => {
        if (!(counted[index] as boolean)) return -1;
        const age = plausibleAgeOfStored(group.storedAge);
        return age === null || ageAxis === null ? unknownBucket : binIndex(age, ageAxis);
      });
      return { table: countByBucketAndValue(rows, bucketOfGroup, unknownBucket + 1), unknownBucket };
    };
    return {
      population,
      holdout,
      holdoutUnits: this.holdoutUnits,
      valueCounts(scope) {
        if (scope !== 'all' && scope.length === 0) return [];
        const inScope = (labels: readonly string[]) => scope === 'all' || scope.some(({ dimensionIndex, labels: chosen }) => chosen.includes(labels[dimensionIndex] as string));
        const cellsRead = population.cells.map((cell) => inScope(cell.labels));
        const read = groups.map((_group, index) => (counted[index] as boolean) && (cellsRead[cellOf[index] as number] as boolean));
        const perCell = new Map<number, Map<number, number>>();
        countRows(rowCount, rowGroups, rowValues, rowUnits, (group) => (read[group] ? countsOf(perCell, cellOf[group] as number) : null));
        const counts: ValueCount[] = [];
        for (const [cell, values] of perCell) {
          const labels = (population.cells[cell] as CellAggregate).labels;
          for (const [valueCents, count] of values) counts.push({ labels, valueCents, count });
        }
        return counts;
      },
      valueCountsByAgeBin(ageAxis) {
        const { table, unknownBucket } = ageValueTable(ageAxis);
        return table.entries().map(({ bucket, valueCents, count }) => ({ ageBin: bucket === unknownBucket ? null : bucket, valueCents, count }));
      },
      valuesByAge(ageAxis) {
        const { table, unknownBucket } = ageValueTable(ageAxis);
        return {
          wholeValueCounts: table.valueTotals(),
          gridCounts(axes) {
            requireIntegerAxis('value', axes.valueCents);
            const binned = table.binnedByValue(unknownBucket, (valueCents) => binIndex(valueCents, axes.valueCents), axes.valueCents.bins);
            return binned.map(({ bucket, valueBin, count }) => ({ ageBin: bucket, valueBin, count }));
          },
        };
      },
    };
  }
}
