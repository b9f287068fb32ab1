/**
 * The multipath channel of docs/conventions.md, assembled per subframe (and per OFDM symbol).
 *
 * Tensor layout (row-major, complex interleaved re/im, numpy's complex64/complex128 bytes):
 *   frequency domain [S, K, Nr, Nt]:     H_s[k] = sum_l rho_(s,l) exp(-j 2 pi f_k tau_l) r_rx(u_arr,l) r_tx(u_dep,l)^T
 *   tap-delay        [S, count, Nr, Nt]: h_s[n] = sum_l rho_(s,l) p(n T - tau_l) r_rx r_tx^T
 *   with symbols     [S, symbols, K or count, Nr, Nt]
 * The transpose is plain (no conjugate). rho_(s,l) = A_l(t) g_l(t): A_l is the path's amplitude
 * from the timeline (explicit powerDb/phaseDeg, or traced spreading, reflections, carrier phase
 * and visibility fade), g_l a unit-power gain process keyed by the path's id. Deterministic
 * models (static, geometric) keep A's phase; stochastic ones (gauss-markov, ar,
 * sum-of-sinusoids) use |A| and draw the phase.
 *
 * Polarised ports (terminals with `ports`, or a cross-polar ratio `xprDb`): Nr and Nt count
 * ports, port index = element * P + p. Path l then contributes rho_l r_rx,m r_tx,n c_l(a, b) to
 * entry (m P_r + a, n P_t + b), c_l(a, b) = f_rx(a)^T T_l f_tx(b) (polarization-ports.ts), T_l the
 * path's 2x2 transfer: the timeline's (traced), the identity (explicit), or a cross-polar
 * transfer with random phases keyed by the path id for stochastic gains and diffuse sub-paths
 * when `xprDb` is given. Without ports and xprDb, H is computed exactly as before.
 */
import {
  AntennaArray,
  elementPairProducts,
  linkFraunhoferDistanceM,
  polarizationVectorLocal,
  usesSphericalWavefront,
  waveResponse,
  wavenumber,
  type Polarization,
  type Vec3,
  type Wavefront,
} from '@pathweave/geometry';
import { pathCorrelation, type PathCorrelation } from './doppler.js';
import {
  createGainProcess,
  gainBandwidthHz,
  underSamplingWarning,
  uniformClock,
  type FadingPath,
  type FadingSpec,
  type GainProcessPath,
  type StepClock,
} from './fading/index.js';
import type { GainProcess } from './gains.js';
import { subcarrierOffsetsHz } from './grid.js';
import { accumulatePaths } from './kernels/index.js';
import type { Motion } from './motion.js';
import { identityTransfers, portCoupling, portFieldComponents, xprTransfer } from './polarization-ports.js';
import { pulseFunction, type PulseShape } from './pulse.js';
import { RandomStream } from './random.js';
import { arrayAt, ExplicitTimeline, PathSetFrame, type ExplicitPathSpec, type PathTimeline } from './timeline.js';

/**
 * A terminal: its array, where it is and how it moves.
 * @example const bs: Terminal = { array: AntennaArray.ula(8, 0.0054), position: [0, 0, 10], velocity: [0, 0, 0] };
 */
export interface Terminal {
  array: AntennaArray;
  /** Reference point of the array at t = 0, metres, global frame. */
  position: Vec3;
  /** Velocity at t = 0, m/s, global frame. */
  velocity: Vec3;
  /** Motion over time (positions for traced paths, turning arrays, speeds for Doppler spreads). */
  motion?: Motion | undefined;
  /** Wavefront model of this array (default plane). */
  wavefront?: Wavefront | undefined;
  /**
   * Local polarisation vectors of each element's ports (two for a dual-polarised array, from
   * geometry's dualPolarizedPortVectors); absent: one port of `polarization`.
   */
  ports?: readonly Vec3[] | undefined;
  /** Polarisation of a single-port element when ports are in use (default vertical). */
  polarization?: Polarization | undefined;
}

/**
 * The output grid: frequency domain or tap-delay.
 * @example const grids: OutputGrid[] = [{ domain: 'frequency', subcarriers: 64, spacingHz: 120e3 }, { domain: 'taps', sampleRateHz: 1e9, count: 32 }];
 */
export type OutputGrid =
  | { domain: 'frequency'; subcarriers: number; spacingHz: number; beamSquint?: boolean }
  | { domain: 'taps'; sampleRateHz: number; count: number; pulse?: PulseShape; rollOff?: number };

/**
 * Complex sample type of the output.
 * @example const precision: Precision = 'complex128'; // 16 bytes per value
 */
export type Precision = 'complex64' | 'complex128';

/**
 * Time resolution finer than a subframe.
 * @example const perSymbol: SymbolTiming = { perSubframe: 14 }; // 14 uniform steps per subframe
 */
export interface SymbolTiming {
  /** Symbols per subframe (the symbol axis length). */
  perSubframe: number;
  /** When step s = subframe * perSubframe + symbol happens; default uniform over the subframe. */
  clock?: StepClock | undefined;
}

/**
 * Everything the generator needs, in SI units.
 * @example
 * const still = { array: AntennaArray.ula(1, 0), velocity: [0, 0, 0] as Vec3 };
 * const spec: ChannelSpec = {
 *   carrierHz: 28e9, subframeS: 1e-3, subframes: 2, seed: 1, fading: { model: 'static' },
 *   transmitter: { ...still, position: [0, 0, 0] }, receiver: { ...still, position: [10, 0, 0] },
 *   paths: [{ id: 'los', delayS: 0, power: 1, phaseRad: 0, departure: [1, 0, 0], arrival: [-1, 0, 0] }],
 *   grid: { domain: 'frequency', subcarriers: 4, spacingHz: 120e3 },
 * };
 * new ChannelGenerator(spec).shape // [2, 4, 1, 1]: [S, K, Nr, Nt]
 */
export interface ChannelSpec {
  carrierHz: number;
  subframeS: number;
  subframes: number;
  transmitter: Terminal;
  receiver: Terminal;
  /** Explicit paths (used when no timeline is given). */
  paths?: ExplicitPathSpec[];
  /** Where the paths come from over time (explicit or traced). */
  timeline?: PathTimeline;
  fading: FadingSpec;
  grid: OutputGrid;
  /** Subtracted from every delay before assembly (alignFirstPath), seconds. */
  delayShiftS?: number;
  seed: number;
  precision?: Precision;
  /** Adds a symbol axis after S. */
  symbols?: SymbolTiming | undefined;
  /** Prefix of every path's random-stream key (a user's identity); default none. */
  streamKey?: string | undefined;
  /** Multiply every amplitude by this factor (fading.normalize); default 1. */
  amplitudeScale?: number;
  /**
   * Cross-polar ratio (dB) of stochastic paths and of diffuse sub-paths (timelines with a
   * `diffuse` flag); turns the polarised-port assembly on.
   */
  xprDb?: number | undefined;
}

/**
 * Guard samples placed before the first arrival when delays are aligned.
 * @example ALIGN_GUARD_SAMPLES / 1e9 // 4e-9: 4 ns of guard at 1 GS/s
 */
export const ALIGN_GUARD_SAMPLES = 4;

/**
 * The shift that puts the earliest path ALIGN_GUARD_SAMPLES samples after zero.
 * @example alignmentShiftS([1e-6, 2e-6], 1e9) // 1e-6 - 4e-9
 */
export function alignmentShiftS(delaysS: readonly number[], sampleRateHz: number): number {
  if (delaysS.length === 0) return 0;
  return Math.min(...delaysS) - ALIGN_GUARD_SAMPLES / sampleRateHz;
}

/**
 * Output tensor type for a precision.
 * @example const block: TensorArray = new Float32Array(2 * 4); // four complex64 values
 */
export type TensorArray = Float32Array | Float64Array;

/**
 * Builds per-subframe channel tensors. The constructor validates the spec and precomputes what
 * does not change (element products r_rx r_tx^T, the delay kernel) when the geometry is
 * constant; each step then costs one complex multiply-add per output value and path.
 * @example
 * const still = { array: AntennaArray.ula(1, 0), velocity: [0, 0, 0] as Vec3 };
 * const generator = new ChannelGenerator({
 *   carrierHz: 28e9, subframeS: 1e-3, subframes: 2, seed: 1, fading: { model: 'static' },
 *   transmitter: { ...still, position: [0, 0, 0] }, receiver: { ...still, position: [10, 0, 0] },
 *   paths: [{ id: 'los', delayS: 0, power: 0.25, phaseRad: Math.PI / 2, departure: [1, 0, 0], arrival: [-1, 0, 0] }],
 *   grid: { domain: 'frequency', subcarriers: 2, spacingHz: 120e3 },
 * });
 * generator.shape // [2, 2, 1, 1]
 * generator.fill(generator.allocate(1), 0, 1) // Float32Array [3.1e-17, 0.5, 3.1e-17, 0.5]: rho = 0.5 j on both subcarriers
 */
export class ChannelGenerator {
  /** Tensor shape [S, K or count, Nr, Nt], or [S, symbols, K or count, Nr, Nt]. */
  readonly shape: number[];
  /** Complex values per subframe (symbols included). */
  readonly valuesPerSubframe: number;
  /** Complex values per step (one symbol or one subframe). */
  readonly valuesPerStep: number;
  /** Steps per subframe (1 without a symbol axis). */
  readonly stepsPerSubframe: number;
  /** Bytes per complex value (8 for complex64, 16 for complex128). */
  readonly bytesPerValue: number;
  /** Per-path correlation details (Doppler spreads, Gauss-Markov alpha) in path order. */
  readonly correlations: PathCorrelation[];
  /** Human-readable warnings (under-sampled Doppler, ...). */
  readonly warnings: string[] = [];
  readonly precision: Precision;
  readonly timeline: PathTimeline;
  readonly clock: StepClock;

  private readonly gainProcess: GainProcess;
  private readonly deterministic: boolean;
  private readonly bins: number;
  private readonly elementPairs: number;
  private readonly pathCountValue: number;
  private readonly frequencies: Float64Array | undefined;
  private readonly pulse: ((x: number) => number) | undefined;
  private readonly products: Float64Array; // [L, Nr Nt] complex (no squint)
  private readonly kernel: Float64Array; // [bins, L] complex delay kernel
  private readonly squint: { rx: Float64Array; tx: Float64Array } | undefined; // [bins, L, N] complex
  private readonly frame: PathSetFrame;
  private readonly unitGains: Float64Array;
  private readonly rho: Float64Array;
  private readonly weights: Float64Array;
  private readonly accumulator: Float64Array;
  private readonly rxScratch: Float64Array;
  private readonly txScratch: Float64Array;
  private readonly varying: boolean;
  private readonly amplitudeScale: number;
  private preparedAt = -1;
  /** Changes whenever prepare() rewrites the products (the SIMD kernels reuse their float32 copy while it stays). */
  private productsStamp = 0;
  /** Polarised-port assembly (module comment), undefined otherwise. */
  private readonly ports:
    | {
        rx: readonly Vec3[];
        tx: readonly Vec3[];
        transfers: Float64Array;
        fixed: Uint8Array;
        rxFields: Float64Array;
        txFields: Float64Array;
        coupling: Float64Array;
        elements: Float64Array;
        scratch: Float64Array;
      }
    | undefined;

  constructor(readonly spec: ChannelSpec) {
    const { transmitter: tx, receiver: rx, grid } = spec;
    checkPositive('carrierHz', spec.carrierHz);
    checkPositive('subframeS', spec.subframeS);
    checkCount('subframes', spec.subframes, 1);
    this.precision = spec.precision ?? 'complex64';
    this.bytesPerValue = this.precision === 'complex64' ? 8 : 16;
    this.amplitudeScale = spec.amplitudeScale ?? 1;
    if (spec.timeline === undefined && spec.paths === undefined) throw new TypeError('ChannelGenerator(): give spec.paths or spec.timeline');
    this.timeline = spec.timeline ?? new ExplicitTimeline(spec.paths!);
    const L = this.timeline.ids.length;
    this.pathCountValue = L;
    if (spec.xprDb !== undefined && !Number.isFinite(spec.xprDb)) throw new RangeError(`ChannelGenerator(): xprDb must be a finite number, got ${spec.xprDb}`);
    const polarised = rx.ports !== undefined || tx.ports !== undefined || spec.xprDb !== undefined;
    const portsOf = (t: Terminal, name: string): readonly Vec3[] => {
      const p = t.ports ?? [polarizationVectorLocal(t.polarization ?? 'vertical')];
      if (p.length < 1 || p.length > 2) throw new RangeError(`ChannelGenerator(): ${name}.ports must hold 1 or 2 polarisation vectors, got ${p.length}`);
      return p;
    };
    const rxPorts = polarised ? portsOf(rx, 'receiver') : undefined;
    const txPorts = polarised ? portsOf(tx, 'transmitter') : undefined;
    const Nr = rx.array.size * (rxPorts?.length ?? 1);
    const Nt = tx.array.size * (txPorts?.length ?? 1);
    this.elementPairs = Nr * Nt;
    this.stepsPerSubframe = spec.symbols?.perSubframe ?? 1;
    checkCount('symbols.perSubframe', this.stepsPerSubframe, 1);
    this.clock = spec.symbols?.clock ?? uniformClock(spec.subframeS / this.stepsPerSubframe);
    const turns = tx.motion?.turns === true || rx.motion?.turns === true;
    this.varying = !this.timeline.constant || turns;

    if (grid.domain === 'frequency') {
      checkCount('grid.subcarriers', grid.subcarriers, 1);
      checkPositive('grid.spacingHz', grid.spacingHz);
      this.bins = grid.subcarriers;
      this.frequencies = subcarrierOffsetsHz(grid.subcarriers, grid.spacingHz);
      if (grid.beamSquint === true && polarised)
        throw new RangeError('ChannelGenerator(): beam squint with polarised ports (ports or xprDb) is not supported; turn one of them off');
      this.squint = grid.beamSquint === true ? { rx: new Float64Array(2 * this.bins * L * Nr), tx: new Float64Array(2 * this.bins * L * Nt) } : undefined;
    } else {
      checkCount('grid.count', grid.count, 1);
      checkPositive('grid.sampleRateHz', grid.sampleRateHz);
      this.bins = grid.count;
      this.pulse = pulseFunction(grid.pulse ?? 'sinc', grid.rollOff ?? 0);
      this.squint = undefined;
    }
    this.kernel = new Float64Array(2 * this.bins * L);
    this.products = new Float64Array(this.squint === undefined ? 2 * L * this.elementPairs : 0);
    this.frame = new PathSetFrame(L);
    this.unitGains = new Float64Array(2 * L);
    this.rho = new Float64Array(2 * L);
    this.weights = new Float64Array(2 * this.bins * L);
    this.accumulator = new Float64Array(2 * this.elementPairs);
    this.rxScratch = new Float64Array(2 * Nr);
    this.txScratch = new Float64Array(2 * Nt);

    this.valuesPerStep = this.bins * this.elementPairs;
    this.valuesPerSubframe = this.stepsPerSubframe * this.valuesPerStep;
    this.shape = spec.symbols === undefined ? [spec.subframes, this.bins, Nr, Nt] : [spec.subframes, this.stepsPerSubframe, this.bins, Nr, Nt];

    // Doppler spreads and the gain processes (unit power, keyed by the path ids).
    const speed = (t: Terminal): number => t.motion?.maxSpeed() ?? Math.hypot(t.velocity[0], t.velocity[1], t.velocity[2]);
    // Paths given with their own Doppler (explicit paths) say so through the timeline's pathDoppler.
    const explicit = this.timeline.pathDoppler;
    const fadingSpeed = 'speedMps' in spec.fading ? spec.fading.speedMps : undefined;
    this.correlations = this.timeline.ids.map((_, l) =>
      pathCorrelation({
        carrierHz: spec.carrierHz,
        stepS: this.clock.stepS,
        pathMaxDopplerHz: explicit?.[l]!.maxDopplerHz,
        fadingSpeedMps: fadingSpeed,
        transmitterSpeedMps: speed(tx),
        receiverSpeedMps: speed(rx),
      }),
    );
    const key = (id: string): string => (spec.streamKey === undefined ? id : `${spec.streamKey}/${id}`);
    const unitPaths: GainProcessPath[] = this.timeline.ids.map((id, l) => ({
      id: key(id),
      power: 1,
      phaseRad: 0,
      alpha: this.correlations[l]!.alpha,
      dopplersHz: this.correlations[l]!.dopplersHz,
      // Traced geometry turns the carrier phase itself; explicit paths turn by their dopplerHz.
      dopplerHz: explicit !== undefined ? (explicit[l]!.dopplerHz ?? 0) : 0,
    }));
    const gains = createGainProcess(spec.fading, unitPaths, spec.seed, this.clock);
    this.gainProcess = gains.process;
    this.deterministic = gains.deterministic;
    if (gains.timeVarying) this.checkSampling(unitPaths);
    if (rxPorts !== undefined && txPorts !== undefined) {
      // Transfers: cross-polar ones are fixed for the run; the others follow the timeline.
      const transfers = identityTransfers(L);
      const fixed = new Uint8Array(L);
      const diffuse = this.timeline.diffuse;
      this.timeline.ids.forEach((id, l) => {
        if (spec.xprDb === undefined || (this.deterministic && diffuse?.[l] !== true)) return;
        xprTransfer(transfers, 8 * l, spec.xprDb, new RandomStream(spec.seed, `${key(id)}/xpr`));
        fixed[l] = 1;
      });
      this.ports = {
        rx: rxPorts,
        tx: txPorts,
        transfers,
        fixed,
        rxFields: new Float64Array(2 * rxPorts.length),
        txFields: new Float64Array(2 * txPorts.length),
        coupling: new Float64Array(2 * rxPorts.length * txPorts.length),
        elements: new Float64Array(2 * rx.array.size * tx.array.size),
        scratch: new Float64Array(8 * L),
      };
      this.refreshTransfers(0);
    } else this.ports = undefined;
    this.timeline.frameAt(0, this.frame);
    if (!this.varying) this.prepare(0);
  }

  /** Number of paths L. */
  get pathCount(): number {
    return this.pathCountValue;
  }

  /** Bytes of the whole tensor. */
  get totalBytes(): number {
    return this.spec.subframes * this.valuesPerSubframe * this.bytesPerValue;
  }

  /** A zeroed output array for `count` subframes in this generator's precision. */
  allocate(count: number): TensorArray {
    const n = 2 * count * this.valuesPerSubframe;
    return this.precision === 'complex64' ? new Float32Array(n) : new Float64Array(n);
  }

  /** The path frame (delays, directions, amplitudes, visibility) at step `step` (a view reused by the next call). */
  frameAtStep(step: number): PathSetFrame {
    this.timeline.frameAt(this.clock.timeS(step), this.frame);
    this.preparedAt = -1;
    return this.frame;
  }

  /** Gains rho of subframes [first, first + count): [count, L] (or [count, symbols, L]) complex interleaved. */
  gains(first: number, count: number, out = new Float64Array(2 * count * this.stepsPerSubframe * this.pathCount)): Float64Array {
    checkRange(first, count, this.spec.subframes);
    const L = this.pathCount;
    for (let n = 0; n < count * this.stepsPerSubframe; n++) {
      const step = first * this.stepsPerSubframe + n;
      this.stepGains(step);
      out.set(this.rho, 2 * n * L);
    }
    return out;
  }

  /**
   * Write the tensors of subframes [first, first + count) into `out`: subframe first + s starts
   * at `offset + s * stride` (defaults: 0 and 2 valuesPerSubframe, i.e. packed). The result is
   * the same bits whichever range a call covers. `gainsOut`, when given, receives the gains
   * ([count, symbols, L] complex) of the same steps.
   */
  fill(out: TensorArray, first: number, count: number, options: { offset?: number; stride?: number; gainsOut?: Float64Array } = {}): TensorArray {
    checkRange(first, count, this.spec.subframes);
    const offset = options.offset ?? 0;
    const stride = options.stride ?? 2 * this.valuesPerSubframe;
    if (out.length < offset + (count - 1) * stride + 2 * this.valuesPerSubframe) {
      throw new RangeError(`ChannelGenerator.fill(): out needs ${offset + (count - 1) * stride + 2 * this.valuesPerSubframe} values, got ${out.length}`);
    }
    const L = this.pathCount;
    for (let s = 0; s < count; s++) {
      for (let i = 0; i < this.stepsPerSubframe; i++) {
        const step = (first + s) * this.stepsPerSubframe + i;
        this.stepGains(step);
        if (this.varying) this.prepare(step);
        options.gainsOut?.set(this.rho, 2 * (s * this.stepsPerSubframe + i) * L);
        this.assembleStep(out, offset + s * stride + 2 * i * this.valuesPerStep);
      }
    }
    return out;
  }

  /** rho of every path at `step` into this.rho (and the frame at that time when it varies). */
  private stepGains(step: number): void {
    const L = this.pathCount;
    this.gainProcess.fill(this.unitGains, step, 1);
    if (this.varying) this.timeline.frameAt(this.clock.timeS(step), this.frame);
    const a = this.frame.amplitude;
    const g = this.unitGains;
    const scale = this.amplitudeScale;
    for (let l = 0; l < L; l++) {
      let ar = a[2 * l]! * scale,
        ai = a[2 * l + 1]! * scale;
      if (!this.deterministic) {
        ar = Math.hypot(ar, ai);
        ai = 0;
      }
      this.rho[2 * l] = ar * g[2 * l]! - ai * g[2 * l + 1]!;
      this.rho[2 * l + 1] = ar * g[2 * l + 1]! + ai * g[2 * l]!;
    }
  }

  /** Delay kernel and element products of the current frame. */
  private prepare(step: number): void {
    if (this.preparedAt === step && this.varying) return;
    this.preparedAt = step;
    this.productsStamp = nextProductsStamp++;
    const spec = this.spec;
    const frame = this.frame;
    const L = this.pathCount;
    const shift = spec.delayShiftS ?? 0;
    const t = this.clock.timeS(step);
    if (this.frequencies !== undefined) {
      const f = this.frequencies;
      for (let k = 0; k < this.bins; k++) {
        for (let l = 0; l < L; l++) {
          const phase = -2 * Math.PI * f[k]! * (frame.delayS[l]! - shift);
          this.kernel[2 * (k * L + l)] = Math.cos(phase);
          this.kernel[2 * (k * L + l) + 1] = Math.sin(phase);
        }
      }
    } else {
      const fs = (spec.grid as { sampleRateHz: number }).sampleRateHz;
      for (let n = 0; n < this.bins; n++) {
        for (let l = 0; l < L; l++) {
          this.kernel[2 * (n * L + l)] = this.pulse!(n - (frame.delayS[l]! - shift) * fs);
          this.kernel[2 * (n * L + l) + 1] = 0;
        }
      }
    }
    const rxArray = arrayAt(spec.receiver.array, spec.receiver.motion, t);
    const txArray = arrayAt(spec.transmitter.array, spec.transmitter.motion, t);
    const Nr = rxArray.size,
      Nt = txArray.size;
    const dep: Vec3 = [0, 0, 0],
      arr: Vec3 = [0, 0, 0];
    if (this.squint !== undefined) {
      for (let k = 0; k < this.bins; k++) {
        const k0 = wavenumber(spec.carrierHz + this.frequencies![k]!);
        for (let l = 0; l < L; l++) {
          readVec(frame.arrival, l, arr);
          readVec(frame.departure, l, dep);
          const choice = this.wavefrontChoice(l, rxArray, txArray);
          const length = frame.lengthM[l]!;
          waveResponse(
            this.squint.rx.subarray(2 * (k * L + l) * Nr, 2 * (k * L + l + 1) * Nr),
            rxArray,
            (choice & 1) !== 0,
            arr,
            rangeOr(frame.rangeM[2 * l + 1]!, length),
            k0,
          );
          waveResponse(
            this.squint.tx.subarray(2 * (k * L + l) * Nt, 2 * (k * L + l + 1) * Nt),
            txArray,
            (choice & 2) !== 0,
            dep,
            rangeOr(frame.rangeM[2 * l]!, length),
            k0,
          );
        }
      }
      return;
    }
    const k0 = wavenumber(spec.carrierHz);
    if (this.ports !== undefined) {
      this.preparePorts(rxArray, txArray, t, k0);
      return;
    }
    for (let l = 0; l < L; l++) {
      readVec(frame.arrival, l, arr);
      readVec(frame.departure, l, dep);
      this.elementProducts(this.products, 2 * l * this.elementPairs, l, rxArray, txArray, arr, dep, k0);
    }
  }

  /**
   * The wavefront choice of path l at both ends (docs/conventions.md, "Array response"): bit 1 the
   * receiver spherical, bit 2 the transmitter, bit 4 a specular path (an image map in the frame).
   * A specular path links the two apertures, so "auto" compares its length with the link's
   * Fraunhofer distance 2 (D_rx + D_tx)^2 / lambda; a path through a scatterer or an edge links
   * each array with a point, so each end compares its own range with 2 D^2 / lambda.
   */
  private wavefrontChoice(l: number, rxArray: AntennaArray, txArray: AntennaArray): number {
    const spec = this.spec;
    const rxW = spec.receiver.wavefront,
      txW = spec.transmitter.wavefront;
    const frame = this.frame;
    const specular = !Number.isNaN(frame.image[9 * l]!) && this.timeline.diffuse?.[l] !== true ? 4 : 0;
    if ((rxW === undefined || rxW === 'plane') && (txW === undefined || txW === 'plane')) return specular;
    const fc = spec.carrierHz;
    const auto = rxW === 'auto' || txW === 'auto';
    const Dr = auto ? rxArray.aperture() : 0,
      Dt = auto ? txArray.aperture() : 0;
    const length = frame.lengthM[l]!;
    const rxRange = rangeOr(frame.rangeM[2 * l + 1]!, length),
      txRange = rangeOr(frame.rangeM[2 * l]!, length);
    const rxSph = usesSphericalWavefront(rxW, rxRange, linkFraunhoferDistanceM(Dr, specular !== 0 ? Dt : 0, fc));
    const txSph = usesSphericalWavefront(txW, txRange, linkFraunhoferDistanceM(Dt, specular !== 0 ? Dr : 0, fc));
    return (rxSph ? 1 : 0) | (txSph ? 2 : 0) | specular;
  }

  /**
   * r_rx r_tx^T of path l into out[offset..] ([Nr, Nt] complex): plane or spherical responses at
   * each end, or every element pair's own distance (to the transmit element's image) for a
   * specular path with both ends spherical.
   */
  private elementProducts(out: Float64Array, offset: number, l: number, rxArray: AntennaArray, txArray: AntennaArray, arr: Vec3, dep: Vec3, k0: number): void {
    const frame = this.frame;
    const length = frame.lengthM[l]!;
    const choice = this.wavefrontChoice(l, rxArray, txArray);
    if ((choice & 7) === 7 && length > 0) {
      elementPairProducts(out, offset, rxArray, txArray, arr, dep, length, k0, frame.image, 9 * l);
      return;
    }
    waveResponse(this.rxScratch, rxArray, (choice & 1) !== 0, arr, rangeOr(frame.rangeM[2 * l + 1]!, length), k0);
    waveResponse(this.txScratch, txArray, (choice & 2) !== 0, dep, rangeOr(frame.rangeM[2 * l]!, length), k0);
    outerProduct(out, offset, this.rxScratch, this.txScratch, rxArray.size, txArray.size);
  }

  /** The timeline's transfers at time t for the paths whose transfer is not a fixed cross-polar one. */
  private refreshTransfers(timeS: number): void {
    const ports = this.ports!;
    if (this.timeline.polarimetricAt === undefined) return;
    const L = this.pathCount;
    const scratch = ports.scratch;
    this.timeline.polarimetricAt(timeS, scratch);
    for (let l = 0; l < L; l++) if (ports.fixed[l] === 0) ports.transfers.set(scratch.subarray(8 * l, 8 * l + 8), 8 * l);
  }

  /** Element products expanded to ports: P[l, (m Pr + a) Nt + n Pt + b] = e_l[m, n] c_l(a, b). */
  private preparePorts(rxArray: AntennaArray, txArray: AntennaArray, timeS: number, k0: number): void {
    const ports = this.ports!;
    const frame = this.frame;
    const L = this.pathCount;
    if (this.varying) this.refreshTransfers(timeS);
    const NrE = rxArray.size,
      NtE = txArray.size;
    const Pr = ports.rx.length,
      Pt = ports.tx.length;
    const Nt = NtE * Pt;
    const dep: Vec3 = [0, 0, 0],
      arr: Vec3 = [0, 0, 0];
    const e = ports.elements,
      c = ports.coupling;
    for (let l = 0; l < L; l++) {
      readVec(frame.arrival, l, arr);
      readVec(frame.departure, l, dep);
      this.elementProducts(e, 0, l, rxArray, txArray, arr, dep, k0);
      portFieldComponents(ports.rxFields, ports.rx, rxArray.rotation, arr);
      portFieldComponents(ports.txFields, ports.tx, txArray.rotation, dep);
      portCoupling(c, ports.rxFields, ports.transfers, l, ports.txFields, Pr, Pt);
      const base = 2 * l * this.elementPairs;
      for (let m = 0; m < NrE; m++) {
        for (let n = 0; n < NtE; n++) {
          const er = e[2 * (m * NtE + n)]!,
            ei = e[2 * (m * NtE + n) + 1]!;
          for (let a = 0; a < Pr; a++) {
            for (let b = 0; b < Pt; b++) {
              const cr = c[2 * (a * Pt + b)]!,
                ci = c[2 * (a * Pt + b) + 1]!;
              const i = base + 2 * ((m * Pr + a) * Nt + n * Pt + b);
              this.products[i] = er * cr - ei * ci;
              this.products[i + 1] = er * ci + ei * cr;
            }
          }
        }
      }
    }
  }

  private assembleStep(out: TensorArray, offset: number): void {
    const L = this.pathCount;
    const kernel = this.kernel;
    const weights = this.weights;
    const rho = this.rho;
    for (let k = 0; k < this.bins; k++) {
      for (let l = 0; l < L; l++) {
        const gr = rho[2 * l]!,
          gi = rho[2 * l + 1]!;
        const cr = kernel[2 * (k * L + l)]!,
          ci = kernel[2 * (k * L + l) + 1]!;
        weights[2 * (k * L + l)] = gr * cr - gi * ci;
        weights[2 * (k * L + l) + 1] = gr * ci + gi * cr;
      }
    }
    if (this.squint === undefined) accumulatePaths(out, offset, weights, this.products, this.bins, L, this.elementPairs, this.accumulator, this.productsStamp);
    else this.assembleSquinted(out, offset, L);
  }

  /** Beam squint: the responses differ per subcarrier, so the products are formed on the fly. */
  private assembleSquinted(out: TensorArray, offset: number, L: number): void {
    const M = this.elementPairs;
    const acc = this.accumulator;
    const weights = this.weights;
    const squint = this.squint!;
    const Nr = this.spec.receiver.array.size;
    const Nt = this.spec.transmitter.array.size;
    for (let k = 0; k < this.bins; k++) {
      acc.fill(0);
      for (let l = 0; l < L; l++) {
        const wr = weights[2 * (k * L + l)]!,
          wi = weights[2 * (k * L + l) + 1]!;
        const rb = 2 * (k * L + l) * Nr;
        const tb = 2 * (k * L + l) * Nt;
        for (let i = 0; i < Nr; i++) {
          const rr = squint.rx[rb + 2 * i]!,
            ri = squint.rx[rb + 2 * i + 1]!;
          const xr = wr * rr - wi * ri,
            xi = wr * ri + wi * rr;
          for (let j = 0; j < Nt; j++) {
            const tr = squint.tx[tb + 2 * j]!,
              ti = squint.tx[tb + 2 * j + 1]!;
            const m = i * Nt + j;
            acc[2 * m] = acc[2 * m]! + xr * tr - xi * ti;
            acc[2 * m + 1] = acc[2 * m + 1]! + xr * ti + xi * tr;
          }
        }
      }
      for (let m = 0; m < 2 * M; m++) out[offset + 2 * k * M + m] = acc[m]!;
    }
  }

  private checkSampling(paths: readonly FadingPath[]): void {
    const step = this.clock.stepS;
    let worst = 0;
    for (const p of paths) worst = Math.max(worst, gainBandwidthHz(p.dopplersHz, p.dopplerHz ?? 0));
    const what = this.spec.symbols === undefined ? 'timing.subframeS' : 'the symbol step';
    const message = underSamplingWarning(worst, step, what);
    if (message !== undefined) this.warnings.push(message);
  }
}

/** Stamps unique across generators, so two generators' products never share one. */
let nextProductsStamp = 1;

function readVec(src: Float64Array, l: number, out: Vec3): Vec3 {
  out[0] = src[3 * l]!;
  out[1] = src[3 * l + 1]!;
  out[2] = src[3 * l + 2]!;
  return out;
}

/** A wavefront range from the frame, or the unfolded length where the timeline gave none (NaN). */
function rangeOr(rangeM: number, lengthM: number): number {
  return Number.isNaN(rangeM) ? lengthM : rangeM;
}

function outerProduct(out: Float64Array, offset: number, r: Float64Array, t: Float64Array, Nr: number, Nt: number): void {
  for (let i = 0; i < Nr; i++) {
    const rr = r[2 * i]!,
      ri = r[2 * i + 1]!;
    for (let j = 0; j < Nt; j++) {
      const tr = t[2 * j]!,
        ti = t[2 * j + 1]!;
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
