import { describe, expect, it } from 'vitest';
import { ChannelFilter, OfdmModem, RandomStream, tapsToSubcarriers } from '@pathweave/core';

function complexNoise(values: number, seed: number): Float64Array {
  const rs = new RandomStream(seed, 'test-data');
  const out = new Float64Array(2 * values);
  for (let i = 0; i < out.length; i++) out[i] = rs.nextNormal();
  return out;
}

function energy(a: ArrayLike<number>, from = 0, to = a.length): number {
  let s = 0;
  for (let i = from; i < to; i++) s += a[i]! * a[i]!;
  return s;
}

describe('OfdmModem', () => {
  it('is unitary: Parseval over the useful samples and an exact round trip', () => {
    for (const K of [2, 8, 64, 512]) {
      const cp = Math.ceil(K / 4),
        symbols = 3,
        streams = 2;
      const modem = new OfdmModem({ subcarriers: K, cyclicPrefix: cp });
      const X = complexNoise(streams * symbols * K, K);
      const x = modem.modulate(X, streams, symbols);
      const L = K + cp,
        N = symbols * L;
      expect(x.length).toBe(2 * streams * N);
      let useful = 0;
      for (let t = 0; t < streams; t++) for (let s = 0; s < symbols; s++) useful += energy(x, 2 * (t * N + s * L + cp), 2 * (t * N + (s + 1) * L));
      expect(Math.abs(useful / energy(X) - 1)).toBeLessThan(1e-13); // Parseval (unitary DFT)
      // The prefix repeats the symbol's tail.
      for (let i = 0; i < 2 * cp; i++) expect(x[2 * L + i]).toBe(x[2 * (L + K) + i]);
      const Y = modem.demodulate(x, streams, N);
      let worst = 0;
      for (let i = 0; i < X.length; i++) worst = Math.max(worst, Math.abs(Y[i]! - X[i]!));
      expect(worst).toBeLessThan(1e-13);
    }
  });

  it('modulates by the written-out unitary inverse DFT in the centred order (definition)', () => {
    const K = 16,
      cp = 3;
    const modem = new OfdmModem({ subcarriers: K, cyclicPrefix: cp });
    const X = complexNoise(K, 7);
    const x = modem.modulate(X, 1, 1);
    for (let n = 0; n < K; n++) {
      let re = 0,
        im = 0;
      for (let k = 0; k < K; k++) {
        const a = (2 * Math.PI * (k - K / 2) * n) / K; // k' = k - floor(K/2), DC at index K/2
        re += X[2 * k]! * Math.cos(a) - X[2 * k + 1]! * Math.sin(a);
        im += X[2 * k]! * Math.sin(a) + X[2 * k + 1]! * Math.cos(a);
      }
      expect(Math.abs(x[2 * (cp + n)]! - re / 4)).toBeLessThan(1e-13);
      expect(Math.abs(x[2 * (cp + n) + 1]! - im / 4)).toBeLessThan(1e-13);
    }
  });

  it('tap filtering + demodulation equals H[k] X[k] per subcarrier when the delay spread fits in the prefix', () => {
    // Circular convolution theorem: a CP of at least count - 1 samples makes the linear
    // convolution circular over each symbol, so Y[k] = H[k] X[k], H[k] = sum_d h[d] exp(-j 2 pi k' d / K).
    const K = 64,
      cp = 8,
      count = 9,
      Nt = 2,
      Nr = 3,
      symbols = 4;
    const modem = new OfdmModem({ subcarriers: K, cyclicPrefix: cp });
    const L = modem.symbolLength,
      N = symbols * L;
    const X = complexNoise(Nt * symbols * K, 1);
    const x = modem.modulate(X, Nt, symbols);
    const filter = new ChannelFilter({ transmitters: Nt, receivers: Nr, taps: count });
    const tapSets = [0, 1, 2, 3].map((s) => complexNoise(count * Nr * Nt, 20 + s));
    tapSets.forEach((h, s) => filter.setTaps(h, s * L)); // a new channel each symbol
    const Y = modem.demodulate(filter.process(x, N), Nr, N);
    let worst = 0,
      scale = 0;
    for (let s = 0; s < symbols; s++) {
      const h = tapSets[s]!;
      for (let k = 0; k < K; k++) {
        const kk = k - K / 2;
        for (let r = 0; r < Nr; r++) {
          let re = 0,
            im = 0;
          for (let t = 0; t < Nt; t++) {
            let hr = 0,
              hi = 0; // H[k][r, t] from its definition
            for (let d = 0; d < count; d++) {
              const a = (-2 * Math.PI * kk * d) / K;
              const ar = h[2 * ((d * Nr + r) * Nt + t)]!,
                ai = h[2 * ((d * Nr + r) * Nt + t) + 1]!;
              hr += ar * Math.cos(a) - ai * Math.sin(a);
              hi += ar * Math.sin(a) + ai * Math.cos(a);
            }
            const xr = X[2 * ((t * symbols + s) * K + k)]!,
              xi = X[2 * ((t * symbols + s) * K + k) + 1]!;
            re += hr * xr - hi * xi;
            im += hr * xi + hi * xr;
          }
          const i = 2 * ((r * symbols + s) * K + k);
          worst = Math.max(worst, Math.abs(Y[i]! - re), Math.abs(Y[i + 1]! - im));
          scale = Math.max(scale, Math.abs(re), Math.abs(im));
        }
      }
    }
    expect(worst / scale).toBeLessThan(1e-12);
  });

  it('and fails to when the delay spread exceeds the prefix (so the check above can fail)', () => {
    const K = 64,
      cp = 2,
      count = 9;
    const modem = new OfdmModem({ subcarriers: K, cyclicPrefix: cp });
    const X = complexNoise(2 * K, 3);
    const x = modem.modulate(X, 1, 2);
    const filter = new ChannelFilter({ transmitters: 1, receivers: 1, taps: count });
    const h = complexNoise(count, 4);
    filter.setTaps(h);
    const Y = modem.demodulate(filter.process(x, 2 * modem.symbolLength), 1, 2 * modem.symbolLength);
    const H = tapsToSubcarriers(h, count, 1, 1, K);
    let worst = 0;
    for (let k = 0; k < K; k++) {
      const re = H[2 * k]! * X[2 * (K + k)]! - H[2 * k + 1]! * X[2 * (K + k) + 1]!;
      worst = Math.max(worst, Math.abs(Y[2 * (K + k)]! - re));
    }
    expect(worst).toBeGreaterThan(1e-3); // inter-symbol interference
  });

  it('tapsToSubcarriers is the DFT of the taps in the centred order', () => {
    const count = 5,
      K = 32;
    const h = complexNoise(count * 2 * 2, 9);
    const H = tapsToSubcarriers(h, count, 2, 2, K);
    // Same sum written with the unreduced phase k' d.
    for (const k of [0, 1, 16, 31]) {
      for (let m = 0; m < 4; m++) {
        let re = 0,
          im = 0;
        for (let d = 0; d < count; d++) {
          const a = (-2 * Math.PI * (k - 16) * d) / K;
          re += h[2 * (d * 4 + m)]! * Math.cos(a) - h[2 * (d * 4 + m) + 1]! * Math.sin(a);
          im += h[2 * (d * 4 + m)]! * Math.sin(a) + h[2 * (d * 4 + m) + 1]! * Math.cos(a);
        }
        expect(Math.abs(H[2 * (k * 4 + m)]! - re)).toBeLessThan(1e-13);
        expect(Math.abs(H[2 * (k * 4 + m) + 1]! - im)).toBeLessThan(1e-13);
      }
    }
  });

  it('refuses bad input', () => {
    expect(() => new OfdmModem({ subcarriers: 12, cyclicPrefix: 1 })).toThrow('OfdmModem(): subcarriers must be a power of two >= 2 (fft.js), got 12');
    expect(() => new OfdmModem({ subcarriers: 8, cyclicPrefix: 9 })).toThrow('OfdmModem(): cyclicPrefix must be <= subcarriers (8), got 9');
    const modem = new OfdmModem({ subcarriers: 8, cyclicPrefix: 2 });
    expect(() => modem.demodulate(new Float64Array(2 * 15), 1, 15)).toThrow(
      'OfdmModem.demodulate(): samples must be a whole number of symbols of 10 samples (cp 2 + K 8), got 15',
    );
    expect(() => modem.modulate(new Float64Array(16), 2, 1)).toThrow('OfdmModem.modulate(): X must hold 32 numbers ([2, 1, 8] complex interleaved), got 16');
    expect(() => modem.demodulate(new Float64Array(0), 1, 0)).toThrow('OfdmModem.demodulate(): samples must be an integer >= 1, got 0');
  });
});
