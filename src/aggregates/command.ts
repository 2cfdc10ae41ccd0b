/**
 * `segrank aggregates`: the operator's check and repair of the contact value counts.
 *
 *   segrank aggregates check     compare the counts with the contacts; exit 0 when exact, 1 otherwise
 *   segrank aggregates rebuild   replace the counts with a recomputation from the contacts
 */
import type { Config } from '../config.js';
import { withMigratedDatabase } from '../report-command.js';
import { checkCells, rebuildCells, type CellDifference } from './check.js';

const USAGE = 'usage: segrank aggregates check | rebuild';
/** Differing cells listed by `check`; the rest are counted. */
const LISTED_DIFFERENCES = 20;

function describeDifference({ key, storedUnits, expectedUnits }: CellDifference): string {
  const age = key.age < 0 ? 'unknown age' : `age ${key.age}`;
  return `  ${key.campaign_id} | ${key.region} | ${key.channel} | ${key.customer_type} | ${age} | holdout ${key.holdout} | converted ${key.converted} | revenue_cents ${key.revenue_cents}: stored ${storedUnits}, contacts ${expectedUnits}`;
}

/**
 * Runs `segrank aggregates` with its arguments; returns the exit status (64 for a usage error).
 * @example
 * await runAggregatesCommand(['check'], loadConfig()); // 0 when the counts match the contacts
 */
export async function runAggregatesCommand(args: string[], config: Config): Promise<number> {
  const [action, ...rest] = args;
  if ((action !== 'check' && action !== 'rebuild') || rest.length > 0) {
    console.error(USAGE);
    return 64;
  }
  return withMigratedDatabase(config, async ({ db }) => {
    if (action === 'rebuild') {
      const rows = await rebuildCells(db);
      console.log(`contact value counts rebuilt from the contacts: ${rows} rows written`);
      return 0;
    }
    const check = await checkCells(db, LISTED_DIFFERENCES);
    if (check.differenceCount === 0) {
      console.log(`contact value counts exact: ${check.storedRows} rows match the contacts`);
      return 0;
    }
    console.log(
      `contact value counts differ from the contacts in ${check.differenceCount} cells (${check.storedRows} rows stored, ${check.expectedRows} expected); ` +
        'run `segrank aggregates rebuild` to repair',
    );
    for (const difference of check.differences) console.log(describeDifference(difference));
    if (check.differenceCount > check.differences.length) console.log(`  … and ${check.differenceCount - check.differences.length} more`);
    return 1;
  });
}
