/**
 * Seeded complex additive white Gaussian noise on a signal y [Nr, N] (row-major, complex
 * interleaved re/im), at a stated SNR or with an absolute noise power.
 *
 * SNR (per receive antenna): SNR = P_s / sigma^2, where P_s is the mean received signal power
 * per antenna, P_s = (1 / (Nr N)) sum_r sum_n |y[r, n]|^2, either measured on the signal given
 * or a reference power the caller states, and sigma^2 = E|w|^2 is the noise power per complex
 * sample (sigma^2 / 2 in each of the real and imaginary parts).
 *
 * The unit noise sample of antenna r at absolute sample n comes from the keyed stream
 * (seed, key, n div RANDOM_BLOCK_STEPS, lane r), so noise added to a signal cut into blocks is
 * the same noise, sample for sample, as noise added in one call.
 */
import { BlockedStreams, RandomStream } from '../random.js';
import { checkFinite, checkInteger, checkNonNegative, checkPositive, checkSignal, type ComplexArray } from './checks.js';

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
}

/**
 * What `addAtSnr` used.
 * @example new NoiseSource({ seed: 1, streams: 1 }).addAtSnr(Float64Array.of(2, 0, 0, 2), 2, 10) satisfies NoiseLevel // { signalPower: 4, noiseVariance: 0.4 }
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
 * const noise = new NoiseSource({ seed: 7, streams: 2 });
 * const y = new Float64Array(2 * 2 * 1000);              // [2, 1000], silent
 * noise.add(y, 1000, 0.5);                                // meanPower(y, 2, 1000) ~ 0.5
 */
export class NoiseSource {
  /** Receive antennas Nr. */
  readonly streams: number;
  private readonly lanes: BlockedStreams[];
  private readonly draw = new Float64Array(2);
  private position = 0;

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
  }

  /** Absolute index of the next sample the source will serve. */
  get nextSample(): number {
    return this.position;
  }

  /**
   * Add CN(0, variance) noise to y [Nr, samples] in place, samples [firstSample,
   * firstSample + samples) of the source. `variance` is the noise power per complex sample
   * (in watts when y is in volts across 1 ohm, see thermalNoisePowerW). Returns y.
   */
  add(y: ComplexArray, samples: number, variance: number, firstSample = this.position): ComplexArray {
    const fn = 'NoiseSource.add()';
    checkSignal(fn, 'y', y, this.streams, samples);
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
   * P_s / 10^(snrDb / 10), with P_s measured on y, or `referencePower` when given (use it when
   * the SNR must not depend on the block, for example the expected received power).
   *
   * @example
   * const y = Float64Array.of(1, 0, 1, 0);                  // [1, 2], power 1
   * new NoiseSource({ seed: 1, streams: 1 }).addAtSnr(y, 2, 20) // { signalPower: 1, noiseVariance: 0.01 }
   */
  addAtSnr(y: ComplexArray, samples: number, snrDb: number, referencePower?: number, firstSample = this.position): NoiseLevel {
    const fn = 'NoiseSource.addAtSnr()';
    checkSignal(fn, 'y', y, this.streams, samples);
    checkFinite(fn, 'snrDb', snrDb);
    let signalPower: number;
    if (referencePower === undefined) {
      signalPower = meanPower(y, this.streams, samples);
      if (!(signalPower > 0)) throw new RangeError(`${fn}: the signal has zero power, so an SNR cannot set the noise; give referencePower, got signal power ${signalPower}`);
    } else {
      checkPositive(fn, 'referencePower', referencePower);
      signalPower = referencePower;
    }
    const noiseVariance = signalPower / 10 ** (snrDb / 10);
    this.add(y, samples, noiseVariance, firstSample);
    return { signalPower, noiseVariance };
  }
}
