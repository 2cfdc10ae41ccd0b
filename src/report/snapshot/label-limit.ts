/**
 * The cap on a dimension's distinct labels in a report (`MAX_LABELS_PER_DIMENSION`): a
 * dimension past it would make many tiny, withheld segments and a huge snapshot and page, so
 * the report is refused, naming the dimension and its count.
 */
import type { Executor } from '../../db/executor.js';
import { labelCountBounds, labelCounts, type AggregationRequest, type CellAggregate } from '../../segments/index.js';

/**
 * A dimension of a report has more distinct labels than `MAX_LABELS_PER_DIMENSION`: its
 * segments would be many, tiny and mostly withheld, and the snapshot and page huge.
 */
export class TooManyLabelsError extends Error {
  override name = 'TooManyLabelsError';
  constructor(
    readonly reportId: string,
    readonly dimensions: ReadonlyArray<{ dimension: string; labels: number }>,
    readonly limit: number,
  ) {
    super(
      `${dimensions.map(({ dimension, labels }) => `dimension ${dimension} has ${labels} distinct labels`).join('; ')} in the report's population, more than the ${limit} a dimension may have (MAX_LABELS_PER_DIMENSION); remove it from the report's dimensions or group its labels before uploading`,
    );
  }
}

/** The dimensions with more labels than the limit, from their counts in definition order. */
export function dimensionsOverLimit(dimensions: readonly string[], counts: readonly number[], limit: number): Array<{ dimension: string; labels: number }> {
  return dimensions.flatMap((dimension, index) => ((counts[index] ?? 0) > limit ? [{ dimension, labels: counts[index] as number }] : []));
}

/**
 * Refuses a refresh before its cell query when a dimension is past the limit: small bounded
 * reads first (`labelCountBounds`), and the population's exact count only when one of them is
 * past it, so the usual report pays for no extra pass over its population.
 * @throws TooManyLabelsError
 */
export async function refuseLabelsPastLimit(db: Executor, reportId: string, request: Pick<AggregationRequest, 'source' | 'dimensions' | 'ageEdges'>, limit: number): Promise<void> {
  if (!(await labelCountBounds(db, request, limit)).some((bound) => bound > limit)) return;
  const over = dimensionsOverLimit(request.dimensions, await labelCounts(db, request), limit);
  if (over.length > 0) throw new TooManyLabelsError(reportId, over, limit);
}

/** @throws TooManyLabelsError when the cells hold more labels of a dimension than the limit */
export function refuseCellLabelsPastLimit(reportId: string, dimensions: readonly string[], cells: readonly CellAggregate[], limit: number): void {
  const counts = dimensions.map((_dimension, index) => new Set(cells.map((cell) => cell.labels[index])).size);
  const over = dimensionsOverLimit(dimensions, counts, limit);
  if (over.length > 0) throw new TooManyLabelsError(reportId, over, limit);
}
