#!/usr/bin/env node
// The README's demo: generate the street-corner scenario of examples/ into out/ and print a
// short summary of what was written. Run through `npm run demo`, which installs and builds first.
import { spawnSync } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const cli = join(root, 'packages', 'io', 'bin', 'pathweave.js');
const scenario = join('examples', 'street-corner-28ghz.json');
const out = join('out', 'street-corner-28ghz.npy');
mkdirSync(join(root, 'out'), { recursive: true });

function pathweave(...args) {
  const r = spawnSync(process.execPath, [cli, ...args], { cwd: root, stdio: 'inherit' });
  if (r.status !== 0) process.exit(r.status ?? 1);
}

console.log(`$ pathweave validate ${scenario}`);
pathweave('validate', scenario);
console.log(`\n$ pathweave generate ${scenario} --out ${out}`);
pathweave('generate', scenario, '--out', out); // not --quiet: the line saying what was written is part of the demo
console.log(`\n$ pathweave inspect ${out}`);
pathweave('inspect', out);
