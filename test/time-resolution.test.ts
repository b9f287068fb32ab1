/**
 * Time resolution finer than a subframe (3GPP TS 38.211 section 4 numerologies, uniform symbols)
 * and the fading models through the scenario pipeline.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { besselJ0, maxDopplerHz, nrNumerology, nrSymbolTimesS } from '@pathweave/core';
import { buildScenario, decodeNpy, safeParseScenario, formatProblem, type Scenario } from '@pathweave/io';
import { ROOT, runCli, tempDir, writeScenario } from './support/run.js';

const base = JSON.parse(readFileSync(join(ROOT, 'test', 'fixtures', 'explicit-street-corner.json'), 'utf8')) as Record<string, any>;
const edit = (f: (s: Record<string, any>) => void): Record<string, any> => {
  const s = structuredClone(base);
  s.timing.subframes = 4;
  s.band.subcarriers = 4;
  f(s);
  return s;
};
const parse = (doc: unknown): Scenario => {
  const r = safeParseScenario(doc);
  if (!r.ok) throw new Error(r.problems.map(formatProblem).join('; '));
  return r.scenario;
};
const problems = (doc: unknown): string[] => {
  const r = safeParseScenario(doc);
  return r.ok ? [] : r.problems.map(formatProblem);
};

describe('numerology and symbols', () => {
  it('mu = 1 gives 28 symbols per 1 ms subframe and tensors [S, symbols, K, Nr, Nt] (TS 38.211: 14 symbols per slot, 2^mu slots)', () => {
    const s = parse(
      edit((s) => {
        s.timing.numerology = 1;
        delete s.band.spacingHz; // derived: 15 kHz * 2^mu
      }),
    );
    const built = buildScenario(s);
    expect(built.shape).toEqual([4, 28, 4, 4, 32]);
    const dir = tempDir();
    const file = writeScenario(dir, 's.json', s);
    const r = runCli(['generate', file, '--out', join(dir, 'h.npy'), '--quiet']);
    expect(r.status, r.stderr).toBe(0);
    expect(decodeNpy(readFileSync(join(dir, 'h.npy'))).shape).toEqual([4, 28, 4, 4, 32]);
    // the clock follows the true, uneven symbol starts (longer CP at l = 0 and l = 7 * 2^mu)
    const times = nrSymbolTimesS(nrNumerology(1));
    expect(built.generator.clock.timeS(28 + 15)).toBeCloseTo(1e-3 + times[15]!, 15);
  });

  it('refuses a spacing that disagrees with the numerology, mu outside 0..4 and an extended CP off mu = 2', () => {
    expect(problems(edit((s) => (s.timing.numerology = 1)))).toContain(
      'band.spacingHz: numerology 1 means 30000 Hz; give that or leave spacingHz out, got 120000',
    );
    expect(problems(edit((s) => (s.timing.numerology = 5)))).toContain(
      'timing.numerology: must be an integer from 0 to 4 (subcarrier spacing 15 kHz * 2^mu), got 5',
    );
    expect(
      problems(
        edit((s) => {
          s.timing.numerology = 3;
          s.timing.cyclicPrefix = 'extended';
        }),
      ),
    ).toContain('timing.cyclicPrefix: "extended" is allowed only with numerology 2 (60 kHz, TS 38.211 Table 4.2-1), got numerology 3');
    expect(problems(edit((s) => (s.fading.speedMps = -3)))).toContain('fading.speedMps: must be >= 0, got -3');
  });

  it('uniform symbols: gauss-markov steps one symbol, so alpha = J0(2 pi f_D T_s / N) (Clarke/Jakes)', () => {
    const s = parse(
      edit((s) => {
        s.timing.symbolsPerSubframe = 14;
        s.fading = { model: 'gauss-markov', speedMps: 3 };
        s.paths.forEach((p: Record<string, unknown>) => delete p.maxDopplerHz);
      }),
    );
    const g = buildScenario(s).generator;
    expect(g.shape).toEqual([4, 14, 4, 4, 32]);
    const expected = besselJ0((2 * Math.PI * maxDopplerHz(28e9, 3) * 1e-3) / 14); // scipy.special.j0 form (C)
    for (const c of g.correlations) expect(c.alpha).toBeCloseTo(expected, 14);
  });

  it('warns when the step under-samples the Doppler spread', () => {
    const s = parse(
      edit((s) => {
        s.fading = { model: 'gauss-markov', speedMps: 30 };
        s.carrierHz = 60e9;
      }),
    );
    const w = buildScenario(s).warnings.join('\n');
    expect(w).toMatch(/timing\.subframeS/);
    expect(w).toMatch(/6004/); // f_D = 60 GHz * 30 m/s / c = 6004 Hz (C)
  });

  it.each([[{ model: 'ar', order: 12 }], [{ model: 'sum-of-sinusoids', sinusoids: 12 }], [{ model: 'geometric', ricianKDb: 6 }]])(
    'fading %o runs through the pipeline with unit-power gains scaled by the path powers',
    (fading) => {
      const s = parse(
        edit((s) => {
          s.timing.subframes = 3000;
          s.band.subcarriers = 1;
          s.fading = { ...fading, speedMps: 1.5 };
        }),
      );
      const g = buildScenario(s).generator;
      const gains = g.gains(0, 3000);
      const L = g.pathCount;
      const powers = (s.paths ?? []).map((p) => 10 ** (p.powerDb / 10));
      // Var of the mean of N samples of |rho|^2 for a complex Gaussian process of correlation R(k):
      // gamma^2 / N^2 sum_(i,j) |R(i - j)|^2 (|rho|^2 has autocovariance gamma^2 |R|^2); with the
      // Clarke target R = J0(2 pi f_D k T) this bounds the Rician case too, whose specular part
      // does not fluctuate (textbook second-order statistics of Gaussian processes).
      const fD = maxDopplerHz(28e9, 1.5);
      let sum = 3000;
      for (let k = 1; k < 3000; k++) sum += 2 * (3000 - k) * besselJ0(2 * Math.PI * fD * k * 1e-3) ** 2;
      const relativeSd = Math.sqrt(sum) / 3000;
      for (let l = 0; l < L; l++) {
        let p = 0;
        for (let t = 0; t < 3000; t++) p += gains[2 * (t * L + l)]! ** 2 + gains[2 * (t * L + l) + 1]! ** 2;
        expect(Math.abs(p / 3000 / powers[l]! - 1)).toBeLessThan(5 * relativeSd);
      }
      expect(relativeSd).toBeLessThan(0.1); // the check is sharp enough to catch a wrong scale
    },
  );

  it('refuses an AR order too high for the conditioning', () => {
    const dir = tempDir();
    const file = writeScenario(
      dir,
      's.json',
      edit((s) => (s.fading = { model: 'ar', order: 250, speedMps: 0.02 })),
    );
    const r = runCli(['generate', file, '--out', join(dir, 'x.npy')]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/fading\.order: order 250 is too high for this correlation: the loaded Yule-Walker matrix has condition number/);
  });
});
