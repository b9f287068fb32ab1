/**
 * The WebAssembly SIMD kernels (multiply then add, and fused multiply-add) against the plain
 * JavaScript kernel over a sweep of sizes (odd sizes, one element pair, one subcarrier, one
 * path), and the kernel in use against numpy's matmul.
 * Agreement bound: docs/conventions.md (Reproducibility) asks kernels to agree to 1e-6 relative. The f32
 * kernel rounds weights and products to float32 (relative 2^-24 = 6e-8 each) and accumulates L
 * terms in float32: for these L <= 33 the Frobenius error is a few 1e-7 at most, and 1e-6 is
 * the contract. The f64 kernel differs from the plain one only by the order of two additions
 * per term (and, fused, one rounding less per multiply-add), a few ulps: 1e-13.
 */
import { describe, expect, it, vi } from 'vitest';
import {
  accumulatePaths,
  accumulatePathsPlain,
  allocateKernelArray,
  FMA_KERNEL_NAME,
  FMA_KERNEL_PATH,
  KERNEL_NAME,
  loadWasmKernel,
  PLAIN_KERNEL_NAME,
  WASM_KERNEL_NAME,
  WASM_KERNEL_PATH,
} from '../src/kernels/index.js';
import { hasPython, pythonJson } from '../../../test/support/python.js';

const loaded = loadWasmKernel();
const fmaLoaded = loadWasmKernel(FMA_KERNEL_PATH);
/** Both SIMD builds, each tested over the same sweep. */
const BUILDS = [
  { name: WASM_KERNEL_NAME, ...loaded },
  { name: FMA_KERNEL_NAME, ...fmaLoaded },
];

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
  let num = 0,
    den = 0;
  for (let i = 0; i < a.length; i++) {
    num += (a[i]! - b[i]!) ** 2;
    den += b[i]! ** 2;
  }
  return Math.sqrt(num / den);
}

/** Bit patterns of a float array (exact comparison, -0 and NaN included). */
const bits = (a: Float32Array | Float64Array): Uint32Array => new Uint32Array(a.buffer, a.byteOffset, a.byteLength / 4);

const SIZES: Array<[bins: number, L: number, M: number]> = [];
for (const bins of [1, 2, 5, 33]) for (const L of [1, 2, 7, 33]) for (const M of [1, 2, 3, 7, 8, 9, 15, 16, 17, 63, 1027]) SIZES.push([bins, L, M]);

describe('kernel choice', () => {
  it('uses the fused SIMD kernel where it validates and fuses, else the SIMD kernel, and records its name', () => {
    // Built by scripts/setup.mjs; Node 20 validates 128-bit SIMD, and relaxed SIMD behind V8's
    // flag (set by loadWasmKernel); x86-64 with FMA3 and arm64 fuse the relaxed multiply-add.
    expect(loaded.reason, `${WASM_KERNEL_PATH}: run node scripts/setup.mjs`).toBeUndefined();
    expect(loaded.fused).toBe(false);
    const forced = process.env.PATHWEAVE_KERNEL;
    const expected = forced === 'js' ? PLAIN_KERNEL_NAME : forced === 'simd' || fmaLoaded.kernel === undefined ? WASM_KERNEL_NAME : FMA_KERNEL_NAME;
    expect(KERNEL_NAME).toBe(expected);
    if (fmaLoaded.kernel !== undefined) expect(fmaLoaded.fused).toBe(true);
    else expect(fmaLoaded.reason).toMatch(/accumulate-fma\.wasm/);
  });

  it.runIf(fmaLoaded.kernel !== undefined)('the fused kernel rounds each multiply-add once, the SIMD kernel twice (IEEE 754-2008 fusedMultiplyAdd (M))', () => {
    // w = -1 + (1 + e) j, P = (1 + e) + 1 j: the imaginary part is (-1)(1) + (1 + e)(1 + e).
    // Fused: one rounding of 2e + e^2, exact in float32 for e = 2^-12. Multiply then add:
    // (1 + e)^2 = 1 + 2e + e^2 rounds to 1 + 2e (e^2 = 2^-24 is half an ulp of 1, a tie, to
    // even), then -1 + (1 + 2e) = 2e.
    const e = 2 ** -12;
    const w = Float64Array.of(-1, 1 + e),
      p = Float64Array.of(1 + e, 1);
    const fused = new Float32Array(2),
      twice = new Float32Array(2);
    fmaLoaded.kernel!(fused, 0, w, p, 1, 1, 1);
    loaded.kernel!(twice, 0, w, p, 1, 1, 1);
    expect([fused[1], twice[1]]).toEqual([2 * e + e * e, 2 * e]);
  });

  it('reports a missing file instead of failing', () => {
    expect(loadWasmKernel('/nonexistent/accumulate.wasm')).toEqual({ reason: '/nonexistent/accumulate.wasm is missing (run node scripts/setup.mjs)' });
  });
});

for (const { name, kernel: wasm, allocate } of BUILDS) {
  describe.runIf(wasm !== undefined)(`${name} kernel against the plain kernel`, () => {
    it.each(SIZES)('complex64: bins %i, L %i, M %i within 1e-6 relative (docs/conventions.md)', (bins, L, M) => {
      const w = values(2 * bins * L, 1 + bins + 100 * L),
        p = values(2 * L * M, 7 + M);
      const plain = new Float32Array(2 * bins * M),
        fast = new Float32Array(2 * bins * M).fill(99);
      accumulatePathsPlain(plain, 0, w, p, bins, L, M, new Float64Array(2 * M));
      wasm!(fast, 0, w, p, bins, L, M);
      expect(relativeFrobenius(fast, plain)).toBeLessThan(1e-6);
    });

    it.each(SIZES)('complex128: bins %i, L %i, M %i within 1e-13 relative', (bins, L, M) => {
      const w = values(2 * bins * L, 3 + bins + 100 * L),
        p = values(2 * L * M, 11 + M);
      const plain = new Float64Array(2 * bins * M),
        fast = new Float64Array(2 * bins * M).fill(99);
      accumulatePathsPlain(plain, 0, w, p, bins, L, M, new Float64Array(2 * M));
      wasm!(fast, 0, w, p, bins, L, M);
      expect(relativeFrobenius(fast, plain)).toBeLessThan(1e-13);
    });

    it('writes only [outOffset, outOffset + 2 bins M) and overwrites what was there', () => {
      const bins = 3,
        L = 2,
        M = 5,
        off = 6;
      const w = values(2 * bins * L, 5),
        p = values(2 * L * M, 6);
      const plain = new Float32Array(off + 2 * bins * M + 4).fill(-7),
        fast = new Float32Array(off + 2 * bins * M + 4).fill(-7);
      accumulatePathsPlain(plain, off, w, p, bins, L, M, new Float64Array(2 * M));
      wasm!(fast, off, w, p, bins, L, M);
      expect(Array.from(fast.subarray(0, off))).toEqual(Array(off).fill(-7));
      expect(Array.from(fast.subarray(off + 2 * bins * M))).toEqual([-7, -7, -7, -7]);
      expect(relativeFrobenius(fast.subarray(off, off + 2 * bins * M), plain.subarray(off, off + 2 * bins * M))).toBeLessThan(1e-6);
    });

    it('sees products changed in place between calls (moving geometry: nothing stale is cached)', () => {
      const bins = 4,
        L = 3,
        M = 9;
      const w = values(2 * bins * L, 8),
        p = values(2 * L * M, 9);
      const fast = new Float32Array(2 * bins * M),
        plain = new Float32Array(2 * bins * M);
      wasm!(fast, 0, w, p, bins, L, M);
      p.set(values(p.length, 10));
      wasm!(fast, 0, w, p, bins, L, M);
      accumulatePathsPlain(plain, 0, w, p, bins, L, M, new Float64Array(2 * M));
      expect(relativeFrobenius(fast, plain)).toBeLessThan(1e-6);
    });

    it.each([
      ['copying path', false, Float32Array],
      ['in place', true, Float32Array],
      ['copying path', false, Float64Array],
      ['in place', true, Float64Array],
    ] as const)(
      'a products stamp (%s, %o, %o): the same bits as without one; a new stamp reads new products; the same stamp reuses the staged copy',
      (_, inPlace, type) => {
        const bins = 5,
          L = 3,
          M = 11;
        const make = (): Float32Array | Float64Array => (inPlace ? allocate!(2 * bins * M, type) : new type(2 * bins * M));
        const w = values(2 * bins * L, 14),
          w2 = values(2 * bins * L, 15),
          p = values(2 * L * M, 16);
        const p17 = values(p.length, 17);
        // References without a stamp first (on the copying path they share the stamped calls' instance).
        const ref1 = make(),
          ref2 = make();
        wasm!(ref1, 0, w2, p, bins, L, M);
        wasm!(ref2, 0, w2, p17, bins, L, M);
        const stamped = make();
        // Other weights with the same stamp: the products staged by the first call serve the second.
        wasm!(stamped, 0, w, p, bins, L, M, 41);
        wasm!(stamped, 0, w2, p, bins, L, M, 41);
        expect(bits(stamped)).toEqual(bits(ref1));
        // Changed in place with a new stamp: read again.
        p.set(p17);
        wasm!(stamped, 0, w2, p, bins, L, M, 42);
        expect(bits(stamped)).toEqual(bits(ref2));
        // The same stamp after a change breaks the caller's promise: the staged copy is what counts.
        p.set(values(p.length, 18));
        wasm!(stamped, 0, w2, p, bins, L, M, 42);
        expect(bits(stamped)).toEqual(bits(ref2));
        const ref3 = make();
        wasm!(ref3, 0, w2, p, bins, L, M);
        expect(bits(ref3)).not.toEqual(bits(ref2));
      },
    );

    it('gives each bin the same bits whichever bins a call covers (large outputs are split into chunks)', () => {
      const bins = 70,
        L = 8,
        M = 1024; // 70 bins of 8 KiB: several 128 KiB chunks
      const w = values(2 * bins * L, 12),
        p = values(2 * L * M, 13);
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

  describe.runIf(wasm !== undefined)(`${name} kernel writing in place into its own memory (allocate)`, () => {
    // The same sweep as above, the output at an offset inside an allocated array: against the
    // plain kernel, and bit for bit against the copying path (the same arithmetic per lane).
    it.each(SIZES)('complex64: bins %i, L %i, M %i: plain within 1e-6, copying path bit for bit', (bins, L, M) => {
      const w = values(2 * bins * L, 31 + bins + 100 * L),
        p = values(2 * L * M, 37 + M);
      const off = 6; // not a multiple of 4 floats: unaligned vector stores
      const plain = new Float32Array(2 * bins * M),
        copied = new Float32Array(2 * bins * M);
      const inPlace = allocate!(off + 2 * bins * M + 2, Float32Array).fill(99);
      accumulatePathsPlain(plain, 0, w, p, bins, L, M, new Float64Array(2 * M));
      wasm!(copied, 0, w, p, bins, L, M);
      wasm!(inPlace, off, w, p, bins, L, M);
      const mine = inPlace.subarray(off, off + 2 * bins * M);
      expect(relativeFrobenius(mine, plain)).toBeLessThan(1e-6);
      expect(bits(mine)).toEqual(bits(copied));
      expect(Array.from(inPlace.subarray(0, off))).toEqual(Array(off).fill(99));
      expect(Array.from(inPlace.subarray(off + 2 * bins * M))).toEqual([99, 99]);
    });

    it.each(SIZES)('complex128: bins %i, L %i, M %i: plain within 1e-13, copying path bit for bit', (bins, L, M) => {
      const w = values(2 * bins * L, 41 + bins + 100 * L),
        p = values(2 * L * M, 43 + M);
      const plain = new Float64Array(2 * bins * M),
        copied = new Float64Array(2 * bins * M);
      const inPlace = allocate!(2 + 2 * bins * M, Float64Array);
      accumulatePathsPlain(plain, 0, w, p, bins, L, M, new Float64Array(2 * M));
      wasm!(copied, 0, w, p, bins, L, M);
      wasm!(inPlace, 2, w, p, bins, L, M);
      expect(relativeFrobenius(inPlace.subarray(2), plain)).toBeLessThan(1e-13);
      expect(bits(inPlace.subarray(2))).toEqual(bits(copied));
    });

    it('gives each bin the same bits whichever bins a call covers (bins paired differently, odd last bin)', () => {
      const bins = 70,
        L = 8,
        M = 1030; // M not a multiple of 4: tail columns too
      const w = values(2 * bins * L, 52),
        p = values(2 * L * M, 53);
      const whole = allocate!(2 * bins * M, Float32Array);
      wasm!(whole, 0, w, p, bins, L, M);
      for (const [k0, n] of [
        [61, 5],
        [0, 1],
        [69, 1],
        [3, 64],
      ] as const) {
        const part = allocate!(2 * n * M, Float32Array);
        wasm!(part, 0, w.subarray(2 * k0 * L, 2 * (k0 + n) * L), p, n, L, M);
        expect(bits(part), `bins ${k0}..${k0 + n - 1}`).toEqual(bits(whole.subarray(2 * k0 * M, 2 * (k0 + n) * M)));
      }
    });

    it('sees products changed in place between calls (nothing stale is cached)', () => {
      const bins = 4,
        L = 3,
        M = 9;
      const w = values(2 * bins * L, 58),
        p = values(2 * L * M, 59);
      const fast = allocate!(2 * bins * M, Float32Array),
        plain = new Float32Array(2 * bins * M);
      wasm!(fast, 0, w, p, bins, L, M);
      p.set(values(p.length, 60));
      wasm!(fast, 0, w, p, bins, L, M);
      accumulatePathsPlain(plain, 0, w, p, bins, L, M, new Float64Array(2 * M));
      expect(relativeFrobenius(fast, plain)).toBeLessThan(1e-6);
    });

    it('rounds products and weights to float32 as a Float32Array store does, and turns Q by +90 degrees', () => {
      // With w = 1 the sum is 0 + (1 P + 0 Q) = P exactly; with w = j it is Q = (-im, re); with
      // P = 1 it is the weight itself: the kernel's float32 inputs, bit for bit.
      const M = 7,
        p = values(2 * M, 61).map((x) => x * 1e3 + 1 / 3);
      const out = allocate!(2 * M, Float32Array);
      wasm!(out, 0, Float64Array.of(1, 0), p, 1, 1, M);
      expect(bits(out)).toEqual(bits(Float32Array.from(p)));
      wasm!(out, 0, Float64Array.of(0, 1), p, 1, 1, M);
      const turned = new Float32Array(2 * M);
      for (let m = 0; m < M; m++) {
        turned[2 * m] = -Math.fround(p[2 * m + 1]!);
        turned[2 * m + 1] = Math.fround(p[2 * m]!);
      }
      expect(bits(out)).toEqual(bits(turned));
      const w = values(2 * 3, 62).map((x) => x / 7); // 6 weights: a SIMD group of 4 and a tail of 2
      const out3 = allocate!(2 * 3, Float32Array);
      wasm!(out3, 0, w, Float64Array.of(1, 0), 3, 1, 1);
      expect(bits(out3)).toEqual(bits(Float32Array.from(w)));
    });

    it('falls back to the copying path when a call needs more workspace than an allocated array reserves', () => {
      const bins = 3,
        L = 33,
        M = 20000; // products alone 10 MiB as float64, over the 4 MiB reserved
      const w = values(2 * bins * L, 63),
        p = values(2 * L * M, 64);
      const fast = allocate!(2 * bins * M, Float32Array),
        copied = new Float32Array(2 * bins * M),
        plain = new Float32Array(2 * bins * M);
      wasm!(fast, 0, w, p, bins, L, M);
      wasm!(copied, 0, w, p, bins, L, M);
      accumulatePathsPlain(plain, 0, w, p, bins, L, M, new Float64Array(2 * M));
      expect(fast.length).toBe(2 * bins * M); // the view was not detached by a memory grow
      expect(bits(fast)).toEqual(bits(copied));
      expect(relativeFrobenius(fast, plain)).toBeLessThan(1e-6);
    });

    it('hands out zeroed arrays of the asked type and length that do not overlap', () => {
      const a = allocate!(1000, Float32Array),
        b = allocate!(1000, Float32Array),
        c = allocate!(3, Float64Array);
      expect([a.length, b.length, c.length, a instanceof Float32Array, c instanceof Float64Array]).toEqual([1000, 1000, 3, true, true]);
      expect(a.every((x) => x === 0) && b.every((x) => x === 0) && c.every((x) => x === 0)).toBe(true);
      a.fill(5);
      expect(b.every((x) => x === 0)).toBe(true);
      expect(() => allocate!(-1, Float32Array)).toThrow(RangeError);
    });
  });
}

describe.runIf(loaded.kernel !== undefined && fmaLoaded.kernel !== undefined)('fused kernel against the SIMD kernel', () => {
  it.each(SIZES)('complex64: bins %i, L %i, M %i within 1e-6 relative of each other, in place as copied', (bins, L, M) => {
    const w = values(2 * bins * L, 81 + bins + 100 * L),
      p = values(2 * L * M, 83 + M);
    const a = loaded.allocate!(2 * bins * M, Float32Array),
      b = fmaLoaded.allocate!(2 * bins * M, Float32Array);
    loaded.kernel!(a, 0, w, p, bins, L, M);
    fmaLoaded.kernel!(b, 0, w, p, bins, L, M);
    expect(relativeFrobenius(b, a)).toBeLessThan(1e-6);
  });

  it('differs from it in the last bits (a kernel of its own name)', () => {
    const bins = 8,
      L = 8,
      M = 64;
    const w = values(2 * bins * L, 91),
      p = values(2 * L * M, 92);
    const a = new Float32Array(2 * bins * M),
      b = new Float32Array(2 * bins * M);
    loaded.kernel!(a, 0, w, p, bins, L, M);
    fmaLoaded.kernel!(b, 0, w, p, bins, L, M);
    expect(bits(b)).not.toEqual(bits(a));
  });
});

describe('allocateKernelArray', () => {
  it('gives arrays the kernel in use fills like any other', () => {
    const bins = 5,
      L = 3,
      M = 11;
    const w = values(2 * bins * L, 71),
      p = values(2 * L * M, 72);
    const out = allocateKernelArray(2 * bins * M, Float32Array),
      ref = new Float32Array(2 * bins * M);
    accumulatePaths(out, 0, w, p, bins, L, M, new Float64Array(2 * M));
    accumulatePathsPlain(ref, 0, w, p, bins, L, M, new Float64Array(2 * M));
    expect(relativeFrobenius(out, ref)).toBeLessThan(1e-6);
    expect(() => allocateKernelArray(4, Int32Array as unknown as typeof Float32Array)).toThrow(TypeError);
  });

  it('gives ordinary typed arrays with the plain kernel (PATHWEAVE_KERNEL=js)', async () => {
    vi.stubEnv('PATHWEAVE_KERNEL', 'js');
    vi.resetModules();
    try {
      const js = await import('../src/kernels/index.js');
      expect(js.KERNEL_NAME).toBe(PLAIN_KERNEL_NAME);
      const a = js.allocateKernelArray(6, Float64Array);
      expect([a.length, a.buffer.byteLength, a instanceof Float64Array]).toEqual([6, 48, true]);
      js.accumulatePaths(a, 0, Float64Array.of(0, 1, 2, 0, 1, 1), Float64Array.of(2, 0), 3, 1, 1, new Float64Array(2));
      expect(Array.from(a)).toEqual([0, 2, 4, 0, 2, 2]); // j 2, 2 2, (1 + j) 2
    } finally {
      vi.unstubAllEnvs();
      vi.resetModules();
    }
  });
});

describe.runIf(hasPython('numpy'))('kernel in use against numpy', () => {
  it('equals numpy.matmul of the complex matrices W [bins, L] @ P [L, M] (numpy (C))', () => {
    const bins = 5,
      L = 3,
      M = 7;
    const w = values(2 * bins * L, 21),
      p = values(2 * L * M, 22);
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
