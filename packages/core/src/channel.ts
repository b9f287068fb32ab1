/**
 * The multipath channel of design.md, assembled per subframe.
 *
 * Tensor layout (row-major, complex interleaved re/im, numpy's complex64/complex128 bytes):
 *   frequency domain [S, K, Nr, Nt]: H_s[k] = sum_l rho_(s,l) exp(-j 2 pi f_k tau_l) r_rx(u_arr,l) r_tx(u_dep,l)^T
 *   tap-delay        [S, count, Nr, Nt]: h_s[n] = sum_l rho_(s,l) p(n T - tau_l) r_rx r_tx^T
 * The transpose is plain (no conjugate). One subframe occupies 2 * valuesPerSubframe numbers.
 */
import { AntennaArray, wavenumber, type Vec3 } from '@pathweave/geometry';
import { pathCorrelation, type PathCorrelation } from './doppler.js';
import { GaussMarkovGains, StaticGains, type GainPath, type GainProcess } from './gains.js';
import { subcarrierOffsetsHz, tapDelaysS } from './grid.js';
import { pulseFunction, type PulseShape } from './pulse.js';
import { accumulatePathsPlain } from './kernels/accumulate.js';

/** A terminal: its array, where it is and how it moves. */
export interface Terminal {
  array: AntennaArray;
  /** Reference point of the array, metres, global frame. */
  position: Vec3;
  /** Velocity, m/s, global frame. */
  velocity: Vec3;
}

/** One propagation path as the assembler uses it. */
export interface ChannelPath {
  /** Stable identity, keys the random streams (for traced paths: the interaction list). */
  id: string;
  /** Propagation delay tau_l, seconds. */
  delayS: number;
  /** Mean power E|rho|^2, linear. */
  power: number;
  /** arg(rho) at t = 0, radians (static model). */
  phaseRad: number;
  /** Global unit vector from the transmitter towards the first interaction. */
  departure: Vec3;
  /** Global unit vector from the receiver towards the last interaction. */
  arrival: Vec3;
  /** Signed geometric Doppler shift, Hz. */
  dopplerHz?: number | undefined;
  /** Statistical Doppler spread for this path, Hz (overrides the speeds). */
  maxDopplerHz?: number | undefined;
}

/** The output grid: frequency domain or tap-delay. */
export type OutputGrid =
  | { domain: 'frequency'; subcarriers: number; spacingHz: number; beamSquint?: boolean }
  | { domain: 'taps'; sampleRateHz: number; count: number; pulse?: PulseShape; rollOff?: number };

/** Gain models handled by the assembler. */
export type FadingSpec = { model: 'static' } | { model: 'gauss-markov'; speedMps?: number | undefined };

/** Complex sample type of the output. */
export type Precision = 'complex64' | 'complex128';

/** Everything the generator needs, in SI units. */
export interface ChannelSpec {
  carrierHz: number;
  subframeS: number;
  subframes: number;
  transmitter: Terminal;
  receiver: Terminal;
  paths: ChannelPath[];
  fading: FadingSpec;
  grid: OutputGrid;
  /** Subtracted from every delay before assembly (alignFirstPath), seconds. */
  delayShiftS?: number;
  seed: number;
  precision?: Precision;
}

/** Guard samples placed before the first arrival when delays are aligned. */
export const ALIGN_GUARD_SAMPLES = 4;

/**
 * The shift that puts the earliest path ALIGN_GUARD_SAMPLES samples after zero.
 * @example alignmentShiftS([1e-6, 2e-6], 1e9) // 1e-6 - 4e-9
 */
export function alignmentShiftS(delaysS: readonly number[], sampleRateHz: number): number {
  if (delaysS.length === 0) return 0;
  return Math.min(...delaysS) - ALIGN_GUARD_SAMPLES / sampleRateHz;
}

/** Output tensor type for a precision. */
export type TensorArray = Float32Array | Float64Array;

/**
 * Builds per-subframe channel tensors. The constructor validates the spec and precomputes the
 * per-path element products r_rx r_tx^T and the delay kernel (per subcarrier or per tap); each
 * subframe then costs one complex multiply-add per output value and path.
 */
export class ChannelGenerator {
  /** Tensor shape [S, K or count, Nr, Nt]. */
  readonly shape: [number, number, number, number];
  /** Complex values per subframe: K Nr Nt (or count Nr Nt). */
  readonly valuesPerSubframe: number;
  /** Bytes per complex value (8 for complex64, 16 for complex128). */
  readonly bytesPerValue: number;
  /** Per-path correlation details (Gauss-Markov) in path order. */
  readonly correlations: PathCorrelation[];
  /** Human-readable warnings (under-sampled Doppler, ...). */
  readonly warnings: string[] = [];
  readonly precision: Precision;

  private readonly gainProcess: GainProcess;
  private readonly bins: number;
  private readonly elementPairs: number;
  private readonly products: Float64Array | undefined; // [L, Nr Nt] complex, no squint
  private readonly kernel: Float64Array; // [bins, L] complex delay kernel
  private readonly squint: { rx: Float64Array; tx: Float64Array } | undefined; // [bins, L, N] complex
  private readonly gainScratch: Float64Array;
  private readonly accumulator: Float64Array;
  private readonly weights: Float64Array; // [bins, L] complex, per subframe

  constructor(readonly spec: ChannelSpec) {
    const { transmitter: tx, receiver: rx, paths, grid } = spec;
    checkPositive('carrierHz', spec.carrierHz);
    checkPositive('subframeS', spec.subframeS);
    checkCount('subframes', spec.subframes, 1);
    this.precision = spec.precision ?? 'complex64';
    this.bytesPerValue = this.precision === 'complex64' ? 8 : 16;
    const L = paths.length;
    const Nr = rx.array.size;
    const Nt = tx.array.size;
    this.elementPairs = Nr * Nt;
    const shift = spec.delayShiftS ?? 0;
    const delays = paths.map((p) => p.delayS - shift);

    if (grid.domain === 'frequency') {
      checkCount('grid.subcarriers', grid.subcarriers, 1);
      checkPositive('grid.spacingHz', grid.spacingHz);
      this.bins = grid.subcarriers;
      const f = subcarrierOffsetsHz(grid.subcarriers, grid.spacingHz);
      this.kernel = new Float64Array(2 * this.bins * L);
      for (let k = 0; k < this.bins; k++) {
        for (let l = 0; l < L; l++) {
          const phase = -2 * Math.PI * f[k]! * delays[l]!;
          this.kernel[2 * (k * L + l)] = Math.cos(phase);
          this.kernel[2 * (k * L + l) + 1] = Math.sin(phase);
        }
      }
      if (grid.beamSquint === true) {
        this.squint = { rx: new Float64Array(2 * this.bins * L * Nr), tx: new Float64Array(2 * this.bins * L * Nt) };
        for (let k = 0; k < this.bins; k++) {
          const k0 = wavenumber(spec.carrierHz + f[k]!);
          for (let l = 0; l < L; l++) {
            rx.array.response(this.squint.rx.subarray(2 * (k * L + l) * Nr, 2 * (k * L + l + 1) * Nr), paths[l]!.arrival, k0);
            tx.array.response(this.squint.tx.subarray(2 * (k * L + l) * Nt, 2 * (k * L + l + 1) * Nt), paths[l]!.departure, k0);
          }
        }
      }
    } else {
      checkCount('grid.count', grid.count, 1);
      checkPositive('grid.sampleRateHz', grid.sampleRateHz);
      this.bins = grid.count;
      const p = pulseFunction(grid.pulse ?? 'sinc', grid.rollOff ?? 0);
      this.kernel = new Float64Array(2 * this.bins * L);
      for (let n = 0; n < this.bins; n++) {
        for (let l = 0; l < L; l++) this.kernel[2 * (n * L + l)] = p(n - delays[l]! * grid.sampleRateHz);
      }
    }

    if (this.squint === undefined) {
      const k0 = wavenumber(spec.carrierHz);
      this.products = new Float64Array(2 * L * this.elementPairs);
      const r = new Float64Array(2 * Nr);
      const t = new Float64Array(2 * Nt);
      for (let l = 0; l < L; l++) {
        rx.array.response(r, paths[l]!.arrival, k0);
        tx.array.response(t, paths[l]!.departure, k0);
        outerProduct(this.products, 2 * l * this.elementPairs, r, t, Nr, Nt);
      }
    }

    this.shape = [spec.subframes, this.bins, Nr, Nt];
    this.valuesPerSubframe = this.bins * this.elementPairs;

    const speed = (v: Vec3): number => Math.hypot(v[0], v[1], v[2]);
    this.correlations = paths.map((p) =>
      pathCorrelation({
        carrierHz: spec.carrierHz,
        stepS: spec.subframeS,
        pathMaxDopplerHz: p.maxDopplerHz,
        fadingSpeedMps: spec.fading.model === 'gauss-markov' ? spec.fading.speedMps : undefined,
        transmitterSpeedMps: speed(tx.velocity),
        receiverSpeedMps: speed(rx.velocity),
      }),
    );
    const gainPaths: GainPath[] = paths.map((p, l) => ({ id: p.id, power: p.power, phaseRad: p.phaseRad, alpha: this.correlations[l]!.alpha }));
    if (spec.fading.model === 'gauss-markov') {
      this.gainProcess = new GaussMarkovGains(gainPaths, spec.seed);
      this.checkSampling();
    } else {
      this.gainProcess = new StaticGains(gainPaths);
    }
    this.gainScratch = new Float64Array(2 * L);
    this.accumulator = new Float64Array(2 * this.elementPairs);
    this.weights = new Float64Array(2 * this.bins * L);
  }

  /** Number of paths L. */
  get pathCount(): number {
    return this.spec.paths.length;
  }

  /** Bytes of the whole tensor. */
  get totalBytes(): number {
    return this.shape[0] * this.valuesPerSubframe * this.bytesPerValue;
  }

  /** A zeroed output array for `count` subframes in this generator's precision. */
  allocate(count: number): TensorArray {
    const n = 2 * count * this.valuesPerSubframe;
    return this.precision === 'complex64' ? new Float32Array(n) : new Float64Array(n);
  }

  /** Gains of subframes [first, first + count), [count, L] complex interleaved. */
  gains(first: number, count: number, out = new Float64Array(2 * count * this.pathCount)): Float64Array {
    checkRange(first, count, this.spec.subframes);
    this.gainProcess.fill(out, first, count);
    return out;
  }

  /**
   * Write the tensors of subframes [first, first + count) into `out`
   * (2 * count * valuesPerSubframe numbers, from index 0). The result is the same bits
   * whichever range a call covers.
   */
  fill(out: TensorArray, first: number, count: number): TensorArray {
    checkRange(first, count, this.spec.subframes);
    if (out.length < 2 * count * this.valuesPerSubframe) {
      throw new RangeError(`ChannelGenerator.fill(): out needs ${2 * count * this.valuesPerSubframe} values, got ${out.length}`);
    }
    const L = this.pathCount;
    const gains = this.gainScratch;
    for (let s = 0; s < count; s++) {
      this.gainProcess.fill(gains, first + s, 1);
      this.assembleSubframe(out, 2 * s * this.valuesPerSubframe, gains, L);
    }
    return out;
  }

  private assembleSubframe(out: TensorArray, offset: number, gains: Float64Array, L: number): void {
    const kernel = this.kernel;
    const weights = this.weights;
    for (let k = 0; k < this.bins; k++) {
      for (let l = 0; l < L; l++) {
        const gr = gains[2 * l]!, gi = gains[2 * l + 1]!;
        const cr = kernel[2 * (k * L + l)]!, ci = kernel[2 * (k * L + l) + 1]!;
        weights[2 * (k * L + l)] = gr * cr - gi * ci;
        weights[2 * (k * L + l) + 1] = gr * ci + gi * cr;
      }
    }
    if (this.products !== undefined) {
      accumulatePathsPlain(out, offset, weights, this.products, this.bins, L, this.elementPairs, this.accumulator);
    } else {
      this.assembleSquinted(out, offset, L);
    }
  }

  /** Beam squint: the responses differ per subcarrier, so the products are formed on the fly. */
  private assembleSquinted(out: TensorArray, offset: number, L: number): void {
    const M = this.elementPairs;
    const acc = this.accumulator;
    const weights = this.weights;
    const squint = this.squint!;
    const Nr = this.shape[2];
    const Nt = this.shape[3];
    for (let k = 0; k < this.bins; k++) {
      acc.fill(0);
      for (let l = 0; l < L; l++) {
        const wr = weights[2 * (k * L + l)]!, wi = weights[2 * (k * L + l) + 1]!;
        const rb = 2 * (k * L + l) * Nr;
        const tb = 2 * (k * L + l) * Nt;
        for (let i = 0; i < Nr; i++) {
          const rr = squint.rx[rb + 2 * i]!, ri = squint.rx[rb + 2 * i + 1]!;
          const xr = wr * rr - wi * ri, xi = wr * ri + wi * rr;
          for (let j = 0; j < Nt; j++) {
            const tr = squint.tx[tb + 2 * j]!, ti = squint.tx[tb + 2 * j + 1]!;
            const m = i * Nt + j;
            acc[2 * m] = acc[2 * m]! + xr * tr - xi * ti;
            acc[2 * m + 1] = acc[2 * m + 1]! + xr * ti + xi * tr;
          }
        }
      }
      out.set(acc, offset + 2 * k * M);
    }
  }

  private checkSampling(): void {
    const T = this.spec.subframeS;
    let worst = 0;
    for (const c of this.correlations) for (const f of c.dopplersHz) worst = Math.max(worst, f);
    if (worst * T > 0.5) {
      this.warnings.push(
        `timing.subframeS = ${T} s under-samples a Doppler spread of ${worst.toFixed(1)} Hz ` +
          `(f_D T_s = ${(worst * T).toFixed(3)} > 0.5, so the Gauss-Markov alpha can turn negative); ` +
          `use a step of at most ${(0.5 / worst).toExponential(3)} s (a shorter timing.subframeS).`,
      );
    }
  }
}

function outerProduct(out: Float64Array, offset: number, r: Float64Array, t: Float64Array, Nr: number, Nt: number): void {
  for (let i = 0; i < Nr; i++) {
    const rr = r[2 * i]!, ri = r[2 * i + 1]!;
    for (let j = 0; j < Nt; j++) {
      const tr = t[2 * j]!, ti = t[2 * j + 1]!;
      const m = offset + 2 * (i * Nt + j);
      out[m] = rr * tr - ri * ti;
      out[m + 1] = rr * ti + ri * tr;
    }
  }
}

function checkPositive(name: string, v: number): void {
  if (!(v > 0) || !Number.isFinite(v)) throw new RangeError(`ChannelGenerator(): ${name} must be a finite number > 0, got ${v}`);
}
function checkCount(name: string, v: number, min: number): void {
  if (!Number.isInteger(v) || v < min) throw new RangeError(`ChannelGenerator(): ${name} must be an integer >= ${min}, got ${v}`);
}
function checkRange(first: number, count: number, total: number): void {
  if (!Number.isInteger(first) || !Number.isInteger(count) || first < 0 || count < 0 || first + count > total) {
    throw new RangeError(`ChannelGenerator: subframes [${first}, ${first + count}) lie outside [0, ${total})`);
  }
}

