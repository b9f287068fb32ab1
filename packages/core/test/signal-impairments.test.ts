import { describe, expect, it } from 'vitest';
import { OfdmModem, PhaseNoise, RandomStream, applyFrequencyOffset } from '@pathweave/core';

function complexNoise(values: number, seed: number): Float64Array {
  const rs = new RandomStream(seed, 'test-data');
  const out = new Float64Array(2 * values);
  for (let i = 0; i < out.length; i++) out[i] = rs.nextNormal();
  return out;
}

describe('applyFrequencyOffset', () => {
  it('rotates by 2 pi df n / fs at the absolute sample index, also far from zero', () => {
    const fs = 1e6,
      df = fs / 8; // an eighth of a turn per sample
    const first = 10_000_003;
    const x = new Float64Array(2 * 16).fill(0);
    for (let n = 0; n < 16; n++) x[2 * n] = 1;
    const y = applyFrequencyOffset(x, 1, 16, df, fs, first);
    for (let n = 0; n < 16; n++) {
      const phase = ((first + n) % 8) * (Math.PI / 4); // exact reduction of the ramp (definition)
      expect(Math.abs(y[2 * n]! - Math.cos(phase))).toBeLessThan(1e-12);
      expect(Math.abs(y[2 * n + 1]! - Math.sin(phase))).toBeLessThan(1e-12);
    }
  });

  it('gives the same bits in blocks as in one call, in place or not', () => {
    const N = 500,
      fs = 30.72e6,
      df = 1234.5;
    const x = complexNoise(2 * N, 1);
    const one = applyFrequencyOffset(x, 2, N, df, fs, 77);
    const parts = new Float64Array(x.length);
    let start = 0;
    for (const len of [1, 99, 200, 200]) {
      const block = new Float64Array(2 * 2 * len);
      for (let t = 0; t < 2; t++) block.set(x.subarray(2 * (t * N + start), 2 * (t * N + start + len)), 2 * t * len);
      applyFrequencyOffset(block, 2, len, df, fs, 77 + start, block); // in place
      for (let t = 0; t < 2; t++) parts.set(block.subarray(2 * t * len, 2 * (t + 1) * len), 2 * (t * N + start));
      start += len;
    }
    expect(Array.from(parts)).toEqual(Array.from(one));
  });

  it('an offset of one subcarrier spacing moves OFDM subcarrier k to k + 1 (DFT shift theorem)', () => {
    const K = 64,
      cp = 0;
    const modem = new OfdmModem({ subcarriers: K, cyclicPrefix: cp });
    const X = complexNoise(K, 2);
    const x = modem.modulate(X, 1, 1);
    const y = applyFrequencyOffset(x, 1, K, 15e3, K * 15e3);
    const Y = modem.demodulate(y, 1, K);
    for (let k = 0; k < K; k++) {
      const to = (k + 1) % K; // centred order keeps neighbours adjacent, wrapping at the edge
      expect(Math.abs(Y[2 * to]! - X[2 * k]!)).toBeLessThan(1e-12);
      expect(Math.abs(Y[2 * to + 1]! - X[2 * k + 1]!)).toBeLessThan(1e-12);
    }
  });

  it('refuses bad input', () => {
    expect(() => applyFrequencyOffset(new Float64Array(4), 1, 2, Number.NaN, 1)).toThrow('applyFrequencyOffset(): offsetHz must be a finite number, got NaN');
    expect(() => applyFrequencyOffset(new Float64Array(4), 2, 2, 1, 1)).toThrow(
      'applyFrequencyOffset(): x must hold 2 streams of 2 samples (8 numbers, [streams, samples] complex interleaved), got 4 numbers (1 streams)',
    );
  });
});

describe('PhaseNoise (Wiener process)', () => {
  const fs = 1e6,
    beta = 1000;

  it('phase variance grows as 2 pi beta t (Wiener model of a free-running oscillator, M)', () => {
    const R = 5000,
      N = 201;
    const sum2 = new Float64Array(N);
    const phases = new Float64Array(N);
    for (let i = 0; i < R; i++) {
      new PhaseNoise({ seed: i, linewidthHz: beta, sampleRateHz: fs }).phases(phases, N);
      for (let n = 0; n < N; n++) sum2[n] = sum2[n]! + phases[n]! * phases[n]!;
    }
    expect(sum2[0]).toBe(0); // phi[0] = 0
    // The mean of R squares of N(0, v) has relative std sqrt(2 / R) = 2 %; 4 of them give 8 %.
    const tol = 4 * Math.sqrt(2 / R);
    for (const n of [25, 50, 100, 200]) {
      const expected = 2 * Math.PI * beta * (n / fs);
      expect(Math.abs(sum2[n]! / R / expected - 1)).toBeLessThan(tol);
    }
  });

  it('increments are i.i.d. N(0, 2 pi beta / fs): variance and lag-1 correlation over 10^6 samples', () => {
    const N = 1_000_000;
    const phases = new PhaseNoise({ seed: 9, linewidthHz: beta, sampleRateHz: fs }).phases(new Float64Array(N), N);
    const v = (2 * Math.PI * beta) / fs;
    let s2 = 0,
      s11 = 0;
    for (let n = 1; n < N; n++) {
      const e = phases[n]! - phases[n - 1]!;
      s2 += e * e;
      if (n > 1) s11 += e * (phases[n - 1]! - phases[n - 2]!);
    }
    // Relative std of the variance estimate sqrt(2 / N); of the lag-1 correlation 1 / sqrt(N).
    expect(Math.abs(s2 / (N - 1) / v - 1)).toBeLessThan(4 * Math.sqrt(2 / N));
    expect(Math.abs(s11 / (N - 2) / v)).toBeLessThan(4 / Math.sqrt(N));
  });

  it('carries its state across blocks: the same phases and output bits however the signal is cut', () => {
    const N = 1200;
    const x = complexNoise(2 * N, 4);
    const one = new PhaseNoise({ seed: 2, linewidthHz: beta, sampleRateHz: fs }).apply(x, 2, N);
    const pn = new PhaseNoise({ seed: 2, linewidthHz: beta, sampleRateHz: fs });
    const parts = new Float64Array(x.length);
    let start = 0;
    for (const len of [1, 255, 1, 256, 687]) {
      const block = new Float64Array(2 * 2 * len);
      for (let t = 0; t < 2; t++) block.set(x.subarray(2 * (t * N + start), 2 * (t * N + start + len)), 2 * t * len);
      pn.apply(block, 2, len, block);
      for (let t = 0; t < 2; t++) parts.set(block.subarray(2 * t * len, 2 * (t + 1) * len), 2 * (t * N + start));
      start += len;
    }
    expect(pn.nextSample).toBe(N);
    expect(Array.from(parts)).toEqual(Array.from(one));
    // Both streams share one oscillator: the phase of y/x is the same on both.
    const ph = (t: number, n: number): number =>
      Math.atan2(one[2 * (t * N + n) + 1]!, one[2 * (t * N + n)]!) - Math.atan2(x[2 * (t * N + n) + 1]!, x[2 * (t * N + n)]!);
    const wrap = (a: number): number => Math.atan2(Math.sin(a), Math.cos(a));
    expect(Math.abs(wrap(ph(0, 900) - ph(1, 900)))).toBeLessThan(1e-12);
    // After reset the process starts again from phi[0] = 0 with the same draws.
    pn.reset();
    const again = pn.apply(x.subarray(0, 2 * 10).slice(), 1, 10);
    expect(Array.from(again)).toEqual(Array.from(new PhaseNoise({ seed: 2, linewidthHz: beta, sampleRateHz: fs }).apply(x.subarray(0, 20).slice(), 1, 10)));
  });

  it('zero linewidth leaves the signal unchanged', () => {
    const x = complexNoise(100, 5);
    expect(Array.from(new PhaseNoise({ seed: 1, linewidthHz: 0, sampleRateHz: fs }).apply(x, 1, 100))).toEqual(Array.from(x));
  });

  it('refuses bad input', () => {
    expect(() => new PhaseNoise({ seed: 1, linewidthHz: -1, sampleRateHz: fs })).toThrow('PhaseNoise(): linewidthHz must be a finite number >= 0, got -1');
    const pn = new PhaseNoise({ seed: 1, linewidthHz: 1, sampleRateHz: fs });
    expect(() => pn.apply(new Float64Array(0), 1, 0)).toThrow('PhaseNoise.apply(): samples must be an integer >= 1, got 0');
  });
});
