/**
 * The one place that turns a fading model (scenario key fading.model) into its gain process:
 * callers pass the model's description and the paths, and read back the process with the two
 * traits the assembler needs (whether it keeps the amplitude's phase, whether it varies in time).
 * Gains: [steps, L] complex interleaved (gains.ts).
 */
import { GaussMarkovGains, StaticGains, type GainPath, type GainProcess } from '../gains.js';
import { AR_DEFAULT_ORDER, AutoregressiveGains } from './ar.js';
import type { FadingPath, StepClock } from './clock.js';
import { GeometricGains } from './geometric.js';
import { SOS_DEFAULT_SINUSOIDS, SumOfSinusoidsGains } from './sum-of-sinusoids.js';

/**
 * Gain models (scenario key fading.model) with their options.
 * @example const fading: FadingSpec = { model: 'ar', order: 8, speedMps: 3 };
 */
export type FadingSpec =
  | { model: 'static' }
  | { model: 'gauss-markov'; speedMps?: number | undefined }
  | { model: 'ar'; order?: number | undefined; speedMps?: number | undefined }
  | { model: 'sum-of-sinusoids'; sinusoids?: number | undefined; speedMps?: number | undefined }
  | { model: 'geometric'; ricianKDb?: number | undefined; sinusoids?: number | undefined; speedMps?: number | undefined };

/**
 * One path as the factory takes it: everything any model reads (the Gauss-Markov alpha, the
 * Doppler spreads of the AR, sum-of-sinusoids and diffuse parts, the geometric shift).
 * @example const walker: GainProcessPath = { id: 'los', power: 1, phaseRad: 0, alpha: 0.995, dopplersHz: [93.4] };
 */
export interface GainProcessPath extends GainPath, FadingPath {}

/**
 * A fading model's gain process and the traits the assembler needs to know about it.
 * @example
 * const { deterministic, timeVarying } = createGainProcess({ model: 'static' }, [], 1, uniformClock(1e-3));
 * [deterministic, timeVarying] // [true, false]
 */
export interface FadingGains {
  /** Unit-power gains of the paths, keyed by their ids. */
  readonly process: GainProcess;
  /** True when the gains keep the phase of the timeline's amplitude (static, geometric); false when they draw it (see the module comment of channel.ts). */
  readonly deterministic: boolean;
  /** True when the gains change with time, so the step must resolve their Doppler (every model but static). */
  readonly timeVarying: boolean;
}

const TRAITS: Record<FadingSpec['model'], { deterministic: boolean; timeVarying: boolean }> = {
  static: { deterministic: true, timeVarying: false },
  'gauss-markov': { deterministic: false, timeVarying: true },
  ar: { deterministic: false, timeVarying: true },
  'sum-of-sinusoids': { deterministic: false, timeVarying: true },
  geometric: { deterministic: true, timeVarying: true },
};

/**
 * Make the gain process of a fading model: "static" and "gauss-markov" step by step (gains.ts),
 * "ar" steps by clock.stepS, "sum-of-sinusoids" and "geometric" evaluate at clock.timeS.
 * Defaults: order AR_DEFAULT_ORDER, sinusoids SOS_DEFAULT_SINUSOIDS.
 * @example
 * const paths: GainProcessPath[] = [{ id: 'a', power: 1, phaseRad: 0, alpha: 0.9, dopplersHz: [100] }]; // one path, 100 Hz maximum Doppler
 * const made = createGainProcess({ model: 'ar', order: 20 }, paths, 7, uniformClock(1e-3));
 * [made.process instanceof AutoregressiveGains, made.deterministic, made.timeVarying] // [true, false, true]
 */
export function createGainProcess(fading: FadingSpec, paths: readonly GainProcessPath[], seed: number, clock: StepClock): FadingGains {
  const traits = (TRAITS as Partial<Record<string, { deterministic: boolean; timeVarying: boolean }>>)[fading.model];
  if (traits === undefined) {
    throw new RangeError(
      `createGainProcess(): fading.model must be one of ${Object.keys(TRAITS)
        .map((m) => `"${m}"`)
        .join(', ')}, got ${JSON.stringify(fading.model)}`,
    );
  }
  return { process: processOf(fading, paths, seed, clock), ...traits };
}

function processOf(fading: FadingSpec, paths: readonly GainProcessPath[], seed: number, clock: StepClock): GainProcess {
  switch (fading.model) {
    case 'static':
      return new StaticGains(paths);
    case 'gauss-markov':
      return new GaussMarkovGains(paths, seed);
    case 'ar':
      return new AutoregressiveGains(paths, seed, { order: fading.order ?? AR_DEFAULT_ORDER, stepS: clock.stepS });
    case 'sum-of-sinusoids':
      return new SumOfSinusoidsGains(paths, seed, { sinusoids: fading.sinusoids ?? SOS_DEFAULT_SINUSOIDS, clock });
    case 'geometric':
      return new GeometricGains(paths, seed, { clock, ricianKDb: fading.ricianKDb, sinusoids: fading.sinusoids });
  }
}
