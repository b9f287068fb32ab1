/**
 * generate() with worker threads: the same bytes for every worker count (docs/conventions.md,
 * Reproducibility: "the same tensor bytes ... on any machine and with any worker count"), and a
 * subframe range made by workers equal to that slice of the whole run. The scenarios are sized
 * to span several 8 MiB blocks so that blocks really go to different threads. Without
 * `checksum` a one-worker run fills in place (the kernel's own memory), with it through the
 * hash thread's shared buffers: the bytes are the same either way.
 */
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { BLOCK_TARGET_BYTES, generate, parseScenarioText } from '@pathweave/io';
import { FMA_KERNEL_NAME, loadWasmKernel, FMA_KERNEL_PATH, PLAIN_KERNEL_NAME, WASM_KERNEL_NAME } from '@pathweave/core';
import { defaultWorkers, sharedBlockArray } from '../packages/io/src/dataset/workers/pool.js';
import { runCli, tempDir, writeScenario } from './support/run.js';

// Explicit paths, Gauss-Markov fading: tx UPA 8x8, rx ULA 4, 128 subcarriers = 256 KiB per
// subframe, 32 subframes per block, 200 subframes = 7 blocks (the last one partial).
const explicitScenario = {
  carrierHz: 28e9,
  timing: { subframeS: 0.000125, subframes: 200 },
  band: { subcarriers: 128, spacingHz: 120e3 },
  transmitter: { position: [0, 0, 10], array: { kind: 'upa', rows: 8, columns: 8 } },
  receiver: { position: [40, 10, 1.5], velocity: [3, 0, 0], array: { kind: 'ula', elements: 4 } },
  paths: [
    { aodDeg: [14, -13], aoaDeg: [-166, 13], delayS: 140e-9, powerDb: -100 },
    { aodDeg: [30, -8], aoaDeg: [-120, 8], delayS: 170e-9, powerDb: -108, maxDopplerHz: 300 },
    { aodDeg: [-5, -10], aoaDeg: [170, 2], delayS: 201e-9, powerDb: -112 },
  ],
  fading: { model: 'gauss-markov' },
  seed: 77,
};

// Traced 2-D room with a moving receiver (paths re-traced every 10 subframes, so the products
// change between steps): tx UPA 4x4, rx ULA 4, 256 subcarriers = 128 KiB per subframe, 64
// subframes per block, 300 subframes = 5 blocks.
const tracedScenario = {
  carrierHz: 60e9,
  timing: { subframeS: 0.001, subframes: 300, geometryUpdateS: 0.01 },
  band: { subcarriers: 256, spacingHz: 240e3 },
  transmitter: { position: [1, 1, 0], array: { kind: 'upa', rows: 4, columns: 4 } },
  receiver: { position: [6, 3, 0], velocity: [1.5, 0.5, 0], array: { kind: 'ula', elements: 4 } },
  scene: {
    lineOfSight: true,
    maxReflectionOrder: 2,
    walls: [
      {
        vertices: [
          [0, 0],
          [12, 0],
        ],
        material: 'concrete',
      },
      {
        vertices: [
          [12, 0],
          [12, 8],
        ],
        material: 'glass',
      },
      {
        vertices: [
          [12, 8],
          [0, 8],
        ],
        material: 'wood',
      },
      {
        vertices: [
          [0, 8],
          [0, 0],
        ],
        material: 'brick',
      },
    ],
  },
  fading: { model: 'geometric' },
  seed: 5,
};

async function run(
  scenario: object,
  out: string,
  workers: number,
  range?: [number, number],
  checksum = true,
): Promise<{ file: Buffer; sha256: string | undefined }> {
  const text = JSON.stringify(scenario);
  const { scenario: parsed } = parseScenarioText(text);
  const report = await generate(parsed, text, { out, format: out.endsWith('.npz') ? 'npz' : 'npy', workers, checksum, ...(range ? { range } : {}) });
  return { file: readFileSync(out), sha256: report.sha256 };
}

describe('generate with worker threads', () => {
  it('spans several blocks (so the threads share the work)', () => {
    expect(Math.ceil(200 / Math.floor(BLOCK_TARGET_BYTES / (128 * 64 * 4 * 8)))).toBe(7);
    expect(defaultWorkers(1, 8)).toBe(1); // one block: no thread
    expect(defaultWorkers(10, 2)).toBe(1); // two cores: the main thread alone, in place
    expect(defaultWorkers(10, 8)).toBe(8); // one per core beyond that
    expect(defaultWorkers(3, 8)).toBe(3); // never more threads than blocks
  });

  it('writes the same .npz bytes (tensor, gains, tables) with 1, 2 and 3 workers: explicit Gauss-Markov paths', async () => {
    const dir = tempDir();
    const one = await run(explicitScenario, join(dir, 'w1.npz'), 1);
    const two = await run(explicitScenario, join(dir, 'w2.npz'), 2);
    const three = await run(explicitScenario, join(dir, 'w3.npz'), 3);
    expect(two.sha256).toBe(one.sha256);
    expect(three.sha256).toBe(one.sha256);
    expect(two.file.equals(one.file)).toBe(true);
    expect(three.file.equals(one.file)).toBe(true);
  });

  it('writes the same .npy bytes with 1 and 2 workers for a traced scene whose geometry moves', async () => {
    const dir = tempDir();
    const one = await run(tracedScenario, join(dir, 'w1.npy'), 1);
    const two = await run(tracedScenario, join(dir, 'w2.npy'), 2);
    expect(two.file.equals(one.file)).toBe(true);
  });

  it('without checksum: the same bytes filled in place (1 worker) or by 2 workers, and no sha256 recorded', async () => {
    const dir = tempDir();
    const hashed = await run(explicitScenario, join(dir, 'h.npy'), 1);
    const inPlace = await run(explicitScenario, join(dir, 'p.npy'), 1, undefined, false);
    const pooled = await run(explicitScenario, join(dir, 'q.npy'), 2, undefined, false);
    expect(inPlace.file.equals(hashed.file)).toBe(true);
    expect(pooled.file.equals(hashed.file)).toBe(true);
    expect([inPlace.sha256, pooled.sha256]).toEqual([undefined, undefined]);
    // The recorded checksum is hashlib's sha256 of the bytes numpy reads (node:crypto here: the
    // same FIPS 180-4 function, tested against hashlib in test/workers-hash.test.ts).
    const headerOf = (b: Buffer): number => 10 + b.readUInt16LE(8);
    expect(hashed.sha256).toBe(
      createHash('sha256')
        .update(hashed.file.subarray(headerOf(hashed.file)))
        .digest('hex'),
    );
    const side = (f: string): { tensor: { sha256?: string } } => JSON.parse(readFileSync(join(dir, `${f}.json`), 'utf8'));
    expect(side('h.npy').tensor.sha256).toBe(hashed.sha256);
    expect('sha256' in side('p.npy').tensor).toBe(false);
  });

  it('gives a range made by 2 workers the bytes of that slice of the whole run', async () => {
    const dir = tempDir();
    const whole = await run(tracedScenario, join(dir, 'whole.npy'), 1);
    const part = await run(tracedScenario, join(dir, 'part.npy'), 2, [37, 291]);
    const perSubframe = 256 * 4 * 16 * 8;
    const headerOf = (b: Buffer): number => 10 + b.readUInt16LE(8);
    const slice = whole.file.subarray(headerOf(whole.file) + 37 * perSubframe, headerOf(whole.file) + 291 * perSubframe);
    expect(part.file.subarray(headerOf(part.file)).equals(slice)).toBe(true);
    expect(part.sha256).toBe(createHash('sha256').update(slice).digest('hex'));
  });

  it('refuses a worker count that is not a positive integer', async () => {
    const text = JSON.stringify(explicitScenario);
    const { scenario } = parseScenarioText(text);
    await expect(generate(scenario, text, { out: join(tempDir(), 'x.npy'), format: 'npy', workers: 0 })).rejects.toThrow(
      'generate(): options.workers must be an integer >= 1, got 0',
    );
  });
});

describe('every kernel with worker threads', () => {
  // The kernel is chosen when the process starts, so each is run through the built command
  // line (build first); PATHWEAVE_KERNEL unset gives the fused kernel where it can run.
  const fused = loadWasmKernel(FMA_KERNEL_PATH).kernel !== undefined;
  const kernels: Array<[env: string | undefined, name: string]> = [
    ['js', PLAIN_KERNEL_NAME],
    ['simd', WASM_KERNEL_NAME],
    [undefined, fused ? FMA_KERNEL_NAME : WASM_KERNEL_NAME],
  ];
  it.each(kernels)('PATHWEAVE_KERNEL=%s: 1 and 2 workers write the same bytes, and the kernel %s is recorded', (env, name) => {
    const dir = tempDir();
    const file = writeScenario(dir, 's.json', explicitScenario);
    const bytes: Buffer[] = [];
    for (const workers of ['1', '2']) {
      const out = join(dir, `w${workers}.npy`);
      const r = runCli(['generate', file, '--out', out, '--workers', workers, '--subframes', '0:100', '--quiet'], { env: { PATHWEAVE_KERNEL: env } });
      expect(r.status, r.stderr).toBe(0);
      bytes.push(readFileSync(out));
      expect(JSON.parse(readFileSync(`${out}.json`, 'utf8')).kernel).toBe(name);
    }
    expect(bytes[1]!.equals(bytes[0]!)).toBe(true);
  });

  it('gives block buffers in shared memory, which pool workers and the hash thread read in place', () => {
    const a = sharedBlockArray(10, Float32Array),
      b = sharedBlockArray(3, Float64Array);
    expect([a.buffer instanceof SharedArrayBuffer, b.buffer instanceof SharedArrayBuffer, a.length, b.length]).toEqual([true, true, 10, 3]);
    expect(a.every((x) => x === 0) && b.every((x) => x === 0)).toBe(true);
  });
});
