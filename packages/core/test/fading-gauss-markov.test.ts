import { describe, expect, it } from 'vitest';
import { GaussMarkovGains, besselJ0, type GainPath } from '../src/index.js';

describe('GaussMarkovGains beyond lag 1: alpha^k, not J0 (check-values.md, Clarke/Jakes section (C))', () => {
  // check-values.md lists lag 10 / 20 = 0.885795 / 0.784632 (and J0's 0.110854 / -0.342615) beside
  // alpha = 0.98792958 (f_D = 280.194 Hz); those four figures belong to f_D = 280.000 Hz
  // (c rounded to 3e8), alpha = J0(2 pi 280 * 0.125e-3) = 0.98794623 (scipy.special.j0 (C)). We test
  // them with their own alpha; 0.98792958 gives 0.885645 / 0.784368 instead.
  it('alpha = J0(2 pi 280 Hz 0.125 ms): lag 10 -> 0.885795, lag 20 -> 0.784632, J0 there 0.110854 / -0.342615', () => {
    const x = 2 * Math.PI * 280 * 0.125e-3;
    const alpha = besselJ0(x);
    expect(alpha).toBeCloseTo(0.98794623, 8); // scipy.special.j0 (C)
    expect(alpha ** 10).toBeCloseTo(0.885795, 6); // check-values.md (C)
    expect(alpha ** 20).toBeCloseTo(0.784632, 6);
    expect(besselJ0(10 * x)).toBeCloseTo(0.110854, 6);
    expect(besselJ0(20 * x)).toBeCloseTo(-0.342615, 6);
    const R = 20,
      N = 40000;
    const paths: GainPath[] = Array.from({ length: R }, (_, i) => ({ id: `gm${i}`, power: 1, phaseRad: 0, alpha }));
    const out = new Float64Array(2 * R * N);
    new GaussMarkovGains(paths, 17).fill(out, 0, N);
    for (const [k, ar, j0] of [
      [10, 0.885795, 0.110854],
      [20, 0.784632, -0.342615],
    ] as const) {
      let sum = 0;
      for (let l = 0; l < R; l++) {
        for (let n = 0; n + k < N; n++) {
          const a = 2 * ((n + k) * R + l),
            b = 2 * (n * R + l);
          sum += out[a]! * out[b]! + out[a + 1]! * out[b + 1]!;
        }
      }
      const c = sum / (R * (N - k));
      // Bartlett's formula for a circular complex Gaussian AR(1), rho(m) = alpha^|m|:
      // Var(Re c) = (1 / 2n) sum_m (1 - |m|/n) [rho(m)^2 + rho(m + k) rho(m - k)], over R paths.
      const n = N - k;
      let v = 0;
      for (let m = -2000; m <= 2000; m++) v += (1 - Math.abs(m) / n) * (alpha ** (2 * Math.abs(m)) + alpha ** Math.abs(m + k) * alpha ** Math.abs(m - k));
      const tol = 5 * Math.sqrt(v / (2 * n) / R);
      expect(Math.abs(c - ar), `lag ${k}: ${c} (tol ${tol})`).toBeLessThan(tol);
      expect(Math.abs(c - j0)).toBeGreaterThan(0.5); // far from the Clarke target at that lag
    }
  });
});
