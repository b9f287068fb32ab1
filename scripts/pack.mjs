#!/usr/bin/env node
// Pack the three packages into tarballs that install in any project with plain npm, the route
// that works while nothing is published on the registry:
//   node scripts/pack.mjs [destination]      (default: out/packs)
// Runs the set-up (locked dependencies, the wasm kernel, tsc -b) first unless --no-setup, then
// `pnpm pack` in packages/geometry, core and io: only pnpm rewrites the workspace links
// (`workspace:*`, `catalog:`) into pinned versions, so `npm pack` would give tarballs npm
// cannot install. Prints the tarball paths and the install command.
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const args = process.argv.slice(2);
const setup = !args.includes('--no-setup');
const positional = args.filter((a) => !a.startsWith('--'));
if (positional.length > 1 || args.some((a) => a.startsWith('--') && a !== '--no-setup')) {
  process.stderr.write('usage: node scripts/pack.mjs [destination] [--no-setup]\n');
  process.exit(2);
}
const destination = resolve(positional[0] ?? join(root, 'out', 'packs'));
mkdirSync(destination, { recursive: true });

if (setup) execFileSync(process.execPath, [join(root, 'scripts', 'setup.mjs')], { cwd: root, stdio: 'inherit' });
const tarballs = [];
for (const pkg of ['geometry', 'core', 'io']) {
  const dir = join(root, 'packages', pkg);
  if (!existsSync(join(dir, 'dist', 'index.js'))) {
    process.stderr.write(`error: packages/${pkg}/dist/index.js is missing: build first (npx tsc -b) or run without --no-setup\n`);
    process.exit(1);
  }
  const { name, version } = JSON.parse(readFileSync(join(dir, 'package.json'), 'utf8'));
  execFileSync('npx', ['--yes', 'pnpm@12.4.2', 'pack', '--pack-destination', destination], {
    cwd: dir,
    stdio: ['ignore', 'ignore', 'inherit'],
    env: { ...process.env, npm_config_yes: 'true' },
  });
  const file = join(destination, `${name.replace(/^@/, '').replace('/', '-')}-${version}.tgz`);
  if (!existsSync(file)) {
    process.stderr.write(`error: pnpm pack did not write ${file}\n`);
    process.exit(1);
  }
  tarballs.push(file);
}
process.stdout.write(
  `${tarballs.join('\n')}\n\ninstall them in your project with:\n  npm install ${tarballs.join(' ')}\nthen run the command as: npx --no-install pathweave --help\n`,
);
