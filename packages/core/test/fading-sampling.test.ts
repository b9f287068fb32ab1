import { describe, expect, it } from 'vitest';
import {
  AR_DEFAULT_ORDER,
  AutoregressiveGains,
  GaussMarkovGains,
  GeometricGains,
  SOS_DEFAULT_SINUSOIDS,
  SumOfSinusoidsGains,
  createGainProcess,
  gainBandwidthHz,
  underSamplingWarning,
  uniformClock,
  type FadingSpec,
  type GainProcess,
} from '../src/index.js';

describe('under-sampling warning (Nyquist: f_max T <= 0.5)', () => {
  it('names the step that would resolve it', () => {
    expect(underSamplingWarning(2801.938, 1e-3, 'timing.subframeS')).toBe(
      'timing.subframeS = 0.001 s under-samples a gain of bandwidth 2801.9 Hz (f T = 2.802 > 0.5); use a step of at most 1.784e-4 s',
    );
    expect(underSamplingWarning(500, 1e-3)).toBeUndefined(); // exactly 0.5 is resolved
    expect(underSamplingWarning(501, 1e-3)).toMatch(/use a step of at most 9\.980e-4 s$/);
    expect(() => underSamplingWarning(1, 0)).toThrow(new RangeError('underSamplingWarning(): stepS must be a finite number > 0, got 0'));
  });

  it('bandwidth: spreads add (spectrum of J0 J0 spans f_t + f_r), a larger signed shift wins', () => {
    expect(gainBandwidthHz([300, 200])).toBe(500);
    expect(gainBandwidthHz([100], -250)).toBe(250);
    expect(gainBandwidthHz([])).toBe(0);
  });
});

describe('createGainProcess: the one factory of gain processes', () => {
  const paths = [
    { id: 'a', power: 1, phaseRad: 0, alpha: 0.9, dopplersHz: [10] },
    { id: 'b', power: 1, phaseRad: 0, alpha: 0.5, dopplersHz: [40, 20], dopplerHz: 15 },
  ];
  const clock = uniformClock(1e-3);
  const run = (g: GainProcess, n: number): Float64Array => {
    const out = new Float64Array(2 * n * g.pathCount);
    g.fill(out, 0, n);
    return out;
  };

  it('makes the process of every model, with its traits', () => {
    const made = (fading: FadingSpec) => {
      const g = createGainProcess(fading, paths, 1, clock);
      return [g.process.constructor.name, g.deterministic, g.timeVarying];
    };
    expect(made({ model: 'static' })).toEqual(['StaticGains', true, false]);
    expect(made({ model: 'gauss-markov' })).toEqual(['GaussMarkovGains', false, true]);
    expect(made({ model: 'ar', order: 4 })).toEqual(['AutoregressiveGains', false, true]);
    expect(made({ model: 'sum-of-sinusoids' })).toEqual(['SumOfSinusoidsGains', false, true]);
    expect(made({ model: 'geometric', ricianKDb: 3 })).toEqual(['GeometricGains', true, true]);
  });

  it('passes the options and the documented defaults to the models (the same numbers as the models built directly)', () => {
    const n = 40;
    expect(run(createGainProcess({ model: 'gauss-markov' }, paths, 5, clock).process, n)).toEqual(run(new GaussMarkovGains(paths, 5), n));
    expect(run(createGainProcess({ model: 'ar' }, paths, 5, clock).process, n)).toEqual(
      run(new AutoregressiveGains(paths, 5, { order: AR_DEFAULT_ORDER, stepS: 1e-3 }), n),
    );
    expect(run(createGainProcess({ model: 'ar', order: 6 }, paths, 5, clock).process, n)).toEqual(
      run(new AutoregressiveGains(paths, 5, { order: 6, stepS: 1e-3 }), n),
    );
    expect(run(createGainProcess({ model: 'sum-of-sinusoids' }, paths, 5, clock).process, n)).toEqual(
      run(new SumOfSinusoidsGains(paths, 5, { sinusoids: SOS_DEFAULT_SINUSOIDS, clock }), n),
    );
    expect(run(createGainProcess({ model: 'sum-of-sinusoids', sinusoids: 9 }, paths, 5, clock).process, n)).toEqual(
      run(new SumOfSinusoidsGains(paths, 5, { sinusoids: 9, clock }), n),
    );
    expect(run(createGainProcess({ model: 'geometric', ricianKDb: 3, sinusoids: 9 }, paths, 5, clock).process, n)).toEqual(
      run(new GeometricGains(paths, 5, { clock, ricianKDb: 3, sinusoids: 9 }), n),
    );
    expect(AR_DEFAULT_ORDER).toBe(20);
  });

  it('static: rho = sqrt(gamma) exp(j phase) at every step (design of gains.ts)', () => {
    const g = createGainProcess({ model: 'static' }, [{ id: 's', power: 0.25, phaseRad: Math.PI / 3, alpha: 1, dopplersHz: [] }], 0, clock).process;
    const out = run(g, 3);
    for (let s = 0; s < 3; s++) {
      expect(out[2 * s]).toBeCloseTo(0.5 * Math.cos(Math.PI / 3), 15);
      expect(out[2 * s + 1]).toBeCloseTo(0.5 * Math.sin(Math.PI / 3), 15);
    }
  });

  it('refuses an unknown model, naming the allowed ones', () => {
    expect(() => createGainProcess({ model: 'jakes' } as unknown as FadingSpec, paths, 1, clock)).toThrow(
      new RangeError('createGainProcess(): fading.model must be one of "static", "gauss-markov", "ar", "sum-of-sinusoids", "geometric", got "jakes"'),
    );
  });
});
