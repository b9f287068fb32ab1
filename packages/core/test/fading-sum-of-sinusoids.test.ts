import { describe, expect, it } from 'vitest';
import { SumOfSinusoidsGains, nrNumerology, nrSymbolTimesS, numerologyClock, uniformClock, type FadingPath } from '../src/index.js';

const path = (id: string, dopplersHz: number[], power = 1): FadingPath => ({ id, power, phaseRad: 0, dopplersHz });

describe('SumOfSinusoidsGains: continuous time and reproducibility', () => {
  const paths = [path('los', [100]), path('wall:1', [60, 30], 9), path('still', [])];

  it('fill at a clock equals fillAtTimes at its times bit for bit (uniform and NR numerology)', () => {
    const uniform = new SumOfSinusoidsGains(paths, 3, { sinusoids: 12, clock: uniformClock(0.5e-3) });
    const a = new Float64Array(2 * 3 * 40);
    uniform.fill(a, 10, 40);
    const b = new Float64Array(2 * 3 * 40);
    uniform.fillAtTimes(
      b,
      Array.from({ length: 40 }, (_, s) => (10 + s) * 0.5e-3),
    );
    expect(Array.from(a)).toEqual(Array.from(b));

    const n = nrNumerology(1);
    const symbols = new SumOfSinusoidsGains(paths, 3, { sinusoids: 12, clock: numerologyClock(n) });
    const c = new Float64Array(2 * 3 * 56);
    symbols.fill(c, 0, 56);
    const t = nrSymbolTimesS(n);
    const times = Array.from({ length: 56 }, (_, s) => Math.floor(s / 28) * 1e-3 + t[s % 28]!);
    const d = new Float64Array(2 * 3 * 56);
    symbols.fillAtTimes(d, times);
    expect(Array.from(c)).toEqual(Array.from(d));
  });

  it('slices equal the full run and a path ignores the others; a path without spread is constant', () => {
    const clock = uniformClock(1e-3);
    const full = new Float64Array(2 * 3 * 600);
    new SumOfSinusoidsGains(paths, 3, { sinusoids: 12, clock }).fill(full, 0, 600);
    const part = new Float64Array(2 * 3 * 300);
    new SumOfSinusoidsGains(paths, 3, { sinusoids: 12, clock }).fill(part, 250, 300);
    expect(Array.from(part)).toEqual(Array.from(full.subarray(2 * 3 * 250, 2 * 3 * 550)));
    const alone = new Float64Array(2 * 600);
    new SumOfSinusoidsGains([{ ...paths[1]!, power: 1 }], 3, { sinusoids: 12, clock }).fill(alone, 0, 600);
    for (let s = 0; s < 600; s++) expect(full[2 * (3 * s + 1)]).toBe(3 * alone[2 * s]!);
    for (let s = 1; s < 600; s++) expect(full[2 * (3 * s + 2)]).toBe(full[4]);
  });

  it('ensemble correlation at f_D = 100 Hz, tau = 1 ms, M = 8 is J0(0.2 pi) = 0.904 (check-values.md (C), tolerance 3 / sqrt(realisations))', () => {
    const R = 20000;
    const g = new SumOfSinusoidsGains(
      Array.from({ length: R }, (_, i) => path(`mc${i}`, [100])),
      8,
      { sinusoids: 8, clock: uniformClock(1e-3) },
    );
    const out = new Float64Array(2 * R * 2);
    g.fillAtTimes(out, [0.0371, 0.0381]);
    let c = 0;
    let pseudo = 0;
    let power = 0;
    for (let l = 0; l < R; l++) {
      const [ar, ai, br, bi] = [out[2 * l]!, out[2 * l + 1]!, out[2 * (R + l)]!, out[2 * (R + l) + 1]!];
      c += br * ar + bi * ai; // Re X(t + tau) X*(t)
      pseudo += br * ar - bi * ai; // Re X(t + tau) X(t), 0 for a circular process
      power += ar * ar + ai * ai;
    }
    const tol = 3 / Math.sqrt(R);
    expect(Math.abs(c / R - 0.904)).toBeLessThan(tol + 0.0005); // + rounding of the 3-digit check value
    expect(Math.abs(pseudo / R)).toBeLessThan(tol);
    expect(Math.abs(power / R - 1)).toBeLessThan(tol);
  });

  it('double ring: unit power and zero pseudo-correlation across realisations', () => {
    const R = 8000;
    const g = new SumOfSinusoidsGains(
      Array.from({ length: R }, (_, i) => path(`dr${i}`, [70, 40])),
      2,
      { sinusoids: 8, clock: uniformClock(1e-3) },
    );
    const out = new Float64Array(2 * R);
    g.fillAtTimes(out, [0.123]);
    let power = 0;
    let pseudo = 0;
    for (let l = 0; l < R; l++) {
      power += out[2 * l]! ** 2 + out[2 * l + 1]! ** 2;
      pseudo += out[2 * l]! ** 2 - out[2 * l + 1]! ** 2;
    }
    // |X|^2 of a near-Gaussian unit-power variable has standard deviation ~1: 5 / sqrt(R)
    expect(Math.abs(power / R - 1)).toBeLessThan(5 / Math.sqrt(R));
    expect(Math.abs(pseudo / R)).toBeLessThan(5 / Math.sqrt(R));
  });

  it('errors', () => {
    expect(() => new SumOfSinusoidsGains([path('a', [1])], 0, { sinusoids: 4, clock: uniformClock(1e-3) })).toThrow(
      new RangeError('SumOfSinusoidsGains(): sinusoids must be an integer >= 8, got 4'),
    );
    expect(() => new SumOfSinusoidsGains([path('a', [1, 2, 3])], 0, { sinusoids: 8, clock: uniformClock(1e-3) })).toThrow(
      new RangeError('SumOfSinusoidsGains(): path a: dopplersHz must hold 0, 1 or 2 spreads, got [1,2,3]'),
    );
    expect(() => new SumOfSinusoidsGains([path('a', [-1])], 0, { sinusoids: 8, clock: uniformClock(1e-3) })).toThrow(RangeError);
  });
});
