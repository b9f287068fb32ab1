#!/usr/bin/env node
// One-step set-up used by `npm run demo`, `npm test` and `npm run bench`:
// installs the pinned pnpm (through npx, so nothing global is needed), the locked
// dependencies, and builds the TypeScript packages. Safe to run again: each step is
// a no-op when its result is already up to date.
import { execFileSync } from 'node:child_process';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const PNPM = 'pnpm@12.4.2';
const quiet = process.env.PATHWEAVE_SETUP_VERBOSE ? 'inherit' : ['ignore', 'ignore', 'inherit'];

function run(cmd, args) {
  execFileSync(cmd, args, { cwd: root, stdio: quiet, env: { ...process.env, npm_config_yes: 'true' } });
}

run('npx', ['--yes', PNPM, 'install', '--frozen-lockfile', '--reporter=silent']);
run(join(root, 'node_modules', '.bin', 'tsc'), ['-b']);
