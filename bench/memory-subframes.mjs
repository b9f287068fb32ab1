#!/usr/bin/env node
// Peak resident memory of `pathweave generate` (.npy) against the subframe count (not a test:
// run by hand, `node bench/memory-subframes.mjs [counts...]`, after `npx tsc -b`). Scenario: the
// street-corner example (a traced scene, the pedestrian walking, geometry updates every 10 ms,
// 64 KiB per subframe) at 2048, 8192 and 32768 subframes (128 MiB to 2 GiB of tensor). Peak
// resident set: VmHWM of /proc/<pid>/status, polled every 50 ms (it only grows). The tensor is
// streamed in blocks; what grows with S is the side arrays (gains, truth: S x L values), the
// traced epochs (S / 10 updates x L paths) and the side file, all written at the commit.
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const CLI = fileURLToPath(new URL('../packages/io/bin/pathweave.js', import.meta.url));
const EXAMPLE = fileURLToPath(new URL('../examples/street-corner-28ghz.json', import.meta.url));
const counts = process.argv.slice(2).map(Number);
const dir = mkdtempSync(join(tmpdir(), 'pathweave-bench-subframes-'));

function vmHwmKb(pid) {
  try {
    const m = /VmHWM:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
    return m ? Number(m[1]) : undefined;
  } catch {
    return undefined;
  }
}

async function run(subframes) {
  const scenario = JSON.parse(readFileSync(EXAMPLE, 'utf8'));
  scenario.timing.subframes = subframes;
  const file = join(dir, `s${subframes}.json`);
  writeFileSync(file, JSON.stringify(scenario));
  const out = join(dir, 'run.npy');
  const started = process.hrtime.bigint();
  const child = spawn(process.execPath, [CLI, 'generate', file, '--out', out, '--quiet', '--max-bytes', '4GiB'], { stdio: ['ignore', 'ignore', 'inherit'] });
  let peak = 0;
  const timer = setInterval(() => {
    const kb = vmHwmKb(child.pid);
    if (kb !== undefined) peak = Math.max(peak, kb);
  }, 50);
  const code = await new Promise((resolve) => child.on('exit', resolve));
  clearInterval(timer);
  const seconds = Number(process.hrtime.bigint() - started) / 1e9;
  const bytes = code === 0 ? statSync(out).size : 0;
  const side = code === 0 ? statSync(`${out}.json`).size : 0;
  rmSync(out, { force: true });
  rmSync(`${out}.json`, { force: true });
  return { subframes, code, bytes, side, seconds, peakMb: peak / 1024 };
}

const rows = [];
try {
  for (const S of counts.length > 0 ? counts : [2048, 8192, 32768]) rows.push(await run(S));
} finally {
  rmSync(dir, { recursive: true, force: true });
}
console.log(`pathweave generate .npy, examples/street-corner-28ghz.json at S subframes, Node ${process.version}`);
console.log('| subframes | .npy bytes | side file bytes | seconds | peak RSS (VmHWM) | exit |');
console.log('|---|---|---|---|---|---|');
for (const r of rows) console.log(`| ${r.subframes} | ${r.bytes} | ${r.side} | ${r.seconds.toFixed(1)} | ${r.peakMb.toFixed(0)} MB | ${r.code} |`);
