import { describe, expect, it } from 'vitest';
import {
  AR_DEFAULT_LOADING,
  AutoregressiveGains,
  RANDOM_BLOCK_STEPS,
  arPowerSpectralDensity,
  clarkeTargetCorrelation,
  fitAutoregressive,
  type FadingPath,
} from '../src/index.js';

const path = (id: string, dopplersHz: number[], power = 1): FadingPath => ({ id, power, phaseRad: 0, dopplersHz });

function run(g: AutoregressiveGains, first: number, count: number): Float64Array {
  const out = new Float64Array(2 * count * g.pathCount);
  g.fill(out, first, count);
  return out;
}

/** Levinson-Durbin recursion (Box & Jenkins; textbook), independent of the Cholesky solve. */
function levinson(r: Float64Array): { a: number[]; error: number } {
  const p = r.length - 1;
  let a: number[] = [];
  let error = r[0]!;
  for (let m = 1; m <= p; m++) {
    let acc = r[m]!;
    for (let j = 1; j < m; j++) acc -= a[j - 1]! * r[m - j]!;
    const k = acc / error;
    const next = a.map((v, j) => v - k * a[m - 2 - j]!);
    next.push(k);
    a = next;
    error *= 1 - k * k;
  }
  return { a, error };
}

describe('fitAutoregressive (Yule-Walker with diagonal loading, Baddour & Beaulieu 2005 (M))', () => {
  it('AR(1) without loading: a = r(1), sigma^2 = 1 - r(1)^2 (textbook AR(1))', () => {
    const fit = fitAutoregressive(Float64Array.of(1, 0.9), 0);
    expect(fit.coefficients[0]).toBeCloseTo(0.9, 14);
    expect(fit.innovationVariance).toBeCloseTo(0.19, 14);
  });

  it('agrees with the Levinson-Durbin recursion and solves the loaded equations', () => {
    const target = clarkeTargetCorrelation([50], 1e-3, 30);
    const fit = fitAutoregressive(target);
    const lev = levinson(fit.correlation);
    // condition ~1e7 leaves about 9 good digits of 16
    for (let k = 0; k < 30; k++) expect(Math.abs(fit.coefficients[k]! - lev.a[k]!)).toBeLessThan(1e-6 * Math.max(1, Math.abs(lev.a[k]!)));
    expect(Math.abs(fit.innovationVariance - lev.error) / lev.error).toBeLessThan(1e-5);
    for (let i = 0; i < 30; i++) {
      let s = 0;
      for (let j = 0; j < 30; j++) s += fit.correlation[Math.abs(i - j)]! * fit.coefficients[j]!;
      expect(Math.abs(s - fit.correlation[i + 1]!)).toBeLessThan(1e-9);
    }
    expect(fit.correlation[1]).toBeCloseTo(target[1]! / (1 + AR_DEFAULT_LOADING), 15);
  });

  it('the spectral density integrates to the unit power (Parseval)', () => {
    const fit = fitAutoregressive(clarkeTargetCorrelation([50], 1e-3, 20));
    let sum = 0;
    const df = 0.01;
    for (let f = -500 + df / 2; f < 500; f += df) sum += arPowerSpectralDensity(fit, f, 1e-3) * df;
    expect(sum).toBeCloseTo(1, 4);
  });

  it('rejects an order too high for the conditioning, and names the limit', () => {
    // f_D T = 1e-3: the loaded matrix has condition ~ p / epsilon, 1.5e8 at p = 150 (measured)
    expect(() => new AutoregressiveGains([path('p', [1])], 0, { order: 150, stepS: 1e-3 })).toThrow(
      /^AutoregressiveGains\(\): path p \(Doppler spreads 1 Hz, step 0\.001 s\): fitAutoregressive\(\): order 150 is too high for this correlation: the loaded Yule-Walker matrix has condition number 1\.\d\de\+8 > 1e\+8 \(AR_MAX_CONDITION\)/,
    );
    expect(() => new AutoregressiveGains([path('p', [1])], 0, { order: 80, stepS: 1e-3 })).not.toThrow();
    expect(() => fitAutoregressive(clarkeTargetCorrelation([50], 1e-3, 30), 1e-9)).toThrow(/condition number .* > 1e\+8/);
  });

  it('argument errors', () => {
    expect(() => new AutoregressiveGains([path('p', [1])], 0, { order: 0, stepS: 1e-3 })).toThrow(
      new RangeError('AutoregressiveGains(): order must be an integer >= 1, got 0'),
    );
    expect(() => new AutoregressiveGains([path('p', [1])], 0, { order: 4, stepS: 0 })).toThrow(
      new RangeError('AutoregressiveGains(): stepS must be a finite number > 0, got 0'),
    );
    expect(() => new AutoregressiveGains([path('p', [1]), path('p', [2])], 0, { order: 4, stepS: 1e-3 })).toThrow(
      new RangeError('AutoregressiveGains(): path ids must be unique (they key the random streams), got "p" twice'),
    );
    expect(() => fitAutoregressive(Float64Array.of(2, 1))).toThrow(new RangeError('fitAutoregressive(): target[0] must be 1 (unit power), got 2'));
  });
});

describe('AutoregressiveGains: reproducibility (docs/conventions.md, Reproducibility)', () => {
  const paths = [path('los', [120]), path('wall:3', [120]), path('both', [80, 40], 4)];
  const opts = { order: 12, stepS: 1e-3 };

  it('subframes [a, b) alone equal the slice of the full run bit for bit, across random blocks', () => {
    const total = 2 * RANDOM_BLOCK_STEPS + 100;
    const full = run(new AutoregressiveGains(paths, 42, opts), 0, total);
    for (const [a, b] of [
      [0, 5],
      [7, 30],
      [RANDOM_BLOCK_STEPS - 3, RANDOM_BLOCK_STEPS + 260],
      [total - 1, total],
    ] as const) {
      const part = run(new AutoregressiveGains(paths, 42, opts), a, b - a);
      expect(Array.from(part)).toEqual(Array.from(full.subarray(2 * a * 3, 2 * b * 3)));
    }
    const reused = new AutoregressiveGains(paths, 42, opts); // an earlier `first` replays from step 0
    run(reused, 300, 10);
    expect(Array.from(run(reused, 20, 4))).toEqual(Array.from(full.subarray(2 * 20 * 3, 2 * 24 * 3)));
  });

  it("a path's numbers do not depend on the other paths; power only scales", () => {
    const together = run(new AutoregressiveGains(paths, 42, opts), 0, 50);
    const alone = run(new AutoregressiveGains([{ ...paths[2]!, power: 1 }], 42, opts), 0, 50);
    for (let s = 0; s < 50; s++) {
      expect(together[2 * (s * 3 + 2)]).toBe(2 * alone[2 * s]!);
      expect(together[2 * (s * 3 + 2) + 1]).toBe(2 * alone[2 * s + 1]!);
    }
    const otherSeed = run(new AutoregressiveGains(paths, 43, opts), 0, 50);
    expect(otherSeed[0]).not.toBe(together[0]);
  });

  it('a path without Doppler spread keeps its start value', () => {
    const g = run(new AutoregressiveGains([path('still', [])], 1, opts), 0, 40);
    for (let s = 1; s < 40; s++) expect([g[2 * s], g[2 * s + 1]]).toEqual([g[0], g[1]]);
  });

  it('stationary start: E[x_k x_j*] = r(k - j) for start and recursion steps alike (4000 paths)', () => {
    const n = 4000;
    const many = Array.from({ length: n }, (_, i) => path(`s${i}`, [50]));
    const process = new AutoregressiveGains(many, 5, { order: 10, stepS: 1e-3 });
    const g = run(process, 0, 12);
    const r = process.fits[0]!.correlation;
    // Re(x_a x_b*) of a circular Gaussian pair with correlation rho has variance (1 + rho^2) / 2
    // (Isserlis); the mean of n paths is within 5 sqrt((1 + rho^2) / (2n)).
    for (const [a, b] of [
      [1, 0],
      [9, 0],
      [10, 9],
      [11, 1],
      [10, 0],
    ] as const) {
      let sum = 0;
      for (let l = 0; l < n; l++) sum += g[2 * (a * n + l)]! * g[2 * (b * n + l)]! + g[2 * (a * n + l) + 1]! * g[2 * (b * n + l) + 1]!;
      const rho = r[a - b]!;
      expect(Math.abs(sum / n - rho), `x_${a} x_${b}*`).toBeLessThan(5 * Math.sqrt((1 + rho * rho) / (2 * n)));
    }
  });
});
