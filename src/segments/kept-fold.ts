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
 * cells are described value by value and the ages which grid axis to use. Memory: a few dozen
 * bytes per kept row plus one entry per distinct (cell, value) and (age bin, value), the size of
 * what the two value queries returned.
 */
import { binIndex, requireIntegerAxis, type AgeBinValueCount, type GridAxis } from './age-value-grid.js';
import { cellLabelsOf, foldCellRows, type CellAggregate, type CellAggregates, type GroupSums } from './cells.js';
import { plausibleAgeOf, type AggregationRequest } from './population.js';
import { exactTotals, shiftsFromTotals, type Shifts } from './shifted-sums.js';
import { compareText } from './text-order.js';
import type { ValueCount, ValueDistributionScope } from './value-counts.js';

/**
 * One row of contact_value_counts as read, in the table's column order: campaign, region,
 * channel, customer type, age (-1: unknown), holdout, converted, revenue (cents), units.
 */
export type KeptRow = readonly [string, string, string, string, number, number, number, number, number];

/** One group being summed: its key columns, units and exact Σ u·v, Σ u·v² (a number while it stays exact, then BigInt). */
interface GroupTally {
  campaign: string;
  region: string;
  channel: string;
  customerType: string;
  storedAge: number;
  converted: boolean;
  n: number;
  sum: number;
  squares: number;
  bigSum: bigint;
  bigSquares: bigint;
}

/** The groups of one arm, with a shortcut for the rows of one group, which the key order brings one after another. */
class ArmTally {
  readonly groups: GroupTally[] = [];
  private readonly indexByKey = new Map<string, number>();
  private last: KeptRow | null = null;
  private lastIndex = -1;

  /** The group of `row`, its index among the groups. */
  groupOf(row: KeptRow): number {
    const last = this.last;
    if (last !== null && last[4] === row[4] && last[6] === row[6] && last[3] === row[3] && last[2] === row[2] && last[1] === row[1] && last[0] === row[0]) {
      this.last = row;
      return this.lastIndex;
    }
    const key = `${row[0]}\u0000${row[1]}\u0000${row[2]}\u0000${row[3]}\u0000${row[4]}\u0000${row[6]}`;
    let index = this.indexByKey.get(key);
    if (index === undefined) {
      index = this.groups.length;
      this.indexByKey.set(key, index);
      this.groups.push({
        campaign: row[0],
        region: row[1],
        channel: row[2],
        customerType: row[3],
        storedAge: row[4],
        converted: row[6] === 1,
        n: 0,
        sum: 0,
        squares: 0,
        bigSum: 0n,
        bigSquares: 0n,
      });
    }
    this.last = row;
    this.lastIndex = index;
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

/** The order of contact_value_counts' key (text by code units, as SQLite's BINARY collation orders it). */
function compareGroups(left: GroupTally, right: GroupTally): number {
  return (
    compareText(left.campaign, right.campaign) ||
    compareText(left.region, right.region) ||
    compareText(left.channel, right.channel) ||
    compareText(left.customerType, right.customerType) ||
    left.storedAge - right.storedAge ||
    Number(left.converted) - Number(right.converted)
  );
}

/** The groups as the cell query returns them, in key order, whatever order the rows came in. */
function groupSumsOf(groups: readonly GroupTally[]): { sums: GroupSums[]; positionOf: Int32Array } {
  const order = groups.map((_group, index) => index).sort((left, right) => compareGroups(groups[left] as GroupTally, groups[right] as GroupTally));
  const positionOf = new Int32Array(groups.length);
  const sums = order.map((index, position): GroupSums => {
    positionOf[index] = position;
    const group = groups[index] as GroupTally;
    return {
      row: { campaign_key: group.campaign, region: group.region, channel: group.channel, customer_type: group.customerType },
      age: plausibleAgeOf(group.storedAge < 0 ? null : group.storedAge),
      n: group.n,
      converted: group.converted,
      valueSum: BigInt(group.sum) + group.bigSum,
      valueSquares: BigInt(group.squares) + group.bigSquares,
    };
  });
  return { sums, positionOf };
}

/** An arm's cells with the shifts summed from its own groups, as `shiftsAndCellAggregates` gives them. */
function armAggregates(groups: readonly GroupSums[], request: AggregationRequest): CellAggregates & { shifts: Shifts } {
  const shifts = shiftsFromTotals(exactTotals(groups));
  return { shifts, ...foldCellRows(groups, request, shifts) };
}

/** A growable column of numbers. */
class NumberColumn<T extends Int32Array | Float64Array> {
  length = 0;
  constructor(
    public values: T,
    private readonly grow: (size: number) => T,
  ) {}
  push(value: number): void {
    if (this.length === this.values.length) {
      const larger = this.grow(this.values.length * 2);
      larger.set(this.values);
      this.values = larger;
    }
    this.values[this.length++] = value;
  }
}

/** What a report on contact_value_counts reads, folded from its rows. */
export interface KeptAggregates {
  /** The report's arm (the contacted one when the arms are split, else every row): as `shiftsAndCellAggregates`. */
  population: CellAggregates & { shifts: Shifts };
  /** The holdout arm when the arms are split, else null: as `shiftsAndCellAggregates` on it. */
  holdout: (CellAggregates & { shifts: Shifts }) | null;
  /** As `valueDistribution(db, request, scope, population.cells)`: the value metric's units per cell and value, for the cells in `scope`. */
  valueCounts(scope: ValueDistributionScope): ValueCount[];
  /** As `valueCountsByAgeBin(db, request, ageAxis, population.unconvertedByAge)`: the value metric's units per age bin and value. */
  valueCountsByAgeBin(ageAxis: GridAxis | null): AgeBinValueCount[];
}

/**
 * Folds kept rows, fed one at a time with `add` (in any order; the key order is the fastest),
 * into a report's aggregates (`finish`). `splitArms`: the holdout rows are the holdout arm and
 * the others the report's; otherwise every row is the report's (as a source without an arm).
 */
export class KeptCountsFold {
  private readonly reportArm = new ArmTally();
  private readonly holdoutArm = new ArmTally();
  private readonly rowGroups = new NumberColumn(new Int32Array(1024), (size) => new Int32Array(size));
  private readonly rowValues = new NumberColumn(new Float64Array(1024), (size) => new Float64Array(size));
  private readonly rowUnits = new NumberColumn(new Float64Array(1024), (size) => new Float64Array(size));

  constructor(
    private readonly request: AggregationRequest,
    private readonly splitArms: boolean,
  ) {
    if (request.source.kind !== 'campaigns') throw new Error('kept counts hold campaign contacts only');
  }

  add(row: KeptRow): void {
    const valueCents = row[7];
    const units = row[8];
    if (this.splitArms && row[5] === 1) {
      addUnits(this.holdoutArm.groups[this.holdoutArm.groupOf(row)] as GroupTally, valueCents, units);
      return;
    }
    const group = this.reportArm.groupOf(row);
    addUnits(this.reportArm.groups[group] as GroupTally, valueCents, units);
    this.rowGroups.push(group);
    this.rowValues.push(valueCents);
    this.rowUnits.push(units);
  }

  finish(): KeptAggregates {
    const request = this.request;
    const groups = this.reportArm.groups;
    const { sums, positionOf } = groupSumsOf(groups);
    const population = armAggregates(sums, request);
    const holdout = this.splitArms ? armAggregates(groupSumsOf(this.holdoutArm.groups).sums, request) : null;
    const rowCount = this.rowGroups.length;
    const rowGroups = this.rowGroups.values;
    const rowValues = this.rowValues.values;
    const rowUnits = this.rowUnits.values;
    // The value metric's units: every unit per unit, the converted ones per conversion.
    const counted = groups.map((group) => request.valueBasis === 'per_unit' || group.converted);
    // The cell of each group, through the labels the fold gave it.
    const cellIndexByLabels = new Map(population.cells.map((cell, index) => [JSON.stringify(cell.labels), index]));
    const cellOf = groups.map((_group, index) => {
      const group = sums[positionOf[index] as number] as GroupSums;
      return cellIndexByLabels.get(JSON.stringify(cellLabelsOf(group.row, request, group.age))) as number;
    });
    return {
      population,
      holdout,
      valueCounts(scope) {
        if (scope !== 'all' && scope.length === 0) return [];
        const inScope = (labels: readonly string[]) => scope === 'all' || scope.some(({ dimensionIndex, labels: chosen }) => chosen.includes(labels[dimensionIndex] as string));
        const read = groups.map((_group, index) => (counted[index] as boolean) && inScope((population.cells[cellOf[index] as number] as CellAggregate).labels));
        const perCell = new Map<number, Map<number, number>>();
        for (let row = 0; row < rowCount; row++) {
          const group = rowGroups[row] as number;
          if (!read[group]) continue;
          const cell = cellOf[group] as number;
          let values = perCell.get(cell);
          if (values === undefined) perCell.set(cell, (values = new Map()));
          const valueCents = rowValues[row] as number;
          values.set(valueCents, (values.get(valueCents) ?? 0) + (rowUnits[row] as number));
        }
        const counts: ValueCount[] = [];
        for (const [cell, values] of perCell) {
          const labels = (population.cells[cell] as CellAggregate).labels;
          for (const [valueCents, count] of values) counts.push({ labels, valueCents, count });
        }
        return counts;
      },
      valueCountsByAgeBin(ageAxis) {
        if (ageAxis !== null) requireIntegerAxis('age', ageAxis);
        const binOf = groups.map((group) => {
          const age = plausibleAgeOf(group.storedAge < 0 ? null : group.storedAge);
          return age === null || ageAxis === null ? null : binIndex(age, ageAxis);
        });
        const perBin = new Map<number | null, Map<number, number>>();
        for (let row = 0; row < rowCount; row++) {
          const group = rowGroups[row] as number;
          if (!counted[group]) continue;
          const bin = binOf[group] as number | null;
          let values = perBin.get(bin);
          if (values === undefined) perBin.set(bin, (values = new Map()));
          const valueCents = rowValues[row] as number;
          values.set(valueCents, (values.get(valueCents) ?? 0) + (rowUnits[row] as number));
        }
        const counts: AgeBinValueCount[] = [];
        for (const [ageBin, values] of perBin) for (const [valueCents, count] of values) counts.push({ ageBin, valueCents, count });
        return counts;
      },
    };
  }
}
