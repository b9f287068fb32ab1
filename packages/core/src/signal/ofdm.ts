/**
 * OFDM modulation and demodulation with a cyclic prefix, on fft.js.
 *
 * Layouts (row-major, complex interleaved re/im):
 *   resource grid X [streams, symbols, K]    subcarriers in the centred order of docs/conventions.md:
 *                                            index k has offset k' = k - floor(K / 2) (DC at floor(K / 2))
 *   time signal   x [streams, symbols (cp + K)]  each symbol: its last cp samples, then the K samples
 * Unitary scaling: x[n] = (1 / sqrt K) sum_k X[k] exp(+j 2 pi k' n / K), n = 0..K-1, and
 * demodulation Y[k] = (1 / sqrt K) sum_n y[n] exp(-j 2 pi k' n / K), so sum |x|^2 over the K
 * useful samples equals sum |X|^2 (Parseval) and a tap channel h shorter than the prefix acts on
 * subcarrier k as H[k] = sum_d h[d] exp(-j 2 pi k' d / K) (no 1 / sqrt K on H, as docs/conventions.md's
 * "DFT of h equals H").
 */
import type FFT from 'fft.js';
import { loadFft } from '../lazy-modules.js';
import { allocateLike, checkInteger, checkLength, checkSignal, type ComplexArray } from './checks.js';

/**
 * Options of an OFDM modem.
 * @example new OfdmModem({ subcarriers: 64, cyclicPrefix: 16 } satisfies OfdmOptions).subcarriers // 64
 */
export interface OfdmOptions {
  /** Subcarriers K = FFT size, a power of two >= 2. */
  subcarriers: number;
  /** Cyclic prefix length in samples, 0 <= cp <= K. */
  cyclicPrefix: number;
}

/**
 * An OFDM modulator/demodulator plan: FFT tables and the centred-to-FFT index map are built once.
 *
 * @example
 * const modem = new OfdmModem({ subcarriers: 4, cyclicPrefix: 1 });
 * const X = Float64Array.of(0, 0, 0, 0, 2, 0, 0, 0);   // only DC (k = 2) carries 2
 * modem.modulate(X, 1, 1);                              // 5 samples, each 1 + 0j (2 / sqrt 4)
 */
export class OfdmModem {
  /** Subcarriers K. */
  readonly subcarriers: number;
  /** Cyclic prefix, samples. */
  readonly cyclicPrefix: number;
  /** Samples per symbol, cp + K. */
  readonly symbolLength: number;
  private readonly fft: FFT;
  private readonly fftIndex: Int32Array; // centred index k -> FFT bin (k - floor(K/2)) mod K
  private readonly scale: number;
  private readonly input: Float64Array;
  private readonly output: Float64Array;

  constructor(options: OfdmOptions) {
    const fn = 'OfdmModem()';
    if (options === null || typeof options !== 'object') throw new TypeError(`${fn}: options must be an object { subcarriers, cyclicPrefix }, got ${options}`);
    const K = options.subcarriers;
    if (!Number.isInteger(K) || K < 2 || (K & (K - 1)) !== 0) throw new RangeError(`${fn}: subcarriers must be a power of two >= 2 (fft.js), got ${K}`);
    checkInteger(fn, 'cyclicPrefix', options.cyclicPrefix, 0);
    if (options.cyclicPrefix > K) throw new RangeError(`${fn}: cyclicPrefix must be <= subcarriers (${K}), got ${options.cyclicPrefix}`);
    this.subcarriers = K;
    this.cyclicPrefix = options.cyclicPrefix;
    this.symbolLength = K + this.cyclicPrefix;
    this.fft = new (loadFft())(K);
    this.fftIndex = new Int32Array(K);
    const centre = Math.floor(K / 2);
    for (let k = 0; k < K; k++) this.fftIndex[k] = (k - centre + K) % K;
    this.scale = 1 / Math.sqrt(K);
    this.input = new Float64Array(2 * K);
    this.output = new Float64Array(2 * K);
  }

  /** Time samples of `symbols` OFDM symbols: symbols (cp + K). */
  samplesFor(symbols: number): number {
    checkInteger('OfdmModem.samplesFor()', 'symbols', symbols, 1);
    return symbols * this.symbolLength;
  }

  /**
   * Modulate X [streams, symbols, K] (centred order) into x [streams, symbols (cp + K)].
   * `out` is allocated in X's precision when omitted.
   */
  modulate(X: ComplexArray, streams: number, symbols: number, out?: ComplexArray): ComplexArray {
    const fn = 'OfdmModem.modulate()';
    checkInteger(fn, 'streams', streams, 1);
    checkInteger(fn, 'symbols', symbols, 1);
    const K = this.subcarriers,
      cp = this.cyclicPrefix,
      L = this.symbolLength;
    checkLength(fn, 'X', X, 2 * streams * symbols * K, `[${streams}, ${symbols}, ${K}] complex interleaved`);
    const N = symbols * L;
    const x = out ?? allocateLike(X, 2 * streams * N);
    checkLength(fn, 'out', x, 2 * streams * N, `[${streams}, ${N}] complex interleaved`);
    const { input, output, fftIndex } = this;
    // fft.js's inverse transform divides by K; times sqrt K makes it unitary.
    const gain = Math.sqrt(K);
    for (let t = 0; t < streams; t++) {
      for (let s = 0; s < symbols; s++) {
        const src = 2 * ((t * symbols + s) * K);
        for (let k = 0; k < K; k++) {
          const b = 2 * fftIndex[k]!;
          input[b] = X[src + 2 * k]!;
          input[b + 1] = X[src + 2 * k + 1]!;
        }
        this.fft.inverseTransform(output, input);
        const dst = 2 * (t * N + s * L);
        for (let n = 0; n < K; n++) {
          x[dst + 2 * (cp + n)] = gain * output[2 * n]!;
          x[dst + 2 * (cp + n) + 1] = gain * output[2 * n + 1]!;
        }
        for (let n = 0; n < cp; n++) {
          x[dst + 2 * n] = gain * output[2 * (K - cp + n)]!;
          x[dst + 2 * n + 1] = gain * output[2 * (K - cp + n) + 1]!;
        }
      }
    }
    return x;
  }

  /**
   * Demodulate y [streams, symbols (cp + K)]: drop each prefix, FFT, reorder to the centred
   * grid Y [streams, symbols, K]. `samples` must be a whole number of symbols.
   */
  demodulate(y: ComplexArray, streams: number, samples: number, out?: ComplexArray): ComplexArray {
    const fn = 'OfdmModem.demodulate()';
    checkInteger(fn, 'streams', streams, 1);
    checkSignal(fn, 'y', y, streams, samples);
    const K = this.subcarriers,
      cp = this.cyclicPrefix,
      L = this.symbolLength;
    if (samples % L !== 0) throw new RangeError(`${fn}: samples must be a whole number of symbols of ${L} samples (cp ${cp} + K ${K}), got ${samples}`);
    const symbols = samples / L;
    const Y = out ?? allocateLike(y, 2 * streams * symbols * K);
    checkLength(fn, 'out', Y, 2 * streams * symbols * K, `[${streams}, ${symbols}, ${K}] complex interleaved`);
    const { input, output, fftIndex, scale } = this;
    for (let t = 0; t < streams; t++) {
      for (let s = 0; s < symbols; s++) {
        const src = 2 * (t * samples + s * L + cp);
        for (let n = 0; n < 2 * K; n++) input[n] = y[src + n]!;
        this.fft.transform(output, input);
        const dst = 2 * ((t * symbols + s) * K);
        for (let k = 0; k < K; k++) {
          const b = 2 * fftIndex[k]!;
          Y[dst + 2 * k] = scale * output[b]!;
          Y[dst + 2 * k + 1] = scale * output[b + 1]!;
        }
      }
    }
    return Y;
  }
}

/**
 * Frequency response of a tap channel h [count, Nr, Nt] on K subcarriers in the centred order:
 * H[k] = sum_d h[d] exp(-j 2 pi k' d / K), k' = k - floor(K / 2); out [K, Nr, Nt]. The phase
 * index k' d is reduced modulo K in integers, so large products lose nothing.
 * @example tapsToSubcarriers(Float64Array.of(0, 0, 1, 0), 2, 1, 1, 4) // delay of one sample: [-1,0, 0,1, 1,0, 0,-1]
 */
export function tapsToSubcarriers(
  h: ComplexArray,
  count: number,
  receivers: number,
  transmitters: number,
  subcarriers: number,
  out?: ComplexArray,
): ComplexArray {
  const fn = 'tapsToSubcarriers()';
  checkInteger(fn, 'count', count, 1);
  checkInteger(fn, 'receivers', receivers, 1);
  checkInteger(fn, 'transmitters', transmitters, 1);
  checkInteger(fn, 'subcarriers', subcarriers, 1);
  const M = receivers * transmitters,
    K = subcarriers;
  checkLength(fn, 'h', h, 2 * count * M, `[${count}, ${receivers}, ${transmitters}] complex interleaved`);
  const H = out ?? allocateLike(h, 2 * K * M);
  checkLength(fn, 'out', H, 2 * K * M, `[${K}, ${receivers}, ${transmitters}] complex interleaved`);
  const centre = Math.floor(K / 2);
  for (let k = 0; k < K; k++) {
    const kk = (((k - centre) % K) + K) % K;
    for (let m = 0; m < M; m++) {
      let re = 0,
        im = 0;
      for (let d = 0; d < count; d++) {
        const phase = (-2 * Math.PI * ((kk * d) % K)) / K;
        const c = Math.cos(phase),
          s = Math.sin(phase);
        const hr = h[2 * (d * M + m)]!,
          hi = h[2 * (d * M + m) + 1]!;
        re += hr * c - hi * s;
        im += hr * s + hi * c;
      }
      H[2 * (k * M + m)] = re;
      H[2 * (k * M + m) + 1] = im;
    }
  }
  return H;
}
