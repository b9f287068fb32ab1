import { describe, expect, it } from 'vitest';
import { AntennaArray, unitFromDeg } from '@pathweave/geometry';
import { ChannelFilter, ChannelGenerator, RandomStream, type ChannelSpec } from '@pathweave/core';

/** Seeded complex test data. */
function complexNoise(values: number, seed: number, Ctor: Float32ArrayConstructor | Float64ArrayConstructor = Float64Array): Float32Array | Float64Array {
  const rs = new RandomStream(seed, 'test-data');
  const out = new Ctor(2 * values);
  for (let i = 0; i < out.length; i++) out[i] = rs.nextNormal();
  return out;
}

/**
 * Textbook time-varying FIR, written out independently of the filter:
 * y[r, n] = sum_t sum_d h_n[d, r, t] x[t, n - d], x = 0 before sample 0,
 * h_n the tap set whose start is the last one <= n.
 */
function referenceFilter(
  x: Float64Array | Float32Array,
  Nt: number,
  Nr: number,
  D: number,
  N: number,
  sets: { from: number; h: Float64Array }[],
): Float64Array {
  const y = new Float64Array(2 * Nr * N);
  for (let n = 0; n < N; n++) {
    const h = [...sets].reverse().find((s) => s.from <= n)!.h;
    for (let r = 0; r < Nr; r++) {
      let re = 0,
        im = 0;
      for (let t = 0; t < Nt; t++) {
        for (let d = 0; d < D; d++) {
          if (n - d < 0) continue;
          const xr = x[2 * (t * N + n - d)]!,
            xi = x[2 * (t * N + n - d) + 1]!;
          const hr = h[2 * ((d * Nr + r) * Nt + t)]!,
            hi = h[2 * ((d * Nr + r) * Nt + t) + 1]!;
          re += hr * xr - hi * xi;
          im += hr * xi + hi * xr;
        }
      }
      y[2 * (r * N + n)] = re;
      y[2 * (r * N + n) + 1] = im;
    }
  }
  return y;
}

/** Split x [Nt, N] into blocks [Nt, len] of the given lengths. */
function cut(x: Float32Array | Float64Array, Nt: number, N: number, start: number, len: number): Float32Array | Float64Array {
  const block = new (x.constructor as Float64ArrayConstructor)(2 * Nt * len);
  for (let t = 0; t < Nt; t++) block.set(x.subarray(2 * (t * N + start), 2 * (t * N + start + len)), 2 * t * len);
  return block;
}

function sameBits(a: Float32Array | Float64Array, b: Float32Array | Float64Array): boolean {
  return a.constructor === b.constructor && Buffer.from(a.buffer, a.byteOffset, a.byteLength).equals(Buffer.from(b.buffer, b.byteOffset, b.byteLength));
}

const Nt = 3,
  Nr = 2,
  D = 7,
  N = 1000;
const sets = [0, 250, 500, 777].map((from, i) => ({ from, h: complexNoise(D * Nr * Nt, 100 + i) as Float64Array }));

describe('ChannelFilter', () => {
  it('matches the written-out time-varying convolution sum (definition, to rounding)', () => {
    const x = complexNoise(Nt * N, 1);
    const f = new ChannelFilter({ transmitters: Nt, receivers: Nr, taps: D });
    for (const s of sets) f.setTaps(s.h, s.from);
    const y = f.process(x, N);
    const ref = referenceFilter(x, Nt, Nr, D, N, sets);
    let worst = 0;
    for (let i = 0; i < y.length; i++) worst = Math.max(worst, Math.abs(y[i]! - ref[i]!));
    // Same products, possibly summed in another order: a few ulps of sums of ~21 terms of size ~1.
    expect(worst).toBeLessThan(1e-12);
  });

  for (const Ctor of [Float64Array, Float32Array]) {
    it(`gives the same bits cut into blocks of any sizes as in one call (${Ctor.name})`, () => {
      const x = complexNoise(Nt * N, 2, Ctor);
      const whole = new ChannelFilter({ transmitters: Nt, receivers: Nr, taps: D });
      for (const s of sets) whole.setTaps(s.h, s.from);
      const one = whole.process(x, N);

      // Block sizes shorter and longer than the filter memory (D - 1 = 6), some straddling a tap switch.
      const sizes = [1, 2, 5, 6, 7, 100, 129, 250, 3, 497];
      expect(sizes.reduce((a, b) => a + b, 0)).toBe(N);
      const blocked = new ChannelFilter({ transmitters: Nt, receivers: Nr, taps: D });
      const parts = new Ctor(2 * Nr * N);
      let start = 0;
      for (const len of sizes) {
        // Queue each tap set only once the filter reaches its block (as a streaming bench would).
        for (const s of sets) if (s.from >= start && s.from < start + len) blocked.setTaps(s.h, s.from);
        const y = blocked.process(cut(x, Nt, N, start, len), len);
        for (let r = 0; r < Nr; r++) parts.set(y.subarray(2 * r * len, 2 * (r + 1) * len), 2 * (r * N + start));
        start += len;
      }
      expect(blocked.samplesProcessed).toBe(N);
      expect(one).toBeInstanceOf(Ctor);
      expect(sameBits(parts, one)).toBe(true);
    });
  }

  it('pushes samples through the tap tensor of a ChannelGenerator, one tap set per subframe', () => {
    const spec: ChannelSpec = {
      carrierHz: 28e9,
      subframeS: 1e-3,
      subframes: 4,
      transmitter: { array: AntennaArray.ula(2, 0.0053), position: [0, 0, 5], velocity: [0, 0, 0] },
      receiver: { array: AntennaArray.ula(2, 0.0053), position: [30, 0, 1.5], velocity: [0, 20, 0] },
      paths: [
        { id: 'los', delayS: 10e-9, power: 1e-8, phaseRad: 0, departure: unitFromDeg(0, -6), arrival: unitFromDeg(180, 6) },
        { id: 'r1', delayS: 25e-9, power: 3e-9, phaseRad: 1, departure: unitFromDeg(20, -5), arrival: unitFromDeg(150, 4) },
      ],
      fading: { model: 'gauss-markov', speedMps: 20 },
      grid: { domain: 'taps', sampleRateHz: 400e6, count: 16 },
      seed: 5,
      precision: 'complex128',
    };
    const gen = new ChannelGenerator(spec);
    const taps = gen.fill(gen.allocate(4), 0, 4);
    const perSubframe = 2 * gen.valuesPerSubframe;
    const samplesPerSubframe = 64; // a short stand-in subframe for the test
    const total = 4 * samplesPerSubframe;
    const x = complexNoise(2 * total, 3);
    const filter = ChannelFilter.forGenerator(gen);
    for (let s = 0; s < 4; s++) filter.setTaps(taps, s * samplesPerSubframe, s * perSubframe);
    const y = filter.process(x, total);
    const ref = referenceFilter(
      x,
      2,
      2,
      16,
      total,
      [0, 1, 2, 3].map((s) => ({ from: s * samplesPerSubframe, h: (taps as Float64Array).slice(s * perSubframe, (s + 1) * perSubframe) })),
    );
    let worst = 0,
      scale = 0;
    for (let i = 0; i < y.length; i++) {
      worst = Math.max(worst, Math.abs(y[i]! - ref[i]!));
      scale = Math.max(scale, Math.abs(ref[i]!));
    }
    expect(scale).toBeGreaterThan(0);
    expect(worst / scale).toBeLessThan(1e-13);
  });

  it('a single tap of 1 passes the signal through unchanged (identity)', () => {
    const x = complexNoise(2 * 50, 4);
    const f = new ChannelFilter({ transmitters: 2, receivers: 2, taps: 1 });
    f.setTaps(Float64Array.of(1, 0, 0, 0, 0, 0, 1, 0));
    expect(Array.from(f.process(x, 50))).toEqual(Array.from(x));
  });

  it('refuses bad input with clear messages', () => {
    const f = new ChannelFilter({ transmitters: 4, receivers: 2, taps: 3 });
    expect(() => f.process(new Float64Array(2 * 4 * 10), 10)).toThrow('ChannelFilter.process(): no taps in force at sample 0; call setTaps() first');
    f.setTaps(new Float64Array(2 * 3 * 2 * 4));
    expect(() => f.process(new Float64Array(2 * 3 * 100), 100)).toThrow(
      'ChannelFilter.process(): x must hold 4 streams of 100 samples (800 numbers, [streams, samples] complex interleaved), got 600 numbers (3 streams)',
    );
    expect(() => f.process(new Float64Array(0), 0)).toThrow('ChannelFilter.process(): samples must be an integer >= 1, got 0');
    expect(() => f.setTaps(new Float64Array(10))).toThrow(
      'ChannelFilter.setTaps(): h must hold 48 numbers from offset 0 ([3, 2, 4] complex interleaved), got 10',
    );
    f.process(new Float64Array(2 * 4 * 10), 10);
    expect(() => f.setTaps(new Float64Array(48), 5)).toThrow(
      'ChannelFilter.setTaps(): fromSample must be >= 10 (samples already processed or a later set queued), got 5',
    );
    expect(() => f.process([1, 2] as unknown as Float64Array, 1)).toThrow(
      'ChannelFilter.process(): x must be a Float32Array or Float64Array (complex interleaved), got Array',
    );
    const x = new Float64Array(2 * 4 * 5);
    expect(() => f.process(x, 5, x)).toThrow('ChannelFilter.process(): out must hold 20 numbers ([2, 5] complex interleaved), got 40');
    expect(() => new ChannelFilter({ transmitters: 0, receivers: 1, taps: 1 })).toThrow('ChannelFilter(): transmitters must be an integer >= 1, got 0');
  });
});
