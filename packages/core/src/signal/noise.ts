/**
 * Seeded complex additive white Gaussian noise on a signal y [Nr, N] (row-major, complex
 * interleaved re/im), at a stated SNR or with an absolute noise power.
 *
 * The noise floor is fixed for the run by default: a stated noise power (`noisePowerW`), the
 * thermal noise k T B F of a link budget (`budget`), or an SNR against a stated reference
 * signal power (`referencePower`). Measuring the signal of each call and scaling the noise to it
 * makes the noise follow the fading (it behaves like automatic gain control), so it is only done
 * when asked for (`addAtSnr(..., { perCall: true })`).
 *
 * SNR (per receive antenna): SNR = P_s / sigma^2, where P_s is the mean received signal power
 * per antenna, P_s = (1 / (Nr N)) sum_r sum_n |y[r, n]|^2 for a per-call measurement, or the
 * reference power stated, and sigma^2 = E|w|^2 is the noise power per complex sample
 * (sigma^2 / 2 in each of the real and imaginary parts).
 *
 * The unit noise sample of antenna r at absolute sample n comes from the keyed stream
 * (seed, key, n div RANDOM_BLOCK_STEPS, lane r), so noise added to a signal cut into blocks is
 * the same noise, sample for sample, as noise added in one call.
 */
import { BlockedStreams, RandomStream } from '../random.js';
import { checkFinite, checkInteger, checkNonNegative, checkPositive, checkSignal, type ComplexArray } from './checks.js';
import { budgetNoisePowerW, type LinkBudget } from './link-budget.js';

/**
 * Options of a NoiseSource.
 * @example const interference: NoiseSourceOptions = { seed: 1, streams: 4, key: 'interference' };
 */
export interface NoiseSourceOptions {
  /** Seed of the run, integer in [0, 2^53). */
  seed: number;
  /** Receive antennas Nr (rows of the signal). */
  streams: number;
  /** Stream key; use distinct keys for independent noise sources of one run. Default "noise". */
  key?: string;
  /** Fixed noise power per complex sample (the floor `add` uses when no variance is given). */
  noisePowerW?: number;
  /** A link budget whose thermal noise k T B F is the fixed floor (instead of `noisePowerW`). */
  budget?: LinkBudget;
  /** Signal power per antenna that `addAtSnr` refers its SNR to, fixed for the run. */
  referencePower?: number;
}

/**
 * Where `addAtSnr` takes the signal power from when the source has no `referencePower`.
 * @example const agc: SnrReference = { perCall: true }; // noise scaled to each call's own signal power
 */
export interface SnrReference {
  /** The signal power per antenna the SNR refers to. */
  referencePower?: number;
  /** Measure each call's own signal and scale the noise to it (like automatic gain control). */
  perCall?: boolean;
}

/**
 * What `addAtSnr` used.
 * @example new NoiseSource({ seed: 1, streams: 1, referencePower: 4 }).addAtSnr(Float64Array.of(2, 0, 0, 2), 2, 10) satisfies NoiseLevel // { signalPower: 4, noiseVariance: 0.4 }
 */
export interface NoiseLevel {
  /** Mean signal power per antenna P_s the SNR refers to (measured or the reference given). */
  signalPower: number;
  /** Noise power per complex sample sigma^2 = P_s / 10^(snrDb / 10). */
  noiseVariance: number;
}

const discardComplex = (stream: RandomStream): void => {
  stream.nextUniform();
  stream.nextUniform();
};

/**
 * Mean power per antenna of y [streams, samples]: (1 / (streams samples)) sum |y|^2.
 * @example meanPower(Float64Array.of(1, 1, 0, 2), 1, 2) // 3
 */
export function meanPower(y: ComplexArray, streams: number, samples: number): number {
  const fn = 'meanPower()';
  checkInteger(fn, 'streams', streams, 1);
  checkSignal(fn, 'y', y, streams, samples);
  let sum = 0;
  for (let i = 0; i < y.length; i++) sum += y[i]! * y[i]!;
  return sum / (streams * samples);
}

/**
 * Noise power for a given signal power and SNR: sigma^2 = P_s / 10^(snrDb / 10).
 * @example noiseVarianceForSnr(2, 10) // 0.2
 */
export function noiseVarianceForSnr(signalPower: number, snrDb: number): number {
  const fn = 'noiseVarianceForSnr()';
  checkPositive(fn, 'signalPower', signalPower);
  checkFinite(fn, 'snrDb', snrDb);
  return signalPower / 10 ** (snrDb / 10);
}

/**
 * A seeded source of circular complex Gaussian noise for Nr streams, positioned by absolute
 * sample index: each call continues where the previous one ended unless `firstSample` says
 * otherwise.
 *
 * @example
 * const noise = new NoiseSource({ seed: 7, streams: 2, noisePowerW: 0.5 });
 * const y = new Float64Array(2 * 2 * 1000);              // [2, 1000], silent
 * noise.add(y, 1000);                                     // meanPower(y, 2, 1000) ~ 0.5, the floor
 */
export class NoiseSource {
  /** Receive antennas Nr. */
  readonly streams: number;
  private readonly lanes: BlockedStreams[];
  private readonly draw = new Float64Array(2);
  private position = 0;
  /** Fixed noise power per complex sample, or undefined when none was stated. */
  readonly noiseFloor: number | undefined;
  /** Reference signal power of `addAtSnr`, or undefined when none was stated. */
  readonly referencePower: number | undefined;

  constructor(options: NoiseSourceOptions) {
    const fn = 'NoiseSource()';
    if (options === null || typeof options !== 'object') throw new TypeError(`${fn}: options must be an object { seed, streams, key? }, got ${options}`);
    checkInteger(fn, 'streams', options.streams, 1);
    const key = options.key ?? 'noise';
    if (typeof key !== 'string' || key.length === 0) throw new TypeError(`${fn}: key must be a non-empty string, got ${String(key)}`);
    this.streams = options.streams;
    this.lanes = [];
    for (let r = 0; r < this.streams; r++) this.lanes.push(new BlockedStreams(options.seed, key, discardComplex, r));
    new RandomStream(options.seed, key); // a bad seed fails here, not at the first sample
    if (options.noisePowerW !== undefined && options.budget !== undefined) throw new TypeError(`${fn}: give noisePowerW or budget, not both`);
    if (options.noisePowerW !== undefined) checkNonNegative(fn, 'noisePowerW', options.noisePowerW);
    if (options.referencePower !== undefined) checkPositive(fn, 'referencePower', options.referencePower);
    this.noiseFloor = options.budget !== undefined ? budgetNoisePowerW(options.budget) : options.noisePowerW;
    this.referencePower = options.referencePower;
  }

  /** Absolute index of the next sample the source will serve. */
  get nextSample(): number {
    return this.position;
  }

  /**
   * Add CN(0, variance) noise to y [Nr, samples] in place, samples [firstSample,
   * firstSample + samples) of the source. `variance` is the noise power per complex sample
   * (in watts when y is in volts across 1 ohm, see thermalNoisePowerW); default the source's
   * fixed floor (`noisePowerW` or `budget`). Returns y.
   */
  add(y: ComplexArray, samples: number, variance: number | undefined = this.noiseFloor, firstSample = this.position): ComplexArray {
    const fn = 'NoiseSource.add()';
    checkSignal(fn, 'y', y, this.streams, samples);
    if (variance === undefined)
      throw new TypeError(`${fn}: no noise power: give variance, or create the source with noisePowerW (a stated floor) or budget (thermal k T B F)`);
    checkNonNegative(fn, 'variance', variance);
    checkInteger(fn, 'firstSample', firstSample, 0);
    const draw = this.draw;
    for (let r = 0; r < this.streams; r++) {
      const lane = this.lanes[r]!;
      const base = 2 * r * samples;
      for (let n = 0; n < samples; n++) {
        lane.at(firstSample + n).nextComplexNormal(draw, 0, variance);
        y[base + 2 * n] = y[base + 2 * n]! + draw[0]!;
        y[base + 2 * n + 1] = y[base + 2 * n + 1]! + draw[1]!;
      }
    }
    this.position = firstSample + samples;
    return y;
  }

  /**
   * Add noise at a stated SNR (per receive antenna, see the module comment): sigma^2 =
   * P_s / 10^(snrDb / 10). P_s is a fixed reference: `reference` (a number, or
   * `{ referencePower }`), else the source's `referencePower`. Only `{ perCall: true }` measures
   * P_s on this call's y instead, so the noise follows the signal's fades (automatic gain control).
   *
   * @example
   * const y = Float64Array.of(1, 0, 1, 0);                  // [1, 2], power 1
   * new NoiseSource({ seed: 1, streams: 1, referencePower: 1 }).addAtSnr(y, 2, 20) // { signalPower: 1, noiseVariance: 0.01 }
   * new NoiseSource({ seed: 1, streams: 1 }).addAtSnr(Float64Array.of(2, 0, 2, 0), 2, 20, { perCall: true }) // { signalPower: 4, noiseVariance: 0.04 }
   */
  addAtSnr(y: ComplexArray, samples: number, snrDb: number, reference?: number | SnrReference, firstSample = this.position): NoiseLevel {
    const fn = 'NoiseSource.addAtSnr()';
    checkSignal(fn, 'y', y, this.streams, samples);
    checkFinite(fn, 'snrDb', snrDb);
    let signalPower: number;
    const referencePower = typeof reference === 'number' ? reference : (reference?.referencePower ?? this.referencePower);
    if (referencePower === undefined) {
      if (typeof reference !== 'object' || reference.perCall !== true) {
        throw new TypeError(
          `${fn}: no reference power for the SNR: create the source with referencePower (the received signal power per antenna, fixed for the run), ` +
            "pass referencePower here, or pass { perCall: true } to scale the noise to each call's own signal power (this behaves like automatic gain control)",
        );
      }
      signalPower = meanPower(y, this.streams, samples);
      if (!(signalPower > 0))
        throw new RangeError(`${fn}: the signal has zero power, so an SNR cannot set the noise; give referencePower, got signal power ${signalPower}`);
    } else {
      checkPositive(fn, 'referencePower', referencePower);
      signalPower = referencePower;
    }
    const noiseVariance = signalPower / 10 ** (snrDb / 10);
    this.add(y, samples, noiseVariance, firstSample);
    return { signalPower, noiseVariance };
  }
}
