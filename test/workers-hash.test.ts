/**
 * The hash thread of generate (packages/io/src/dataset/workers/hash.ts): its SHA-256 over a stream of
 * shared blocks against Python's hashlib (FIPS 180-4 SHA-256, hashlib (C)), and generate's
 * one-worker runs that use it: the tensorSha256 of a multi-block file equals hashlib over the
 * tensor numpy reads back, progress arrives in order, and an abort leaves no file behind.
 */
import { existsSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { BLOCK_TARGET_BYTES, generate, parseScenarioText } from '@pathweave/io';
import { HashThread } from '../packages/io/src/dataset/workers/hash.js';
import { hasPython, pythonJson } from './support/python.js';
import { tempDir } from './support/run.js';

/** Deterministic bytes (a small LCG) in a SharedArrayBuffer. */
function sharedBytes(n: number, seed: number): Uint8Array {
  const out = new Uint8Array(new SharedArrayBuffer(n));
  let x = seed >>> 0;
  for (let i = 0; i < n; i++) {
    x = (Math.imul(x, 1664525) + 1013904223) >>> 0;
    out[i] = x >>> 24;
  }
  return out;
}

// tx UPA 8x8, rx ULA 4, 128 subcarriers = 256 KiB per subframe: 32 subframes per 8 MiB block,
// 300 subframes = 10 blocks, so each of the three buffers is filled again at least once.
const scenario = {
  carrierHz: 28e9,
  timing: { subframeS: 0.000125, subframes: 300 },
  band: { subcarriers: 128, spacingHz: 120e3 },
  transmitter: { position: [0, 0, 10], array: { kind: 'upa', rows: 8, columns: 8 } },
  receiver: { position: [40, 10, 1.5], velocity: [3, 0, 0], array: { kind: 'ula', elements: 4 } },
  paths: [
    { aodDeg: [14, -13], aoaDeg: [-166, 13], delayS: 140e-9, powerDb: -100 },
    { aodDeg: [30, -8], aoaDeg: [-120, 8], delayS: 170e-9, powerDb: -108 },
  ],
  fading: { model: 'gauss-markov' },
  seed: 91,
};

describe.runIf(hasPython('numpy'))('hash thread', () => {
  it('gives hashlib.sha256 of the concatenated ranges (empty, odd sizes, offsets into a buffer) (hashlib (C))', async () => {
    const big = sharedBytes((1 << 20) + 3, 5);
    const ranges = [sharedBytes(0, 1), sharedBytes(1, 2), sharedBytes(63, 3), sharedBytes(64, 4), big.subarray(7), big.subarray(0, 7)];
    const h = new HashThread();
    try {
      await Promise.all(ranges.map((r) => h.update(r))); // sent in order, hashed in order
      const hex = await h.digest();
      const ref = pythonJson<string>(
        `import sys, json, hashlib
print(json.dumps(hashlib.sha256(bytes.fromhex(sys.stdin.read())).hexdigest()))`,
        [],
        ranges.map((r) => Buffer.from(r).toString('hex')).join(''),
      );
      expect(hex).toBe(ref);
    } finally {
      await h.close();
    }
  });

  it('refuses a view of an ordinary ArrayBuffer (the thread could not see it)', async () => {
    const h = new HashThread();
    try {
      expect(() => h.update(new Uint8Array(4))).toThrow('HashThread.update(): bytes must be a view of a SharedArrayBuffer, got a view of ArrayBuffer');
    } finally {
      await h.close();
    }
  });
});

describe.runIf(hasPython('numpy'))('generate with one worker and a hash thread', () => {
  it('spans ten blocks', () => {
    expect(Math.ceil(300 / Math.floor(BLOCK_TARGET_BYTES / (128 * 64 * 4 * 8)))).toBe(10);
  });

  it('records the tensorSha256 hashlib computes over the tensor numpy reads back, with progress in order (numpy, hashlib (C))', async () => {
    const out = join(tempDir(), 'h.npy');
    const text = JSON.stringify(scenario);
    const { scenario: parsed } = parseScenarioText(text);
    const progress: number[] = [];
    const report = await generate(parsed, text, { out, format: 'npy', workers: 1, checksum: true, onProgress: (done) => progress.push(done) });
    expect(progress).toEqual([32, 64, 96, 128, 160, 192, 224, 256, 288, 300]);
    const ref = pythonJson<{ sha: string; shape: number[] }>(
      `import sys, json, hashlib, numpy as np
a = np.load(sys.argv[1])
print(json.dumps({'sha': hashlib.sha256(np.ascontiguousarray(a).tobytes()).hexdigest(), 'shape': list(a.shape)}))`,
      [out],
    );
    expect(ref.shape).toEqual([300, 128, 4, 64]);
    expect(report.sha256).toBe(ref.sha);
  });

  it.each([true, false])('stops on abort between blocks and leaves no file behind (checksum %s: hash thread, or in place)', async (checksum) => {
    const dir = tempDir();
    const out = join(dir, 'a.npy');
    const text = JSON.stringify(scenario);
    const { scenario: parsed } = parseScenarioText(text);
    const abort = new AbortController();
    await expect(
      generate(parsed, text, { out, format: 'npy', workers: 1, checksum, signal: abort.signal, onProgress: () => abort.abort(new Error('stop here')) }),
    ).rejects.toThrow('stop here');
    expect(existsSync(out)).toBe(false);
    expect(readdirSync(dir)).toEqual([]);
  });
});
