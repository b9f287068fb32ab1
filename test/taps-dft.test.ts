/**
 * Frequency response against the DFT of the tap-delay response (docs/conventions.md: with count = K and
 * sampleRate = K df, the DFT of h, fftshifted to the centred grid, equals H). fft.js is the
 * reference transform; the delays lie on the sample grid, where the sinc pulse is exact.
 */
import FFT from 'fft.js';
import { describe, expect, it } from 'vitest';
import { ChannelGenerator, type ExplicitPathSpec, type ChannelSpec } from '@pathweave/core';
import { AntennaArray, unitFromDeg } from '@pathweave/geometry';

describe('H equals the DFT of h (fft.js reference)', () => {
  const K = 64;
  const df = 120e3;
  const fs = K * df;
  const tx = AntennaArray.ula(4, 0.0054, { yawDeg: 10 });
  const rx = AntennaArray.upa(2, 2, 0.0054, { yawDeg: 200 });
  const paths: ExplicitPathSpec[] = [
    { id: 'a', delayS: 3 / fs, power: 1e-9, phaseRad: 0.4, departure: unitFromDeg(12, -4), arrival: unitFromDeg(-170, 4) },
    { id: 'b', delayS: 11 / fs, power: 3e-10, phaseRad: -2.0, departure: unitFromDeg(40, -2), arrival: unitFromDeg(150, 1) },
    { id: 'c', delayS: 26 / fs, power: 5e-11, phaseRad: 2.9, departure: unitFromDeg(-25, -8), arrival: unitFromDeg(100, 6) },
  ];
  const base = {
    carrierHz: 28e9,
    subframeS: 1e-3,
    subframes: 2,
    transmitter: { array: tx, position: [0, 0, 0] as [number, number, number], velocity: [0, 0, 0] as [number, number, number] },
    receiver: { array: rx, position: [10, 0, 0] as [number, number, number], velocity: [1, 0, 0] as [number, number, number] },
    paths,
    fading: { model: 'gauss-markov' as const },
    seed: 9,
    precision: 'complex128' as const,
  };

  it('for every element pair and subframe, to 1e-12 relative', () => {
    const Hgen = new ChannelGenerator({ ...base, grid: { domain: 'frequency', subcarriers: K, spacingHz: df } } as ChannelSpec);
    const hgen = new ChannelGenerator({ ...base, grid: { domain: 'taps', sampleRateHz: fs, count: K, pulse: 'sinc' } } as ChannelSpec);
    const H = Hgen.fill(Hgen.allocate(2), 0, 2);
    const h = hgen.fill(hgen.allocate(2), 0, 2);
    const M = rx.size * tx.size;
    const fft = new FFT(K);
    const input = fft.createComplexArray() as number[];
    const spectrum = fft.createComplexArray() as number[];
    let worst = 0,
      scale = 0;
    for (let s = 0; s < 2; s++) {
      for (let m = 0; m < M; m++) {
        for (let n = 0; n < K; n++) {
          input[2 * n] = h[2 * ((s * K + n) * M + m)]!;
          input[2 * n + 1] = h[2 * ((s * K + n) * M + m) + 1]!;
        }
        fft.transform(spectrum, input); // X[q] = sum_n x[n] exp(-j 2 pi q n / K)
        for (let k = 0; k < K; k++) {
          const q = (k - K / 2 + K) % K; // centred index k holds f_k = (k - K/2) df, i.e. DFT bin q
          const er = spectrum[2 * q]! - H[2 * ((s * K + k) * M + m)]!;
          const ei = spectrum[2 * q + 1]! - H[2 * ((s * K + k) * M + m) + 1]!;
          worst = Math.max(worst, Math.hypot(er, ei));
          scale = Math.max(scale, Math.hypot(H[2 * ((s * K + k) * M + m)]!, H[2 * ((s * K + k) * M + m) + 1]!));
        }
      }
    }
    expect(worst / scale).toBeLessThan(1e-12);
  });
});
