#!/usr/bin/env node
// Time of one full read pass of a deflated .npz tensor against its size (not a test: run by
// hand, `node bench/npz-read.mjs`, after `npx tsc -b`). A deflated entry is inflated once per
// read pass, so the time grows linearly with the size: the ratios of the last column stay near
// 2 (quadratic, inflating from the start for every row block, would give 4). Tensors of 64, 128
// and 256 MiB ([S, 256, 32, 8] complex64, 4 explicit paths, deflate level 6) are read in blocks
// of 8 subframes (4 MiB) with readRowBlocks, the way inspect and merge read; each size is read 3
// times and the fastest pass is kept (the machine is shared).
import { mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { generate, openDatasetReader, parseScenarioText, readRowBlocks } from '@pathweave/io';

const dir = mkdtempSync(join(tmpdir(), 'pathweave-bench-npz-'));
const scenario = (subframes) => ({
  carrierHz: 28e9,
  timing: { subframeS: 0.001, subframes },
  band: { subcarriers: 256, spacingHz: 120e3 },
  transmitter: { position: [0, 0, 10], array: { kind: 'upa', rows: 2, columns: 4 } },
  receiver: { position: [60, 5, 1.5], array: { kind: 'upa', rows: 4, columns: 8, orientation: { yawDeg: 180 } } },
  paths: [
    { aodDeg: [5, -8], aoaDeg: [-175, 8], delayS: 2.0e-7, powerDb: -95, phaseDeg: 10 },
    { aodDeg: [25, -4], aoaDeg: [-140, 3], delayS: 2.4e-7, powerDb: -103, phaseDeg: 80 },
    { aodDeg: [-15, -6], aoaDeg: [150, 5], delayS: 2.9e-7, powerDb: -108, phaseDeg: -40 },
    { aodDeg: [40, -2], aoaDeg: [-120, 1], delayS: 3.5e-7, powerDb: -112, phaseDeg: 170 },
  ],
  fading: { model: 'gauss-markov', speedMps: 1.5 },
  seed: 1,
});
const rows = [];
try {
  for (const mib of [64, 128, 256]) {
    const S = (mib * 2 ** 20) / (256 * 256 * 8);
    const text = JSON.stringify(scenario(S));
    const out = join(dir, `run-${mib}.npz`);
    await generate(parseScenarioText(text).scenario, text, { out, format: 'npz', deflate: 6 });
    let best = Infinity;
    for (let k = 0; k < 3; k++) {
      const reader = await openDatasetReader(out);
      const t0 = performance.now();
      let bytes = 0;
      for await (const block of readRowBlocks(reader, 'H', 8)) bytes += block.byteLength;
      best = Math.min(best, (performance.now() - t0) / 1000);
      await reader.close();
      if (bytes !== mib * 2 ** 20) throw new Error(`read ${bytes} bytes of a ${mib} MiB tensor`);
    }
    rows.push({ mib, fileBytes: statSync(out).size, seconds: best });
    rmSync(out);
  }
} finally {
  rmSync(dir, { recursive: true, force: true });
}
console.log(`one read pass of a deflated .npz tensor (level 6, blocks of 8 subframes), Node ${process.version}`);
console.log('| tensor | file bytes | seconds (best of 3) | ratio to the size before |');
console.log('|---|---|---|---|');
rows.forEach((r, i) =>
  console.log(`| ${r.mib} MiB | ${r.fileBytes} | ${r.seconds.toFixed(2)} | ${i === 0 ? '-' : (r.seconds / rows[i - 1].seconds).toFixed(2)} |`),
);
