/**
 * Time-varying convolution of baseband samples with a tap-delay MIMO channel.
 *
 * Layouts (row-major, complex interleaved re/im):
 *   input  x [Nt, N]          stream t, sample n at 2 (t N + n)
 *   taps   h [count, Nr, Nt]  one subframe (or OFDM symbol) of ChannelGenerator's tap-delay tensor
 *   output y [Nr, N]
 * y[r, n] = sum_t sum_d h_n[d, r, t] x[t, n - d], where h_n is the tap set in force at absolute
 * sample n (switched at subframe or symbol boundaries) and x before the first sample is zero.
 */
import type { ChannelGenerator, TensorArray } from '../channel.js';
import { allocateLike, checkComplexArray, checkInteger, checkLength, checkSignal, type ComplexArray } from './checks.js';

/**
 * Sizes of a ChannelFilter.
 * @example const twoByFour: ChannelFilterOptions = { transmitters: 2, receivers: 4, taps: 32 };
 */
export interface ChannelFilterOptions {
  /** Transmit streams Nt (rows of the input). */
  transmitters: number;
  /** Receive antennas Nr (rows of the output). */
  receivers: number;
  /** Taps per channel `count` (the filter keeps count - 1 past samples per stream). */
  taps: number;
}

interface ScheduledTaps {
  fromSample: number;
  values: Float64Array;
}

/**
 * A MIMO FIR filter whose state (the last count - 1 input samples per stream) is carried from
 * one `process` call to the next, so a long signal cut into blocks of any sizes gives exactly
 * the same output bits as one call. Each output sample is summed in float64 in the same order
 * (streams, then taps) wherever the block boundaries fall.
 *
 * @example
 * const f = new ChannelFilter({ transmitters: 1, receivers: 1, taps: 2 });
 * f.setTaps(Float64Array.of(1, 0, 0.5, 0));          // h[0] = 1, h[1] = 0.5
 * f.process(Float64Array.of(1, 0, 0, 0), 2);          // Float64Array [1, 0, 0.5, 0]
 * f.process(Float64Array.of(2, 0), 1);                // Float64Array [2, 0] (state carried: 2 + 0.5 * 0)
 */
export class ChannelFilter {
  /** Transmit streams Nt. */
  readonly transmitters: number;
  /** Receive antennas Nr. */
  readonly receivers: number;
  /** Taps per channel. */
  readonly taps: number;
  private readonly tapValues: number;
  private active: Float64Array | undefined;
  private readonly pending: ScheduledTaps[] = [];
  private readonly spare: Float64Array[] = [];
  private readonly history: Float64Array; // [Nt, taps - 1] complex, oldest first
  private processed = 0;

  constructor(options: ChannelFilterOptions) {
    const fn = 'ChannelFilter()';
    if (options === null || typeof options !== 'object')
      throw new TypeError(`${fn}: options must be an object { transmitters, receivers, taps }, got ${options}`);
    checkInteger(fn, 'transmitters', options.transmitters, 1);
    checkInteger(fn, 'receivers', options.receivers, 1);
    checkInteger(fn, 'taps', options.taps, 1);
    this.transmitters = options.transmitters;
    this.receivers = options.receivers;
    this.taps = options.taps;
    this.tapValues = 2 * this.taps * this.receivers * this.transmitters;
    this.history = new Float64Array(2 * this.transmitters * (this.taps - 1));
  }

  /**
   * A filter sized for a tap-delay ChannelGenerator (shape [S, count, Nr, Nt]).
   * @example
   * const end = (position: Vec3, elements: number) => ({ position, velocity: [0, 0, 0] as Vec3, array: AntennaArray.ula(elements, 0.005) });
   * const gen = new ChannelGenerator({ carrierHz: 28e9, subframeS: 1e-3, subframes: 1, seed: 1, fading: { model: 'static' }, transmitter: end([0, 0, 0], 2),
   *   receiver: end([10, 0, 0], 4), paths: [{ id: 'los', delayS: 0, power: 1, phaseRad: 0, departure: [1, 0, 0], arrival: [-1, 0, 0] }], grid: { domain: 'taps', sampleRateHz: 1e9, count: 16 } });
   * const f = ChannelFilter.forGenerator(gen); // gen.shape is [1, 16, 4, 2]
   * [f.taps, f.receivers, f.transmitters] // [16, 4, 2]
   */
  static forGenerator(generator: ChannelGenerator): ChannelFilter {
    if (generator.spec.grid.domain !== 'taps') {
      throw new RangeError(`ChannelFilter.forGenerator(): the generator must have a tap-delay grid (grid.domain 'taps'), got '${generator.spec.grid.domain}'`);
    }
    const n = generator.shape.length;
    const [count, Nr, Nt] = [generator.shape[n - 3]!, generator.shape[n - 2]!, generator.shape[n - 1]!];
    return new ChannelFilter({ transmitters: Nt, receivers: Nr, taps: count });
  }

  /** Absolute index of the next input sample (samples processed so far). */
  get samplesProcessed(): number {
    return this.processed;
  }

  /**
   * Use the tap set `h` [count, Nr, Nt] (copied) for output samples from absolute index
   * `fromSample` onward (default: the next sample). Several sets may be queued in increasing
   * order, for example one per subframe. `offset` is where the set starts in `h`, so a slice of
   * a multi-subframe tensor needs no copy.
   */
  setTaps(h: ComplexArray, fromSample = this.processed, offset = 0): void {
    const fn = 'ChannelFilter.setTaps()';
    checkComplexArray(fn, 'h', h);
    checkInteger(fn, 'offset', offset, 0);
    if (offset + this.tapValues > h.length) {
      throw new RangeError(
        `${fn}: h must hold ${this.tapValues} numbers from offset ${offset} ([${this.taps}, ${this.receivers}, ${this.transmitters}] complex interleaved), got ${h.length - offset}`,
      );
    }
    checkInteger(fn, 'fromSample', fromSample, 0);
    const last = this.pending.length > 0 ? this.pending[this.pending.length - 1]!.fromSample : this.processed;
    if (fromSample < last) {
      throw new RangeError(`${fn}: fromSample must be >= ${last} (samples already processed or a later set queued), got ${fromSample}`);
    }
    const values = this.spare.pop() ?? new Float64Array(this.tapValues);
    for (let i = 0; i < this.tapValues; i++) values[i] = h[offset + i]!;
    // A set queued for the same sample as the previous one replaces it.
    const tail = this.pending[this.pending.length - 1];
    if (tail !== undefined && tail.fromSample === fromSample) {
      this.spare.push(tail.values);
      tail.values = values;
    } else {
      this.pending.push({ fromSample, values });
    }
  }

  /** Forget the past samples and every tap set; the next sample is absolute index 0 again. */
  reset(): void {
    this.history.fill(0);
    if (this.active !== undefined) this.spare.push(this.active);
    this.active = undefined;
    for (const p of this.pending) this.spare.push(p.values);
    this.pending.length = 0;
    this.processed = 0;
  }

  /**
   * Filter the next `samples` input samples x [Nt, samples] into y [Nr, samples] (allocated in
   * x's precision when `out` is omitted; `out` must not be x).
   */
  process(x: ComplexArray, samples: number, out?: ComplexArray): ComplexArray {
    const fn = 'ChannelFilter.process()';
    checkSignal(fn, 'x', x, this.transmitters, samples);
    const Nr = this.receivers,
      Nt = this.transmitters,
      D = this.taps,
      N = samples;
    const y = out ?? allocateLike(x, 2 * Nr * N);
    checkLength(fn, 'out', y, 2 * Nr * N, `[${Nr}, ${N}] complex interleaved`);
    if (y === x) throw new RangeError(`${fn}: out must not be the input array x`);
    const hist = this.history;
    const H = D - 1;
    let n = 0;
    while (n < N) {
      const absolute = this.processed + n;
      this.promote(absolute);
      const h = this.active;
      if (h === undefined) throw new RangeError(`${fn}: no taps in force at sample ${absolute}; call setTaps() first`);
      // Run to the end of the block or to the next scheduled switch, whichever comes first.
      const next = this.pending[0];
      const end = next === undefined ? N : Math.min(N, next.fromSample - this.processed);
      for (; n < end; n++) {
        for (let r = 0; r < Nr; r++) {
          let accRe = 0,
            accIm = 0;
          for (let t = 0; t < Nt; t++) {
            for (let d = 0; d < D; d++) {
              const m = n - d;
              let xr: number, xi: number;
              if (m >= 0) {
                xr = x[2 * (t * N + m)]!;
                xi = x[2 * (t * N + m) + 1]!;
              } else {
                const i = 2 * (t * H + H + m);
                xr = hist[i]!;
                xi = hist[i + 1]!;
              }
              const k = 2 * ((d * Nr + r) * Nt + t);
              const hr = h[k]!,
                hi = h[k + 1]!;
              accRe += hr * xr - hi * xi;
              accIm += hr * xi + hi * xr;
            }
          }
          y[2 * (r * N + n)] = accRe;
          y[2 * (r * N + n) + 1] = accIm;
        }
      }
    }
    this.keepHistory(x, N);
    this.processed += N;
    return y;
  }

  private promote(absolute: number): void {
    while (this.pending.length > 0 && this.pending[0]!.fromSample <= absolute) {
      if (this.active !== undefined) this.spare.push(this.active);
      this.active = this.pending.shift()!.values;
    }
  }

  /** Keep the last taps - 1 input samples per stream (older history first when N is short). */
  private keepHistory(x: ComplexArray, N: number): void {
    const H = this.taps - 1;
    if (H === 0) return;
    const hist = this.history;
    for (let t = 0; t < this.transmitters; t++) {
      const base = 2 * t * H;
      const fromInput = Math.min(N, H);
      const kept = H - fromInput;
      if (kept > 0) hist.copyWithin(base, base + 2 * fromInput, base + 2 * H);
      for (let j = 0; j < fromInput; j++) {
        const src = 2 * (t * N + N - fromInput + j);
        hist[base + 2 * (kept + j)] = x[src]!;
        hist[base + 2 * (kept + j) + 1] = x[src + 1]!;
      }
    }
  }
}

/**
 * Options of a ChannelStreamFilter.
 * @example const o: ChannelStreamFilterOptions = { firstSubframe: 10 }; // sample 0 is the start of subframe 10
 */
export interface ChannelStreamFilterOptions {
  /** Subframe at which sample 0 of the signal starts; default 0. */
  firstSubframe?: number;
}

/**
 * Samples through a time-varying tap-delay channel in ONE call per block: the filter pulls the
 * generator's tap sets itself and switches them at the first sample of each step (a subframe,
 * or an OFDM symbol with a symbol axis). The channel is constant within a step: step j (counted
 * from `firstSubframe`) holds from sample round((t_j - t_0) fs) to the sample before step j + 1,
 * t_j the step's time on the generator's clock (for NR symbols the start of the cyclic prefix)
 * and fs the generator's sample rate. State (past samples, the step in force) is carried across
 * calls, so a signal cut into blocks of any sizes gives the same output bits as one call.
 *
 * Layouts as ChannelFilter: x [Nt, N] in, y [Nr, N] out, complex interleaved.
 *
 * @example
 * const end = (position: Vec3) => ({ position, velocity: [0, 0, 0] as Vec3, array: AntennaArray.ula(1, 0) });
 * const gen = new ChannelGenerator({ carrierHz: 28e9, subframeS: 1e-6, subframes: 3, seed: 1, fading: { model: 'static' }, transmitter: end([0, 0, 0]),
 *   receiver: end([10, 0, 0]), paths: [{ id: 'los', delayS: 0, power: 1, phaseRad: 0, departure: [1, 0, 0], arrival: [-1, 0, 0] }], grid: { domain: 'taps', sampleRateHz: 4e6, count: 1 } });
 * const channel = new ChannelStreamFilter(gen);           // 4 samples per subframe
 * channel.process(new Float64Array(2 * 12).fill(1), 12).length // 24: y [1, 12], the taps switched at samples 4 and 8
 */
export class ChannelStreamFilter {
  /** The filter that does the convolution (its tap sets are queued by `process`). */
  readonly filter: ChannelFilter;
  /** Sample rate of the signal, Hz (the generator's tap grid). */
  readonly sampleRateHz: number;
  private readonly generator: ChannelGenerator;
  private readonly firstStep: number;
  private readonly lastStep: number; // exclusive
  private readonly t0: number;
  private readonly buffer: TensorArray;
  private bufferedSubframe = -1;
  private nextStep: number; // first step not yet queued

  constructor(generator: ChannelGenerator, options: ChannelStreamFilterOptions = {}) {
    const fn = 'ChannelStreamFilter()';
    this.filter = ChannelFilter.forGenerator(generator);
    this.generator = generator;
    const grid = generator.spec.grid as { sampleRateHz: number };
    this.sampleRateHz = grid.sampleRateHz;
    const first = options.firstSubframe ?? 0;
    checkInteger(fn, 'firstSubframe', first, 0);
    if (first >= generator.spec.subframes)
      throw new RangeError(`${fn}: firstSubframe must be < ${generator.spec.subframes} (the generator's subframes), got ${first}`);
    const per = generator.stepsPerSubframe;
    this.firstStep = first * per;
    this.lastStep = generator.spec.subframes * per;
    this.nextStep = this.firstStep;
    this.t0 = generator.clock.timeS(this.firstStep);
    this.buffer = generator.allocate(1);
  }

  /** First sample (relative to sample 0 of the signal) at which step `step` (absolute) is in force. */
  startSample(step: number): number {
    return Math.round((this.generator.clock.timeS(step) - this.t0) * this.sampleRateHz);
  }

  /**
   * Pass the next `samples` samples x [Nt, samples] through the channel into y [Nr, samples]
   * (allocated in x's precision when `out` is omitted). Throws a RangeError when the block runs
   * past the generator's last subframe.
   */
  process(x: ComplexArray, samples: number, out?: ComplexArray): ComplexArray {
    const fn = 'ChannelStreamFilter.process()';
    checkInteger(fn, 'samples', samples, 1);
    const end = this.filter.samplesProcessed + samples;
    const per = this.generator.stepsPerSubframe;
    const stepValues = 2 * this.generator.valuesPerStep;
    // Queue every step that starts before the end of this block.
    while (this.nextStep < this.lastStep && this.startSample(this.nextStep) < end) {
      const subframe = Math.floor(this.nextStep / per);
      if (subframe !== this.bufferedSubframe) {
        this.generator.fill(this.buffer, subframe, 1);
        this.bufferedSubframe = subframe;
      }
      this.filter.setTaps(this.buffer, Math.max(this.startSample(this.nextStep), this.filter.samplesProcessed), (this.nextStep % per) * stepValues);
      this.nextStep++;
    }
    if (this.nextStep === this.lastStep) {
      // Past the last step's nominal length the channel is not defined.
      const lastEnd = Math.round((this.generator.spec.subframes * this.generator.spec.subframeS - this.t0) * this.sampleRateHz);
      if (end > lastEnd) {
        throw new RangeError(
          `${fn}: the block ends at sample ${end}, past the generator's last subframe (${this.generator.spec.subframes - 1}), which ends at sample ${lastEnd}; generate more subframes`,
        );
      }
    }
    return this.filter.process(x, samples, out);
  }
}
