#!/usr/bin/env node
// One-step set-up used by `npm run demo`, `npm test` and `npm run bench`:
// installs the pinned pnpm (through npx, so nothing global is needed), the locked
// dependencies, builds the TypeScript packages, bundles the command line and compiles the WebAssembly SIMD kernels from
// their AssemblyScript source (packages/core/assembly) with the pinned compiler from the npm
// registry. Safe to run again: each step is a no-op when its result is already up to date.
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, statSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const PNPM = 'pnpm@12.4.2';
const quiet = process.env.PATHWEAVE_SETUP_VERBOSE ? 'inherit' : ['ignore', 'ignore', 'inherit'];

function run(cmd, args) {
  execFileSync(cmd, args, { cwd: root, stdio: quiet, env: { ...process.env, npm_config_yes: 'true' } });
}

run('npx', ['--yes', PNPM, 'install', '--frozen-lockfile', '--reporter=silent']);
// The SIMD kernels, one source built twice: accumulate.wasm (128-bit SIMD, multiply then add)
// and accumulate-fma.wasm (relaxed-SIMD fused multiply-add). Their memory is shared (a
// SharedArrayBuffer, up to the 4 GiB of wasm32), so pool workers and the hash thread read the
// blocks the kernel wrote in place. Each is rebuilt when missing or older than the source or
// than this script. They land beside the compiled kernels in dist/ (tsc -b, run next, leaves
// files it does not emit alone), where kernels/wasm.ts finds them.
const kernelSource = join(root, 'packages', 'core', 'assembly', 'accumulate.ts');
const kernelDir = join(root, 'packages', 'core', 'dist', 'kernels');
const newest = Math.max(statSync(kernelSource).mtimeMs, statSync(fileURLToPath(import.meta.url)).mtimeMs);
for (const [file, features] of [
  ['accumulate.wasm', ['simd', 'threads']],
  ['accumulate-fma.wasm', ['simd', 'relaxed-simd', 'threads']],
]) {
  const kernelOut = join(kernelDir, file);
  if (!existsSync(kernelOut) || statSync(kernelOut).mtimeMs < newest) {
    mkdirSync(kernelDir, { recursive: true });
    const memory = ['--sharedMemory', '--maximumMemory', '65536'];
    run(join(root, 'node_modules', '.bin', 'asc'), [
      kernelSource,
      '--outFile',
      kernelOut,
      '-O3',
      ...features.flatMap((f) => ['--enable', f]),
      ...memory,
      '--runtime',
      'stub',
      '--noAssert',
      '--use',
      'abort=',
    ]);
  }
}

run(join(root, 'node_modules', '.bin', 'tsc'), ['-b']);
// The command line's bundle (scripts/bundle-cli.mjs says why), from the modules tsc just wrote.
run(process.execPath, [join(root, 'scripts', 'bundle-cli.mjs')]);
