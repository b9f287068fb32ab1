/**
 * Gain processes beyond AR(1) and NR symbol timing: AR(p) fitted to the Clarke/Jakes correlation,
 * sum-of-sinusoids (single and double ring), geometric Doppler with an optional Rician part, step
 * clocks (uniform or NR numerology), and the under-sampling check.
 */
import type { GainProcess } from '../gains.js';
import { AutoregressiveGains } from './ar.js';
import type { FadingPath, StepClock } from './clock.js';
import { GeometricGains } from './geometric.js';
import { SOS_DEFAULT_SINUSOIDS, SumOfSinusoidsGains } from './sum-of-sinusoids.js';

export * from './numerology.js';
export * from './clock.js';
export * from './sampling.js';
export * from './ar.js';
export * from './sum-of-sinusoids.js';
export * from './geometric.js';

/**
 * The fading models of this folder (scenario key fading.model).
 * @example const model: FadingModelName = 'sum-of-sinusoids';
 */
export type FadingModelName = 'ar' | 'sum-of-sinusoids' | 'geometric';

/**
 * A default for fading.order.
 * @example AR_DEFAULT_ORDER // 20
 */
export const AR_DEFAULT_ORDER = 20;

/**
 * Options of createFadingGains, named after the scenario keys.
 * @example const options: FadingGainsOptions = { clock: uniformClock(1e-3), order: 10 };
 */
export interface FadingGainsOptions {
  clock: StepClock;
  /** fading.order (ar), default AR_DEFAULT_ORDER. */
  order?: number | undefined;
  /** fading.sinusoids (sum-of-sinusoids, and the diffuse part of geometric), default SOS_DEFAULT_SINUSOIDS. */
  sinusoids?: number | undefined;
  /** fading.ricianKDb (geometric). */
  ricianKDb?: number | undefined;
}

/**
 * The gain process of a fading model: "ar" steps by clock.stepS, the others evaluate at clock.timeS.
 * @example
 * const paths: FadingPath[] = [{ id: 'a', power: 1, phaseRad: 0, dopplersHz: [100] }]; // one path, 100 Hz maximum Doppler
 * createFadingGains('ar', paths, 7, { clock: uniformClock(1e-3), order: 20 }) instanceof AutoregressiveGains // true
 */
export function createFadingGains(model: FadingModelName, paths: readonly FadingPath[], seed: number, options: FadingGainsOptions): GainProcess {
  switch (model) {
    case 'ar':
      return new AutoregressiveGains(paths, seed, { order: options.order ?? AR_DEFAULT_ORDER, stepS: options.clock.stepS });
    case 'sum-of-sinusoids':
      return new SumOfSinusoidsGains(paths, seed, { sinusoids: options.sinusoids ?? SOS_DEFAULT_SINUSOIDS, clock: options.clock });
    case 'geometric':
      return new GeometricGains(paths, seed, { clock: options.clock, ricianKDb: options.ricianKDb, sinusoids: options.sinusoids });
    default:
      throw new RangeError(`createFadingGains(): model must be "ar", "sum-of-sinusoids" or "geometric", got ${String(model)}`);
  }
}
