/**
 * Radio impairments on baseband signals x [streams, N] (row-major, complex interleaved re/im):
 * carrier frequency offset and oscillator phase noise. Both are indexed by absolute sample, so
 * a signal cut into blocks gets exactly the same impairment as in one call.
 */
import { BlockedStreams, RandomStream } from '../random.js';
import {
  allocateLike,
  checkComplexArray,
  checkFinite,
  checkInteger,
  checkLength,
  checkNonNegative,
  checkPositive,
  checkSignal,
  type ComplexArray,
} from './checks.js';

const TWO_PI = 2 * Math.PI;

/**
 * Carrier frequency offset: out[t, n] = x[t, n] exp(j 2 pi df m / fs) with m = firstSample + n
 * the absolute sample index. The phase is formed from m afresh for every sample (no recurrence),
 * reduced to whole cycles first, so it carries no rounding drift and blocks agree bit for bit.
 * `out` may be `x` (in place). Returns out.
 * @example applyFrequencyOffset(Float64Array.of(1, 0, 1, 0), 1, 2, 250, 1000) // [1, 0, ~0, 1] (a quarter turn per sample)
 */
export function applyFrequencyOffset(
  x: ComplexArray,
  streams: number,
  samples: number,
  offsetHz: number,
  sampleRateHz: number,
  firstSample = 0,
  out: ComplexArray = allocateLike(x, x.length),
): ComplexArray {
  const fn = 'applyFrequencyOffset()';
  checkInteger(fn, 'streams', streams, 1);
  checkSignal(fn, 'x', x, streams, samples);
  checkFinite(fn, 'offsetHz', offsetHz);
  checkPositive(fn, 'sampleRateHz', sampleRateHz);
  checkInteger(fn, 'firstSample', firstSample, 0);
  checkLength(fn, 'out', out, x.length, `[${streams}, ${samples}] complex interleaved`);
  const cyclesPerSample = offsetHz / sampleRateHz;
  for (let n = 0; n < samples; n++) {
    const cycles = cyclesPerSample * (firstSample + n);
    const phase = TWO_PI * (cycles - Math.round(cycles));
    rotateSample(x, out, streams, samples, n, phase);
  }
  return out;
}

/** Sample n of every stream of [streams, samples] turned by exp(j phase) (x and out may alias). */
function rotateSample(x: ComplexArray, out: ComplexArray, streams: number, samples: number, n: number, phase: number): void {
  const c = Math.cos(phase),
    s = Math.sin(phase);
  for (let t = 0; t < streams; t++) {
    const i = 2 * (t * samples + n);
    const xr = x[i]!,
      xi = x[i + 1]!;
    out[i] = xr * c - xi * s;
    out[i + 1] = xr * s + xi * c;
  }
}

/**
 * Options of a PhaseNoise process.
 * @example const receiverOscillator: PhaseNoiseOptions = { seed: 3, linewidthHz: 100, sampleRateHz: 122.88e6, key: 'phase-noise/rx' };
 */
export interface PhaseNoiseOptions {
  /** Seed of the run, integer in [0, 2^53). */
  seed: number;
  /** 3 dB linewidth beta of the oscillator (two-sided Lorentzian spectrum), Hz, >= 0. */
  linewidthHz: number;
  /** Sample rate fs, Hz. */
  sampleRateHz: number;
  /** Stream key (distinct keys for the transmitter's and the receiver's oscillators). Default "phase-noise". */
  key?: string;
}

const discardNormal = (stream: RandomStream): void => {
  stream.nextNormal();
};

/**
 * Oscillator phase noise as a Wiener process: phi[0] = 0, phi[n] = phi[n-1] + e[n],
 * e[n] ~ N(0, 2 pi beta / fs) i.i.d., so Var(phi at time t) = 2 pi beta t. e[n] is drawn from
 * the keyed stream (seed, key, n div RANDOM_BLOCK_STEPS); the running phase is carried from
 * one call to the next, so blocks of any sizes see the same phases. One oscillator: every
 * stream of a signal gets the same phase.
 *
 * @example
 * const pn = new PhaseNoise({ seed: 3, linewidthHz: 100, sampleRateHz: 1e6 });
 * pn.phases(new Float64Array(4), 4)[0] // 0 (phi[0]); later values spread with variance 2 pi 100 n / 1e6
 */
export class PhaseNoise {
  /** 3 dB linewidth, Hz. */
  readonly linewidthHz: number;
  /** Sample rate, Hz. */
  readonly sampleRateHz: number;
  /** Standard deviation of one increment, sqrt(2 pi beta / fs), radians. */
  readonly incrementStd: number;
  private readonly stream: BlockedStreams;
  private readonly seed: number;
  private readonly key: string;
  private phase = 0;
  private position = 0;

  constructor(options: PhaseNoiseOptions) {
    const fn = 'PhaseNoise()';
    if (options === null || typeof options !== 'object')
      throw new TypeError(`${fn}: options must be an object { seed, linewidthHz, sampleRateHz, key? }, got ${options}`);
    checkNonNegative(fn, 'linewidthHz', options.linewidthHz);
    checkPositive(fn, 'sampleRateHz', options.sampleRateHz);
    this.linewidthHz = options.linewidthHz;
    this.sampleRateHz = options.sampleRateHz;
    this.incrementStd = Math.sqrt((TWO_PI * this.linewidthHz) / this.sampleRateHz);
    this.seed = options.seed;
    this.key = options.key ?? 'phase-noise';
    if (typeof this.key !== 'string' || this.key.length === 0) throw new TypeError(`${fn}: key must be a non-empty string, got ${String(this.key)}`);
    this.stream = new BlockedStreams(this.seed, this.key, discardNormal);
    new RandomStream(this.seed, this.key); // a bad seed fails here, not at the first sample
  }

  /** Absolute index of the next sample. */
  get nextSample(): number {
    return this.position;
  }

  /** Start again at sample 0 with phi[0] = 0. */
  reset(): void {
    this.phase = 0;
    this.position = 0;
  }

  /** Write the next `samples` phases phi[n] (radians, not wrapped) into out and advance. */
  phases(out: Float64Array, samples: number): Float64Array {
    const fn = 'PhaseNoise.phases()';
    checkInteger(fn, 'samples', samples, 1);
    if (!(out instanceof Float64Array) || out.length < samples)
      throw new RangeError(`${fn}: out must be a Float64Array of at least ${samples} values, got ${out instanceof Float64Array ? out.length : String(out)}`);
    for (let n = 0; n < samples; n++) out[n] = this.advance();
    return out;
  }

  /**
   * Multiply x [streams, samples] by exp(j phi[n]) for the next `samples` samples and advance.
   * `out` may be `x` (in place). Returns out.
   */
  apply(x: ComplexArray, streams: number, samples: number, out: ComplexArray = allocateLike(x, x.length)): ComplexArray {
    const fn = 'PhaseNoise.apply()';
    checkInteger(fn, 'streams', streams, 1);
    checkSignal(fn, 'x', x, streams, samples);
    checkComplexArray(fn, 'out', out);
    checkLength(fn, 'out', out, x.length, `[${streams}, ${samples}] complex interleaved`);
    for (let n = 0; n < samples; n++) {
      rotateSample(x, out, streams, samples, n, this.advance());
    }
    return out;
  }

  private advance(): number {
    const n = this.position;
    if (n > 0) this.phase += this.incrementStd * this.stream.at(n).nextNormal();
    this.position = n + 1;
    return this.phase;
  }
}
