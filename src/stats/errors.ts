/**
 * The one error the statistics core throws: an argument that no statistical method could
 * accept (a negative count, more successes than trials, a confidence of 1.2, a NaN). Data
 * that are valid but leave a quantity undefined (no trials, zero variance) are not errors;
 * those come back as an `Outcome` with a reason, so a report can say why a figure is missing.
 */
export class StatsInputError extends Error {
  /** Name of the offending argument, as it appears in the function's signature. */
  readonly argument: string;

  /**
   * @param argument - the argument's name, e.g. `'successes'`
   * @param message - a sentence naming the argument and saying what would be accepted
   * @example
   * throw new StatsInputError('trials', 'trials must be a non-negative integer, got -1');
   */
  constructor(argument: string, message: string) {
    super(message);
    this.name = 'StatsInputError';
    this.argument = argument;
  }
}
