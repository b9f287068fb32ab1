import { describe, expect, it } from 'vitest';
import { NoiseSource, RandomStream, lsChannelEstimate, lsNmseTheory, narrowbandReceive, normalizedMse, orthogonalPilots } from '@pathweave/core';

function complexNoise(values: number, seed: number): Float64Array {
  const rs = new RandomStream(seed, 'test-data');
  const out = new Float64Array(2 * values);
  for (let i = 0; i < out.length; i++) out[i] = rs.nextNormal();
  return out;
}

describe('LS channel estimation', () => {
  const Nr = 2,
    Nt = 4,
    P = 8;

  it('orthogonal pilots: X X^H = P p I', () => {
    const X = orthogonalPilots(Nt, P, 2);
    for (let a = 0; a < Nt; a++) {
      for (let b = 0; b < Nt; b++) {
        let re = 0,
          im = 0;
        for (let p = 0; p < P; p++) {
          re += X[2 * (a * P + p)]! * X[2 * (b * P + p)]! + X[2 * (a * P + p) + 1]! * X[2 * (b * P + p) + 1]!;
          im += X[2 * (a * P + p) + 1]! * X[2 * (b * P + p)]! - X[2 * (a * P + p)]! * X[2 * (b * P + p) + 1]!;
        }
        expect(Math.hypot(re - (a === b ? P * 2 : 0), im)).toBeLessThan(1e-12);
      }
    }
  });

  it('recovers H exactly without noise, for orthogonal and for general full-rank pilots', () => {
    const H = complexNoise(Nr * Nt, 1);
    for (const X of [orthogonalPilots(Nt, P), complexNoise(Nt * P, 2)]) {
      const Hhat = lsChannelEstimate(narrowbandReceive(H, X, Nr, Nt, P), X, Nr, Nt, P);
      expect(normalizedMse(Hhat, H)).toBeLessThan(1e-28);
    }
  });

  it('NMSE against SNR follows sigma^2 / (P p g) (Kay 1993 ch. 4; Biguesh & Gershman 2006, M)', () => {
    const H = complexNoise(Nr * Nt, 3);
    let g = 0;
    for (const v of H) g += v * v;
    g /= Nr * Nt; // mean channel power per entry of this fixed H
    const X = orthogonalPilots(Nt, P);
    const clean = narrowbandReceive(H, X, Nr, Nt, P);
    const trials = 2000;
    const noise = new NoiseSource({ seed: 4, streams: Nr });
    for (const snrDb of [0, 10, 20]) {
      // SNR per receive antenna against the expected received power Nt p g (noise.ts definition).
      const sigma2 = (Nt * g) / 10 ** (snrDb / 10);
      let err = 0;
      for (let i = 0; i < trials; i++) {
        const Y = clean.slice();
        noise.add(Y, P, sigma2);
        err += normalizedMse(lsChannelEstimate(Y, X, Nr, Nt, P), H);
      }
      const measured = err / trials;
      const theory = lsNmseTheory({ noiseVariance: sigma2, pilotLength: P, meanChannelPower: g });
      expect(theory).toBeCloseTo(Nt / (P * 10 ** (snrDb / 10)), 12);
      // The error entries are i.i.d. CN(0, sigma^2 / (P p)) (orthogonal pilots), so the mean of
      // |e|^2 over trials * Nr * Nt = 16000 entries has relative std 1 / sqrt(16000) = 0.8 %;
      // 4 standard deviations give the tolerance.
      expect(Math.abs(measured / theory - 1)).toBeLessThan(4 / Math.sqrt(trials * Nr * Nt));
    }
  });

  it('refuses bad input', () => {
    expect(() => orthogonalPilots(4, 3)).toThrow('orthogonalPilots(): length must be >= transmitters (4) for orthogonal rows, got 3');
    const rank1 = new Float64Array(2 * 2 * 4).fill(1);
    expect(() => lsChannelEstimate(new Float64Array(2 * 1 * 4), rank1, 1, 2, 4)).toThrow(
      /^lsChannelEstimate\(\): X X\^H is singular \(pilots without full row rank\), got pivot/,
    );
    expect(() => lsChannelEstimate(new Float64Array(6), orthogonalPilots(2, 4), 1, 2, 4)).toThrow(
      'lsChannelEstimate(): Y must hold 8 numbers ([1, 4] complex interleaved), got 6',
    );
    expect(() => normalizedMse(new Float64Array(2), new Float64Array(2))).toThrow(
      'normalizedMse(): truth has zero power, so the error cannot be normalised, got ||truth||^2 = 0',
    );
  });
});
