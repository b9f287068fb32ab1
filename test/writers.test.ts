/**
 * Several writers: two runs aimed at the same output path at once end with one
 * complete file, the one renamed last, and no reader ever sees a partial file under the final
 * name; two shards of one job on one machine never share a temporary file.
 *
 * Build first (`npx tsc -b`): the runs use the built binary and dist/.
 */
import { spawn } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { parseNpyHeader, type OutputFormat } from '@pathweave/io';
import { openDatasetReader, tensorOf } from '../packages/io/src/formats/reader.js';
import { CLI, ROOT, tempDir, writeScenario } from './support/run.js';

const fixture = JSON.parse(readFileSync(join(ROOT, 'test', 'fixtures', 'explicit-street-corner.json'), 'utf8')) as Record<string, any>;
// Gauss-Markov fading, so the two seeds give different tensors; 600 subframes of [64, 4, 32]
// complex64 = 37.5 MiB, long enough (about a second) for the two runs to overlap.
const scenario = { ...fixture, timing: { ...fixture.timing, subframes: 600 } };

interface Run {
  status: number | null;
  stderr: string;
}
function start(args: string[]): Promise<Run> {
  return new Promise((resolve) => {
    const child = spawn(process.execPath, [CLI, ...args], { stdio: ['ignore', 'ignore', 'pipe'], timeout: 120_000 });
    let stderr = '';
    child.stderr.on('data', (d) => (stderr += d));
    child.on('close', (status) => resolve({ status, stderr }));
  });
}
const sha256 = (bytes: Uint8Array): string => createHash('sha256').update(bytes).digest('hex');

/** The tensor's own hash as recorded in the file, checked against the tensor read back. */
async function tensorIdentity(path: string): Promise<string> {
  const reader = await openDatasetReader(path);
  try {
    const recorded = reader.attributes.find((a) => a.name === 'tensorSha256')?.value;
    const tensor = tensorOf(reader);
    const data = await reader.readRows(tensor.name, 0, tensor.shape[0]!);
    const bytes = new Uint8Array(data.buffer, data.byteOffset, data.byteLength);
    expect(sha256(bytes)).toBe(recorded); // complete and uncorrupted
    return recorded as string;
  } finally {
    await reader.close();
  }
}

describe('two runs aimed at the same output path at once', () => {
  for (const format of ['npy', 'npz', 'h5'] as OutputFormat[]) {
    it(`${format}: both exit 0, the file is exactly one of the two runs, never partial, no temporary file left`, async () => {
      const dir = tempDir('pathweave-writers-');
      const file = writeScenario(dir, 'scenario.json', scenario);
      // References: each seed alone.
      const refs = [1, 2].map((seed) => join(dir, `ref-${seed}.${format}`));
      // --checksum: the recorded tensorSha256 identifies each run's tensor (a plain run records none).
      for (const [i, ref] of refs.entries())
        expect((await start(['generate', file, '--out', ref, '--seed', String(i + 1), '--checksum', '--quiet'])).status).toBe(0);
      const refIds = await Promise.all(refs.map(tensorIdentity));
      expect(refIds[0]).not.toBe(refIds[1]); // the seeds do differ
      const refSizes = refs.map((r) => statSync(r).size);

      const out = join(dir, `shared.${format}`);
      const runs = Promise.all([1, 2].map((seed) => start(['generate', file, '--out', out, '--seed', String(seed), '--checksum', '--quiet'])));
      // While they run, every look at the final name finds nothing or a whole file.
      let done = false;
      void runs.then(() => (done = true));
      const seenSizes = new Set<number>();
      while (!done) {
        const size = existsSync(out) ? statSync(out, { throwIfNoEntry: false })?.size : undefined;
        if (size !== undefined) seenSizes.add(size);
        await new Promise((r) => setTimeout(r, 5));
      }
      const results = await runs;
      for (const r of results) expect(r.status, r.stderr).toBe(0);
      for (const size of seenSizes) expect(refSizes).toContain(size);

      const id = await tensorIdentity(out);
      expect(refIds).toContain(id);
      if (format !== 'h5') {
        // NPY and NPZ are byte-reproducible (fixed zip timestamps): the file is one reference exactly.
        const bytes = sha256(readFileSync(out));
        expect(refs.map((r) => sha256(readFileSync(r)))).toContain(bytes);
      }
      if (format === 'npy') {
        // The side file is itself whole (renamed atomically) and names one of the two tensors.
        const side = JSON.parse(readFileSync(`${out}.json`, 'utf8')) as { tensor: { sha256: string } };
        expect(refIds).toContain(side.tensor.sha256);
      }
      expect(readdirSync(dir).filter((f) => f.endsWith('.part'))).toEqual([]);
    }, 120_000);
  }
});

describe('shards of one job on one machine', () => {
  it('two shards run at once into one folder each write their own slice, bit for bit, and leave no temporary file', async () => {
    const dir = tempDir('pathweave-shards-');
    const file = writeScenario(dir, 'scenario.json', scenario);
    const full = join(dir, 'full.npy');
    expect((await start(['generate', file, '--out', full, '--quiet'])).status).toBe(0);
    // The same command line for both, as a job array runs it: each shard names its own part.
    const results = await Promise.all(
      [0, 1].map((i) => start(['generate', file, '--out', join(dir, 'job.part-{index}-of-{count}.npy'), '--shard', `${i}/2`, '--quiet'])),
    );
    const parts = [0, 1].map((i) => join(dir, `job.part-${i}-of-2.npy`));
    for (const r of results) expect(r.status, r.stderr).toBe(0);
    const data = (p: string): Buffer => {
      const bytes = readFileSync(p);
      return bytes.subarray(parseNpyHeader(bytes).dataOffset);
    };
    // docs/conventions.md: shard I of N takes subframes floor(I S / N) .. floor((I+1) S / N) - 1.
    const fullData = data(full);
    const half = fullData.length / 2;
    expect(data(parts[0]!).equals(fullData.subarray(0, half))).toBe(true);
    expect(data(parts[1]!).equals(fullData.subarray(half))).toBe(true);
    expect(readdirSync(dir).filter((f) => f.endsWith('.part'))).toEqual([]);
  }, 120_000);

  it('two processes opening 300 temporary files each for the same target at once never share one', async () => {
    // Each process holds all its files open, writes its own mark into each, waits so the two
    // overlap, reads every file back, and removes them (abort).
    const dir = tempDir('pathweave-temporaries-');
    const target = join(dir, 'same-target.npy');
    const script = `
      import { AtomicFile } from ${JSON.stringify(join(ROOT, 'packages', 'io', 'dist', 'formats', 'atomic.js'))};
      import { readFileSync } from 'node:fs';
      const files = [];
      for (let i = 0; i < 300; i++) {
        const f = await AtomicFile.create(${JSON.stringify(target)});
        await f.write(new TextEncoder().encode(process.pid + ':' + i));
        files.push(f);
      }
      await new Promise((r) => setTimeout(r, 1500));
      const intact = files.every((f, i) => readFileSync(f.temporary, 'utf8') === process.pid + ':' + i);
      const names = files.map((f) => f.temporary);
      for (const f of files) await f.abort();
      process.stdout.write(JSON.stringify({ intact, names }));
    `;
    const runOne = (): Promise<{ intact: boolean; names: string[] }> =>
      new Promise((resolve, reject) => {
        const child = spawn(process.execPath, ['--input-type=module', '-e', script], { stdio: ['ignore', 'pipe', 'inherit'] });
        let out = '';
        child.stdout.on('data', (d) => (out += d));
        child.on('close', (code) => (code === 0 ? resolve(JSON.parse(out)) : reject(new Error(`exit ${code}`))));
      });
    const [a, b] = await Promise.all([runOne(), runOne()]);
    expect(a!.intact && b!.intact).toBe(true);
    const all = [...a!.names, ...b!.names];
    expect(new Set(all).size).toBe(600);
    for (const name of all) expect(name.startsWith(join(dir, '.same-target.npy.'))).toBe(true);
    expect(readdirSync(dir)).toEqual([]);
  }, 60_000);
});
