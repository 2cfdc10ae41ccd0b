#!/usr/bin/env node
// Runs the TypeScript command line through tsx, so `npx segrank …` works in a checkout without a build step.
import { spawnSync } from 'node:child_process';
import { createRequire } from 'node:module';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const tsx = createRequire(import.meta.url).resolve('tsx/cli');
const result = spawnSync(process.execPath, [tsx, path.join(root, 'src', 'cli.ts'), ...process.argv.slice(2)], { stdio: 'inherit' });
process.exit(result.status ?? 1);
