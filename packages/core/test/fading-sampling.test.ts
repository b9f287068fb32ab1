import { describe, expect, it } from 'vitest';
import { GeometricGains, AutoregressiveGains, SumOfSinusoidsGains, createFadingGains, gainBandwidthHz, underSamplingWarning, uniformClock } from '../src/index.js';

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

describe('createFadingGains', () => {
  const paths = [{ id: 'a', power: 1, phaseRad: 0, dopplersHz: [10] }];
  const clock = uniformClock(1e-3);
  it('builds the model named by fading.model', () => {
    expect(createFadingGains('ar', paths, 1, { clock, order: 4 })).toBeInstanceOf(AutoregressiveGains);
    expect(createFadingGains('sum-of-sinusoids', paths, 1, { clock })).toBeInstanceOf(SumOfSinusoidsGains);
    expect(createFadingGains('geometric', paths, 1, { clock, ricianKDb: 3 })).toBeInstanceOf(GeometricGains);
    expect(() => createFadingGains('jakes' as 'ar', paths, 1, { clock })).toThrow(
      new RangeError('createFadingGains(): model must be "ar", "sum-of-sinusoids" or "geometric", got jakes'),
    );
  });
});
