/**
 * The WebAssembly SIMD kernel against the plain JavaScript kernel over a sweep of sizes (odd
 * sizes, one element pair, one subcarrier, one path), and both against numpy's matmul.
 * Agreement bound: design.md (Reproducibility) asks kernels to agree to 1e-6 relative. The f32
 * kernel rounds weights and products to float32 (relative 2^-24 = 6e-8 each) and accumulates L
 * terms in float32: for these L <= 33 the Frobenius error is a few 1e-7 at most, and 1e-6 is
 * the contract. The f64 kernel differs from the plain one only by the order of two additions
 * per term, a few ulps: 1e-13.
 */
import { describe, expect, it } from 'vitest';
import { accumulatePaths, accumulatePathsPlain, KERNEL_NAME, loadWasmKernel, PLAIN_KERNEL_NAME, WASM_KERNEL_NAME, WASM_KERNEL_PATH } from '../src/kernels/index.js';
import { hasPython, pythonJson } from '../../../test/support/python.js';

const loaded = loadWasmKernel();
const wasm = loaded.kernel;

/** Deterministic pseudo-random values in [-1, 1) (a small LCG, so the test needs no seed source). */
function values(n: number, seed: number): Float64Array {
  const out = new Float64Array(n);
  let x = seed >>> 0;
  for (let i = 0; i < n; i++) {
    x = (Math.imul(x, 1664525) + 1013904223) >>> 0;
    out[i] = x / 2 ** 31 - 1;
  }
  return out;
}

function relativeFrobenius(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let num = 0, den = 0;
  for (let i = 0; i < a.length; i++) {
    num += (a[i]! - b[i]!) ** 2;
    den += b[i]! ** 2;
  }
  return Math.sqrt(num / den);
}

const SIZES: Array<[bins: number, L: number, M: number]> = [];
for (const bins of [1, 2, 5, 33]) for (const L of [1, 2, 7, 33]) for (const M of [1, 2, 3, 7, 8, 9, 15, 16, 17, 63, 1027]) SIZES.push([bins, L, M]);

describe('kernel choice', () => {
  it('uses the SIMD kernel when the compiled file validates, and records its name', () => {
    // Built by scripts/setup.mjs; Node 20 validates 128-bit SIMD.
    expect(loaded.reason, `${WASM_KERNEL_PATH}: run node scripts/setup.mjs`).toBeUndefined();
    expect(KERNEL_NAME).toBe(process.env.PATHWEAVE_KERNEL === 'js' ? PLAIN_KERNEL_NAME : WASM_KERNEL_NAME);
  });

  it('reports a missing file instead of failing', () => {
    expect(loadWasmKernel('/nonexistent/accumulate.wasm')).toEqual({ reason: '/nonexistent/accumulate.wasm is missing (run node scripts/setup.mjs)' });
  });
});

describe.runIf(wasm !== undefined)('SIMD kernel against the plain kernel', () => {
  it.each(SIZES)('complex64: bins %i, L %i, M %i within 1e-6 relative (design.md)', (bins, L, M) => {
    const w = values(2 * bins * L, 1 + bins + 100 * L), p = values(2 * L * M, 7 + M);
    const plain = new Float32Array(2 * bins * M), fast = new Float32Array(2 * bins * M).fill(99);
    accumulatePathsPlain(plain, 0, w, p, bins, L, M, new Float64Array(2 * M));
    wasm!(fast, 0, w, p, bins, L, M);
    expect(relativeFrobenius(fast, plain)).toBeLessThan(1e-6);
  });

  it.each(SIZES)('complex128: bins %i, L %i, M %i within 1e-13 relative', (bins, L, M) => {
    const w = values(2 * bins * L, 3 + bins + 100 * L), p = values(2 * L * M, 11 + M);
    const plain = new Float64Array(2 * bins * M), fast = new Float64Array(2 * bins * M).fill(99);
    accumulatePathsPlain(plain, 0, w, p, bins, L, M, new Float64Array(2 * M));
    wasm!(fast, 0, w, p, bins, L, M);
    expect(relativeFrobenius(fast, plain)).toBeLessThan(1e-13);
  });

  it('writes only [outOffset, outOffset + 2 bins M) and overwrites what was there', () => {
    const bins = 3, L = 2, M = 5, off = 6;
    const w = values(2 * bins * L, 5), p = values(2 * L * M, 6);
    const plain = new Float32Array(off + 2 * bins * M + 4).fill(-7), fast = new Float32Array(off + 2 * bins * M + 4).fill(-7);
    accumulatePathsPlain(plain, off, w, p, bins, L, M, new Float64Array(2 * M));
    wasm!(fast, off, w, p, bins, L, M);
    expect(Array.from(fast.subarray(0, off))).toEqual(Array(off).fill(-7));
    expect(Array.from(fast.subarray(off + 2 * bins * M))).toEqual([-7, -7, -7, -7]);
    expect(relativeFrobenius(fast.subarray(off, off + 2 * bins * M), plain.subarray(off, off + 2 * bins * M))).toBeLessThan(1e-6);
  });

  it('sees products changed in place between calls (moving geometry: nothing stale is cached)', () => {
    const bins = 4, L = 3, M = 9;
    const w = values(2 * bins * L, 8), p = values(2 * L * M, 9);
    const fast = new Float32Array(2 * bins * M), plain = new Float32Array(2 * bins * M);
    wasm!(fast, 0, w, p, bins, L, M);
    p.set(values(p.length, 10));
    wasm!(fast, 0, w, p, bins, L, M);
    accumulatePathsPlain(plain, 0, w, p, bins, L, M, new Float64Array(2 * M));
    expect(relativeFrobenius(fast, plain)).toBeLessThan(1e-6);
  });

  it('gives each bin the same bits whichever bins a call covers (large outputs are split into chunks)', () => {
    const bins = 70, L = 8, M = 1024; // 70 bins of 8 KiB: several 128 KiB chunks
    const w = values(2 * bins * L, 12), p = values(2 * L * M, 13);
    const whole = new Float32Array(2 * bins * M);
    wasm!(whole, 0, w, p, bins, L, M);
    const part = new Float32Array(2 * 5 * M);
    wasm!(part, 0, w.subarray(2 * 61 * L, 2 * 66 * L), p, 5, L, M);
    expect(part).toEqual(whole.subarray(2 * 61 * M, 2 * 66 * M));
  });

  it('treats L = 0 as an empty sum', () => {
    const out = new Float32Array(8).fill(3);
    wasm!(out, 0, new Float64Array(0), new Float64Array(0), 2, 0, 2);
    expect(Array.from(out)).toEqual(Array(8).fill(0));
  });
});

describe.runIf(hasPython('numpy'))('kernel in use against numpy', () => {
  it('equals numpy.matmul of the complex matrices W [bins, L] @ P [L, M] (numpy (C))', () => {
    const bins = 5, L = 3, M = 7;
    const w = values(2 * bins * L, 21), p = values(2 * L * M, 22);
    const out = new Float32Array(2 * bins * M);
    accumulatePaths(out, 0, w, p, bins, L, M, new Float64Array(2 * M));
    const ref = pythonJson<number[]>(
      `import json, sys, numpy as np
d = json.load(sys.stdin)
W = np.array(d['w']).view(np.complex128).reshape(${bins}, ${L})
P = np.array(d['p']).view(np.complex128).reshape(${L}, ${M})
print(json.dumps((W @ P).astype(np.complex64).view(np.float32).astype(float).ravel().tolist()))`,
      [],
      JSON.stringify({ w: Array.from(w), p: Array.from(p) }),
    );
    expect(relativeFrobenius(out, ref)).toBeLessThan(1e-6);
  });
});
