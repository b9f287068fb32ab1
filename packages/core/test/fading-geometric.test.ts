import { describe, expect, it } from 'vitest';
import { GeometricGains, SumOfSinusoidsGains, nrNumerology, numerologyClock, uniformClock, type FadingPath } from '../src/index.js';

describe('GeometricGains (docs/conventions.md, geometric Doppler)', () => {
  it('rho(t) = sqrt(gamma) exp(j (phase0 + 2 pi f_l t)) at the true NR symbol times', () => {
    const paths: FadingPath[] = [
      { id: 'los', power: 4, phaseRad: 0.3, dopplersHz: [500], dopplerHz: 412.5 },
      { id: 'wall:2', power: 0.01, phaseRad: -2, dopplersHz: [], dopplerHz: -87 },
    ];
    const clock = numerologyClock(nrNumerology(3));
    const g = new GeometricGains(paths, 0, { clock });
    const steps = 500;
    const out = new Float64Array(2 * 2 * steps);
    g.fill(out, 0, steps);
    for (let s = 0; s < steps; s++) {
      const t = clock.timeS(s);
      paths.forEach((p, l) => {
        const phase = p.phaseRad + 2 * Math.PI * p.dopplerHz! * t;
        expect(Math.abs(out[2 * (2 * s + l)]! - Math.sqrt(p.power) * Math.cos(phase))).toBeLessThan(1e-12);
        expect(Math.abs(out[2 * (2 * s + l) + 1]! - Math.sqrt(p.power) * Math.sin(phase))).toBeLessThan(1e-12);
      });
    }
  });

  it('Rician: specular part of power K / (K + 1) plus the path sum-of-sinusoids process scaled to 1 / (K + 1)', () => {
    const p: FadingPath = { id: 'los', power: 2, phaseRad: 1, dopplersHz: [300], dopplerHz: 120 };
    const clock = uniformClock(1e-4);
    const K = 10 ** (3 / 10);
    const g = new GeometricGains([p], 9, { clock, ricianKDb: 3, sinusoids: 10 });
    const sos = new SumOfSinusoidsGains([{ ...p, power: 1 }], 9, { sinusoids: 10, clock });
    const a = new Float64Array(2 * 100);
    const b = new Float64Array(2 * 100);
    g.fill(a, 7, 100);
    sos.fill(b, 7, 100);
    for (let s = 0; s < 100; s++) {
      const phase = 1 + 2 * Math.PI * 120 * clock.timeS(7 + s);
      const spec = Math.sqrt((2 * K) / (K + 1));
      const diff = Math.sqrt(2 / (K + 1));
      expect(Math.abs(a[2 * s]! - (spec * Math.cos(phase) + diff * b[2 * s]!))).toBeLessThan(1e-12);
      expect(Math.abs(a[2 * s + 1]! - (spec * Math.sin(phase) + diff * b[2 * s + 1]!))).toBeLessThan(1e-12);
    }
  });

  it('Rician mean power E|rho|^2 = gamma over 6000 paths', () => {
    const n = 6000,
      gamma = 3,
      K = 10 ** (6 / 10);
    const paths = Array.from({ length: n }, (_, i): FadingPath => ({ id: `p${i}`, power: gamma, phaseRad: 0, dopplersHz: [40], dopplerHz: 10 }));
    const out = new Float64Array(2 * n);
    new GeometricGains(paths, 4, { clock: uniformClock(1e-3), ricianKDb: 6 }).fillAtTimes(out, [0.25]);
    let sum = 0;
    for (let l = 0; l < n; l++) sum += out[2 * l]! ** 2 + out[2 * l + 1]! ** 2;
    // Var|rho|^2 = 2 s^2 d + d^2 for specular power s^2 and diffuse power d (circular Gaussian diffuse part)
    const s2 = (gamma * K) / (K + 1),
      d = gamma / (K + 1);
    expect(Math.abs(sum / n - gamma)).toBeLessThan(5 * Math.sqrt((2 * s2 * d + d * d) / n));
  });

  it('errors', () => {
    const p: FadingPath = { id: 'a', power: 1, phaseRad: 0, dopplersHz: [] };
    expect(() => new GeometricGains([p], 0, { clock: uniformClock(1e-3), ricianKDb: Number.NaN })).toThrow(
      new RangeError('GeometricGains(): ricianKDb must be a finite number of dB, got NaN'),
    );
    expect(() => new GeometricGains([{ ...p, power: -1 }], 0, { clock: uniformClock(1e-3) })).toThrow(
      new RangeError('GeometricGains(): path a: power must be a finite number >= 0, got -1'),
    );
  });
});
