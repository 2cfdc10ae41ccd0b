/**
 * The `segrank` command line: `segrank demo`, and the operator commands added beside it
 * (`keys`, `refresh`, `plan`, `aggregates`).
 * Each command reads the same configuration (DATABASE_URL …) as the service.
 */
import fs from 'node:fs';
import { ConfigError, DEMO_SQLITE_FILE, loadConfig, type Config } from './config.js';

type Command = (args: string[], config: Config) => Promise<number>;

/**
 * Right after `npm run demo`, before any database of one's own exists, the operator commands
 * work on the demo's database (and say so), so `segrank keys list` finds the demo's keys.
 * An explicit DATABASE_URL, or an existing default database, always wins.
 */
function withDemoDatabaseFallback(config: Config): Config {
  if ((process.env['DATABASE_URL'] ?? '') !== '' || config.database.dialect !== 'sqlite') return config;
  if (fs.existsSync(config.database.file) || !fs.existsSync(DEMO_SQLITE_FILE)) return config;
  console.error(`segrank: no database at ${config.database.file} yet, so using the demo's ${DEMO_SQLITE_FILE} (set DATABASE_URL to choose)`);
  return { ...config, database: { dialect: 'sqlite', file: DEMO_SQLITE_FILE } };
}

const commands: Record<string, { summary: string; run: Command }> = {
  aggregates: {
    summary: 'check: compare the contact value counts with the contacts (exit 1 on a difference); rebuild: recompute them from the contacts',
    run: async (args, config) => (await import('./aggregates/command.js')).runAggregatesCommand(args, config),
  },
  keys: {
    summary: 'create, list or revoke API keys (keys create --role read|ingest|admin --name NAME)',
    run: async (args, config) => (await import('./auth/commands.js')).keysCommand(args, config),
  },
  demo: {
    summary: 'create the database, load the invented demo data, start the service and print URLs to try',
    run: async (args, config) => (await import('../seed/demo.js')).runDemo(args, config),
  },
  plan: {
    summary: 'customers to hold back and contact per segment in the next campaign (--baseline-rate R --min-uplift D, or --report ID --min-uplift D)',
    run: async (args, config) => (await import('./plan/command.js')).runPlanCommand(args, config),
  },
  refresh: {
    summary: 'refresh every weekly report now (for an external scheduler); --all for every report, or name report ids',
    run: async (args, config) => (await import('./schedule/command.js')).runRefreshCommand(args, config),
  },
};

function usage(): string {
  const lines = Object.entries(commands).map(([name, { summary }]) => `  segrank ${name.padEnd(10)} ${summary}`);
  return ['usage:', ...lines].join('\n');
}

async function main(argv: string[]): Promise<number> {
  const [name, ...args] = argv;
  const command = name === undefined ? undefined : commands[name];
  if (command === undefined) {
    console.error(usage());
    return name === undefined || name === 'help' || name === '--help' ? 0 : 64;
  }
  try {
    const config = loadConfig();
    return await command.run(args, name === 'demo' ? config : withDemoDatabaseFallback(config));
  } catch (error) {
    if (error instanceof ConfigError) {
      console.error(`segrank: configuration error: ${error.message}`);
      return 78;
    }
    throw error;
  }
}

process.exitCode = await main(process.argv.slice(2));
