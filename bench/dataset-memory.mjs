#!/usr/bin/env node
// Peak resident memory of `pathweave generate` writing a 2 GiB dataset in each format (not a
// test: run by hand, `node bench/dataset-memory.mjs`, after `npx tsc -b`). The child's peak
// resident set is VmHWM from /proc/<pid>/status, read just before it exits (polled every 50 ms;
// the high-water mark only grows, so the last reading is the peak). The limit is 300 MB.
// Scenario: 4 explicit static paths, UPA 4x8 to UPA 2x4 (32 x 8 = 256 entries), 256 subcarriers,
// complex64: 256 * 256 * 8 = 512 KiB per subframe, 4096 subframes = 2 GiB of tensor.
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const CLI = fileURLToPath(new URL('../packages/io/bin/pathweave.js', import.meta.url));
const LIMIT_MB = 300;
// Extra generate arguments, e.g. `node bench/dataset-memory.mjs --workers 1`.
const extraArgs = process.argv.slice(2);
const dir = mkdtempSync(join(tmpdir(), 'pathweave-bench-memory-'));
const scenario = {
  name: 'bench-memory',
  description: 'Four explicit static paths, sized for a 2 GiB tensor (a benchmark of memory, not of physics).',
  carrierHz: 28e9,
  timing: { subframeS: 0.001, subframes: 4096 },
  band: { subcarriers: 256, spacingHz: 120e3 },
  transmitter: { position: [0, 0, 10], array: { kind: 'upa', rows: 2, columns: 4 } },
  receiver: { position: [60, 5, 1.5], array: { kind: 'upa', rows: 4, columns: 8, orientation: { yawDeg: 180 } } },
  paths: [
    { aodDeg: [5, -8], aoaDeg: [-175, 8], delayS: 2.0e-7, powerDb: -95, phaseDeg: 10 },
    { aodDeg: [25, -4], aoaDeg: [-140, 3], delayS: 2.4e-7, powerDb: -103, phaseDeg: 80 },
    { aodDeg: [-15, -6], aoaDeg: [150, 5], delayS: 2.9e-7, powerDb: -108, phaseDeg: -40 },
    { aodDeg: [40, -2], aoaDeg: [-120, 1], delayS: 3.5e-7, powerDb: -112, phaseDeg: 170 },
  ],
  fading: { model: 'static' },
  seed: 1,
};
const file = join(dir, 'bench.json');
writeFileSync(file, JSON.stringify(scenario));

function vmHwmKb(pid) {
  try {
    const m = /VmHWM:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
    return m ? Number(m[1]) : undefined;
  } catch {
    return undefined;
  }
}

async function run(format) {
  const out = join(dir, `run.${format}`);
  const started = process.hrtime.bigint();
  const child = spawn(process.execPath, [CLI, 'generate', file, '--out', out, '--quiet', ...extraArgs], { stdio: ['ignore', 'ignore', 'inherit'] });
  let peak = 0;
  const timer = setInterval(() => {
    const kb = vmHwmKb(child.pid);
    if (kb !== undefined) peak = Math.max(peak, kb);
  }, 50);
  const code = await new Promise((resolve) => child.on('exit', resolve));
  clearInterval(timer);
  const seconds = Number(process.hrtime.bigint() - started) / 1e9;
  const bytes = statSync(out).size;
  rmSync(out, { force: true });
  rmSync(`${out}.json`, { force: true });
  return { format, code, bytes, seconds, peakMb: peak / 1024 };
}

const rows = [];
try {
  for (const format of ['npy', 'npz', 'h5']) rows.push(await run(format));
} finally {
  rmSync(dir, { recursive: true, force: true });
}
console.log(`pathweave generate ${extraArgs.join(' ')}, 2 GiB tensor [4096, 256, 32, 8] complex64, Node ${process.version}, limit ${LIMIT_MB} MB`);
console.log('| format | file bytes | seconds | peak RSS (VmHWM) | under limit |');
console.log('|---|---|---|---|---|');
for (const r of rows)
  console.log(`| ${r.format} | ${r.bytes} | ${r.seconds.toFixed(1)} | ${r.peakMb.toFixed(0)} MB | ${r.code === 0 && r.peakMb < LIMIT_MB ? 'yes' : 'NO'} |`);
process.exitCode = rows.every((r) => r.code === 0 && r.peakMb < LIMIT_MB) ? 0 : 1;
