import { describe, expect, it } from 'vitest';
import { besselJ0 } from '../src/bessel.js';
import { hasPython, pythonJson } from '../../../test/support/python.js';

describe('besselJ0', () => {
  // Abramowitz & Stegun, Handbook of Mathematical Functions, Table 9.1 / DLMF 10.2, values as in
  // shared check-values.md (V + C: seen in stored tables, confirmed with scipy.special.j0).
  const table: [number, number][] = [
    [0.5, 0.938469807240813],
    [1, 0.7651976865579666],
    [2, 0.2238907791412357],
    [5, -0.1775967713143383],
    [10, -0.2459357644513483],
    [20, 0.167024664340583], // C
    [25, 0.0962667832759581],
  ];
  it.each(table)('J0(%s) matches A&S Table 9.1 to 1e-12', (x, expected) => {
    expect(Math.abs(besselJ0(x) - expected)).toBeLessThan(1e-12);
  });

  // Zeros of J0, A&S 9.5 (V).
  it.each([2.404825557695773, 5.520078110286311, 8.653727912911013, 11.79153443901428, 14.93091770848779])('vanishes at the A&S 9.5 zero %s', (z) => {
    expect(Math.abs(besselJ0(z))).toBeLessThan(1e-12);
  });

  it('is even and equals 1 at 0 (DLMF 10.2.2)', () => {
    expect(besselJ0(0)).toBe(1);
    for (const x of [0.3, 4.9, 5.1, 17, 24.9, 25.1, 60]) expect(besselJ0(-x)).toBe(besselJ0(x));
  });

  it.runIf(hasPython('numpy', 'scipy'))('agrees with scipy.special.j0 over 0..100 to 1e-12 absolute', () => {
    const xs = Array.from({ length: 4001 }, (_, i) => i * 0.025);
    // scipy.special.j0 as the reference implementation (C)
    const reference = pythonJson<number[]>(
      'import json,sys; from scipy.special import j0; xs=json.load(sys.stdin); print(json.dumps([float(j0(x)) for x in xs]))',
      [],
      JSON.stringify(xs),
    );
    let worst = 0;
    xs.forEach((x, i) => (worst = Math.max(worst, Math.abs(besselJ0(x) - reference[i]!))));
    expect(worst).toBeLessThan(1e-12);
  });
});
