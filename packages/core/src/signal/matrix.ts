/**
 * Per-subcarrier matrices of a subframe, steering vectors and complex singular values: the
 * pieces a researcher reaches for after pulling a subframe from a generator.
 *
 * Layouts (row-major, complex interleaved re/im):
 *   one subframe of a generator  [(symbols,) K or count, Nr, Nt]
 *   one matrix H[k]              [Nr, Nt], entry (r, t) at 2 (r Nt + t)
 *   a steering vector            [N], element n at 2 n
 *
 * Steering vectors follow docs/conventions.md: the array response r_n(u) = g(u) exp(+j k0 dot(u, p_n));
 * the receive steering vector is a_r = r_rx(u), the transmit one a_t = conj(r_tx(u)), so that
 * H = sum rho a_r a_t^H, the matched combiner is a_r / ||a_r|| and the matched precoder a_t / ||a_t||.
 *
 * Singular values: ml-matrix's SVD works on real matrices, so H = A + jB is embedded as the
 * real 2Nr x 2Nt matrix [[A, -B], [B, A]], whose singular values are those of H, each exactly
 * twice (the embedding is unitarily similar to diag(H, conj(H))); every other one is kept.
 */
import { loadMlMatrix } from '../lazy-modules.js';
import { SPEED_OF_LIGHT, unitFromDeg, type AntennaArray, type Vec3 } from '@pathweave/geometry';
import type { ChannelGenerator, TensorArray } from '../channel.js';
import { checkComplexArray, checkInteger, checkPositive, type ComplexArray } from './checks.js';

/**
 * Which end a steering vector is for.
 * @example const side: SteeringSide = 'transmit'; // a_t = conj(r_tx(u)), the weights that point a beam at u
 */
export type SteeringSide = 'transmit' | 'receive';

/**
 * Options of `steeringVector`.
 * @example const o: SteeringOptions = { side: 'receive', normalize: false }; // r_rx(u) itself, unit-modulus entries
 */
export interface SteeringOptions {
  /** `receive` (default): a_r = r(u); `transmit`: a_t = conj(r(u)). */
  side?: SteeringSide;
  /** Scale to unit norm (the matched combiner or precoder); default true. */
  normalize?: boolean;
  /** Where to write (2 N numbers); allocated when omitted. */
  out?: Float64Array;
}

/**
 * The steering vector of `array` towards a direction in the global frame, at `carrierHz`
 * (docs/conventions.md: azimuth from +x towards +y, elevation from the horizontal plane, degrees;
 * or a unit vector). Unit norm unless `normalize: false`.
 *
 * @example
 * const ula = AntennaArray.ula(2, wavelength(28e9) / 2);   // elements at y = -lambda/4 and +lambda/4
 * steeringVector(ula, { azimuthDeg: 90, elevationDeg: 0 }, 28e9, { normalize: false }) // Float64Array [0, -1, 0, 1]: exp(-j pi/2), exp(+j pi/2)
 * steeringVector(ula, [0, 1, 0], 28e9, { side: 'transmit' }) // Float64Array [0, 0.7071, 0, -0.7071]: conj, over sqrt(2)
 */
export function steeringVector(
  array: AntennaArray,
  direction: Readonly<Vec3> | { azimuthDeg: number; elevationDeg: number },
  carrierHz: number,
  options: SteeringOptions = {},
): Float64Array {
  const fn = 'steeringVector()';
  checkPositive(fn, 'carrierHz', carrierHz);
  let u: Vec3;
  if (Array.isArray(direction)) {
    const d = direction as Readonly<Vec3>;
    const norm = Math.hypot(d[0], d[1], d[2]);
    if (!(Math.abs(norm - 1) < 1e-9)) throw new RangeError(`${fn}: direction must be a unit vector [x, y, z], got length ${norm}`);
    u = [d[0], d[1], d[2]];
  } else {
    const { azimuthDeg, elevationDeg } = direction as { azimuthDeg: number; elevationDeg: number };
    if (!Number.isFinite(azimuthDeg) || !Number.isFinite(elevationDeg) || Math.abs(elevationDeg) > 90) {
      throw new RangeError(
        `${fn}: direction must be { azimuthDeg, elevationDeg } with finite degrees and |elevationDeg| <= 90, got ${JSON.stringify(direction)}`,
      );
    }
    u = unitFromDeg(azimuthDeg, elevationDeg);
  }
  const side = options.side ?? 'receive';
  if (side !== 'receive' && side !== 'transmit') throw new TypeError(`${fn}: side must be 'receive' or 'transmit', got ${JSON.stringify(side)}`);
  const N = array.size;
  const out = options.out ?? new Float64Array(2 * N);
  if (out.length !== 2 * N) throw new RangeError(`${fn}: out must hold ${2 * N} numbers ([${N}] complex interleaved), got ${out.length}`);
  array.response(out, u, (2 * Math.PI * carrierHz) / SPEED_OF_LIGHT);
  let energy = 0;
  for (let i = 0; i < out.length; i++) energy += out[i]! * out[i]!;
  const scale = options.normalize === false || energy === 0 ? 1 : 1 / Math.sqrt(energy);
  const conj = side === 'transmit' ? -1 : 1;
  for (let n = 0; n < N; n++) {
    out[2 * n] = out[2 * n]! * scale;
    out[2 * n + 1] = conj * out[2 * n + 1]! * scale;
  }
  return out;
}

/**
 * Where a per-subcarrier matrix sits in one subframe of a generator.
 * @example const at: MatrixIndex = { symbol: 3 }; // symbol 3 of a per-symbol run, subcarrier (or tap) 0
 */
export interface MatrixIndex {
  /** OFDM symbol within the subframe (runs with a symbol axis); default 0. */
  symbol?: number;
}

/**
 * The Nr x Nt matrix H[k] (or tap h[k]) of one subframe, as a view (no copy) of `subframe`,
 * which is one subframe of `generator` ([(symbols,) K or count, Nr, Nt], as a stream item's
 * `tensor` or `generator.fill(generator.allocate(1), s, 1)`). Entry (r, t) is at 2 (r Nt + t).
 *
 * @example
 * const end = (position: Vec3, n: number) => ({ position, velocity: [0, 0, 0] as Vec3, array: AntennaArray.ula(n, 0.005) });
 * const gen = new ChannelGenerator({ carrierHz: 28e9, subframeS: 1e-3, subframes: 1, seed: 1, fading: { model: 'static' }, transmitter: end([0, 0, 0], 2),
 *   receiver: end([10, 0, 0], 3), paths: [{ id: 'los', delayS: 0, power: 1, phaseRad: 0, departure: [1, 0, 0], arrival: [-1, 0, 0] }], grid: { domain: 'frequency', subcarriers: 4, spacingHz: 120e3 } });
 * const H2 = subcarrierMatrix(gen, gen.fill(gen.allocate(1), 0, 1), 2); // Float32Array of 12 numbers: [3, 2] complex
 * H2.length // 12
 */
export function subcarrierMatrix(generator: ChannelGenerator, subframe: TensorArray, k: number, index: MatrixIndex = {}): TensorArray {
  const fn = 'subcarrierMatrix()';
  checkComplexArray(fn, 'subframe', subframe);
  const shape = generator.shape;
  const n = shape.length;
  const [bins, Nr, Nt] = [shape[n - 3]!, shape[n - 2]!, shape[n - 1]!];
  const symbols = generator.stepsPerSubframe;
  if (subframe.length !== 2 * generator.valuesPerSubframe) {
    throw new RangeError(
      `${fn}: subframe must hold one subframe of the generator (${2 * generator.valuesPerSubframe} numbers, [${shape.slice(1).join(', ')}] complex interleaved), got ${subframe.length}`,
    );
  }
  checkInteger(fn, 'k', k, 0);
  if (k >= bins)
    throw new RangeError(`${fn}: k must be < ${bins} (the ${generator.spec.grid.domain === 'taps' ? 'taps' : 'subcarriers'} of the generator), got ${k}`);
  const symbol = index.symbol ?? 0;
  checkInteger(fn, 'symbol', symbol, 0);
  if (symbol >= symbols) throw new RangeError(`${fn}: symbol must be < ${symbols} (the steps per subframe of the generator), got ${symbol}`);
  const size = 2 * Nr * Nt;
  const start = (symbol * bins + k) * size;
  return subframe.subarray(start, start + size);
}

/**
 * Singular values of the complex Nr x Nt matrix stored row-major and interleaved at
 * `data[offset..]`, in decreasing order, min(Nr, Nt) of them (module comment: via the real
 * 2Nr x 2Nt embedding).
 * @example complexSingularValues(Float64Array.of(3, 4, 0, 0, 0, 0, 0, 1), 0, 2, 2) // [5, 1]
 */
export function complexSingularValues(data: ComplexArray, offset: number, Nr: number, Nt: number): number[] {
  const fn = 'complexSingularValues()';
  checkComplexArray(fn, 'data', data);
  if (!(Number.isSafeInteger(Nr) && Nr >= 1 && Number.isSafeInteger(Nt) && Nt >= 1))
    throw new RangeError(`${fn}: Nr and Nt must be integers >= 1, got ${Nr} x ${Nt}`);
  if (!(Number.isSafeInteger(offset) && offset >= 0 && offset + 2 * Nr * Nt <= data.length))
    throw new RangeError(`${fn}: ${Nr} x ${Nt} values at offset ${offset} exceed the ${data.length} numbers given`);
  const real: number[][] = Array.from({ length: 2 * Nr }, () => new Array<number>(2 * Nt).fill(0));
  for (let r = 0; r < Nr; r++) {
    for (let c = 0; c < Nt; c++) {
      const re = data[offset + 2 * (r * Nt + c)]!;
      const im = data[offset + 2 * (r * Nt + c) + 1]!;
      real[r]![c] = re;
      real[r]![c + Nt] = -im;
      real[r + Nr]![c] = im;
      real[r + Nr]![c + Nt] = re;
    }
  }
  const all = new (loadMlMatrix().SingularValueDecomposition)(real, {
    computeLeftSingularVectors: false,
    computeRightSingularVectors: false,
    autoTranspose: true,
  }).diagonal
    .slice()
    .sort((a, b) => b - a);
  // Each value appears twice: keep one of each pair.
  return Array.from({ length: Math.min(Nr, Nt) }, (_, i) => all[2 * i]!);
}

/**
 * Capacity of a MIMO matrix with equal power on every transmit antenna, bit/s/Hz:
 * C = sum_i log2(1 + (snr / Nt) s_i^2) over the singular values s_i (Telatar, 1999, with the
 * covariance (P / Nt) I), `snr` = P / sigma^2 linear.
 * @example equalPowerCapacity([1, 1], 2, 2) // 2: two unit eigen-channels at SNR 1 each
 */
export function equalPowerCapacity(singularValues: readonly number[], snr: number, transmitters: number): number {
  const fn = 'equalPowerCapacity()';
  checkPositive(fn, 'snr', snr);
  checkInteger(fn, 'transmitters', transmitters, 1);
  let c = 0;
  for (const s of singularValues) c += Math.log2(1 + (snr / transmitters) * s * s);
  return c;
}
