/**
 * AR(p) gains fitted to the Clarke/Jakes correlation (Baddour & Beaulieu, IEEE Trans. Wireless
 * Commun., 2005).
 *
 * Target: R(k) = J0(2 pi f_D k T) for one moving end, J0(2 pi f_t k T) J0(2 pi f_r k T) for two,
 * k = 0..p, T the nominal step. The p x p Toeplitz matrix of R is close to singular when f_D T is
 * small, so R(0) is loaded with epsilon (default 1e-6) and the whole sequence rescaled to unit
 * power: r(0) = 1, r(k) = R(k) / (1 + epsilon). The Yule-Walker equations
 *   Toeplitz(r(0..p-1)) a = r(1..p)
 * give a (solved by Cholesky with ml-matrix); the innovation variance
 *   sigma^2 = 1 - sum_k a_k r(k)
 * makes the process unit power. The recursion x_n = sum_k a_k x_(n-k) + w_n, w ~ CN(0, sigma^2),
 * reproduces r(0..p) exactly; beyond lag p it extrapolates. Loading puts a white floor under the
 * spectrum (about epsilon T per hertz, see docs/fading.md for measured figures).
 *
 * Stationary start: x_0..x_(p-1) = C z with C the Cholesky factor of Toeplitz(r(0..p-1)) and
 * z ~ CN(0, I_p) from the stream (seed, path id, block 0, lane AR_START_LANE); step n >= p draws
 * its innovation from the stream of (seed, path id, n div RANDOM_BLOCK_STEPS). Hence the process
 * is stationary from step 0, no burn-in is needed, and a slice replays the recursion from step 0.
 *
 * Gains: [steps, L] complex interleaved (gains.ts), path l at step s at 2 (s L + l).
 */
import { loadMlMatrix } from '../lazy-modules.js';
import { besselJ0 } from '../bessel.js';
import type { GainProcess } from '../gains.js';
import { BlockedStreams, RandomStream } from '../random.js';
import { checkFadingPaths, checkGainOut, type FadingPath } from './clock.js';

/**
 * The default of fading.order.
 * @example AR_DEFAULT_ORDER // 20
 */
export const AR_DEFAULT_ORDER = 20;
/**
 * Default diagonal loading epsilon added to R(0) (Baddour & Beaulieu use the 1e-6 scale).
 * @example AR_DEFAULT_LOADING // 1e-6
 */
export const AR_DEFAULT_LOADING = 1e-6;
/**
 * Largest accepted condition number of the loaded Yule-Walker matrix. The solution then keeps
 * about 8 significant digits (condition * 2^-52 < 2.3e-8), well below the loading itself.
 * With epsilon = 1e-6 the condition is close to p / epsilon for small f_D T, so about order 100
 * is the limit there; faster fading allows more.
 * @example AR_MAX_CONDITION * 2 ** -52 // 2.2e-8: about 8 significant digits left
 */
export const AR_MAX_CONDITION = 1e8;
/**
 * Lane of the stream that draws the stationary start state.
 * @example AR_START_LANE // 1
 */
export const AR_START_LANE = 1;

/**
 * An AR(p) model fitted to a target correlation.
 * @example
 * const fit: ArFit = fitAutoregressive(Float64Array.of(1, 0.9), 0);
 * [fit.order, fit.coefficients[0], fit.innovationVariance] // [1, 0.9, 0.19]: x_n = 0.9 x_(n-1) + w_n, sigma^2 = 1 - 0.9^2
 */
export interface ArFit {
  order: number;
  /** a_1..a_p of x_n = sum a_k x_(n-k) + w_n. */
  coefficients: Float64Array;
  /** sigma^2 of the complex innovation (unit-power process). */
  innovationVariance: number;
  /** The loaded, unit-power correlation r(0..p) that the model reproduces. */
  correlation: Float64Array;
  /** Condition number of Toeplitz(r(0..p-1)) (largest over smallest eigenvalue). */
  condition: number;
  /** Lower Cholesky factor of Toeplitz(r(0..p-1)), [p, p] row-major. */
  startFactor: Float64Array;
}

/**
 * Target R(k) = prod_i J0(2 pi f_i k T), k = 0..order.
 * @example clarkeTargetCorrelation([280.194], 0.125e-3, 1)[1] // 0.98792957
 */
export function clarkeTargetCorrelation(dopplersHz: readonly number[], stepS: number, order: number): Float64Array {
  const r = new Float64Array(order + 1);
  for (let k = 0; k <= order; k++) {
    let v = 1;
    for (const f of dopplersHz) v *= besselJ0(2 * Math.PI * f * k * stepS);
    r[k] = v;
  }
  return r;
}

/**
 * An AR(p) fit refused for its correlation (ill-conditioned or not positive definite): the
 * order asked for cannot be carried, which a caller reports as a problem of its input, by type.
 * `problem` is the reason without the function's name and the path.
 * @example new ArFitError('order 40 is too high for this correlation').message // "fitAutoregressive(): order 40 is too high for this correlation"
 */
export class ArFitError extends RangeError {
  override name = 'ArFitError';

  constructor(
    readonly problem: string,
    message = `fitAutoregressive(): ${problem}`,
  ) {
    super(message);
  }
}

/**
 * Fit AR(p), p = target.length - 1, to a unit-power target correlation with diagonal loading.
 * @throws ArFitError (a RangeError) when the loaded matrix is not positive definite or its condition exceeds AR_MAX_CONDITION
 * @example fitAutoregressive(Float64Array.of(1, 0.9), 0).coefficients[0] // 0.9 (AR(1): a = r(1))
 */
export function fitAutoregressive(target: Float64Array, loading = AR_DEFAULT_LOADING): ArFit {
  const p = target.length - 1;
  if (p < 1) throw new RangeError(`fitAutoregressive(): the target needs lags 0..p with p >= 1, got ${target.length} values`);
  if (!(loading >= 0) || !Number.isFinite(loading)) throw new RangeError(`fitAutoregressive(): loading must be finite and >= 0, got ${loading}`);
  if (Math.abs(target[0]! - 1) > 1e-12) throw new RangeError(`fitAutoregressive(): target[0] must be 1 (unit power), got ${target[0]}`);
  const r = new Float64Array(p + 1);
  r[0] = 1;
  for (let k = 1; k <= p; k++) r[k] = target[k]! / (1 + loading);
  const { CholeskyDecomposition, EigenvalueDecomposition, Matrix } = loadMlMatrix();
  const toeplitz = Matrix.zeros(p, p);
  for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) toeplitz.set(i, j, r[Math.abs(i - j)]!);
  const eigen = new EigenvalueDecomposition(toeplitz, { assumeSymmetric: true }).realEigenvalues;
  let lo = Infinity;
  let hi = 0;
  for (const e of eigen) {
    lo = Math.min(lo, e);
    hi = Math.max(hi, Math.abs(e));
  }
  const condition = lo > 0 ? hi / lo : Infinity;
  if (!(condition <= AR_MAX_CONDITION)) {
    throw new ArFitError(
      `order ${p} is too high for this correlation: the loaded Yule-Walker matrix has condition number ` +
        `${condition.toExponential(2)} > ${AR_MAX_CONDITION.toExponential(0)} (AR_MAX_CONDITION); lower the order or raise the loading (${loading})`,
    );
  }
  const cholesky = new CholeskyDecomposition(toeplitz);
  if (!cholesky.isPositiveDefinite()) throw new ArFitError(`the loaded Yule-Walker matrix of order ${p} is not positive definite`);
  const rhs = Matrix.columnVector(Array.from(r.subarray(1)));
  const a = cholesky.solve(rhs).getColumn(0);
  const coefficients = Float64Array.from(a);
  let explained = 0;
  for (let k = 0; k < p; k++) explained += coefficients[k]! * r[k + 1]!;
  const innovationVariance = 1 - explained;
  if (!(innovationVariance > 0)) throw new ArFitError(`innovation variance ${innovationVariance} <= 0 at order ${p}; raise the loading`);
  const factor = cholesky.lowerTriangularMatrix;
  const startFactor = new Float64Array(p * p);
  for (let i = 0; i < p; i++) for (let j = 0; j <= i; j++) startFactor[i * p + j] = factor.get(i, j);
  return { order: p, coefficients, innovationVariance, correlation: r, condition, startFactor };
}

/**
 * Two-sided power spectral density of the fitted process, per hertz, at frequency f:
 * S(f) = sigma^2 T / |1 - sum_k a_k exp(-j 2 pi f k T)|^2; it integrates to 1 over |f| < 1 / (2T).
 * @example arPowerSpectralDensity(fitAutoregressive(Float64Array.of(1, 0), 0), 0, 1e-3) // 1e-3 (white)
 */
export function arPowerSpectralDensity(fit: ArFit, frequencyHz: number, stepS: number): number {
  let re = 1;
  let im = 0;
  for (let k = 1; k <= fit.order; k++) {
    const w = -2 * Math.PI * frequencyHz * k * stepS;
    re -= fit.coefficients[k - 1]! * Math.cos(w);
    im -= fit.coefficients[k - 1]! * Math.sin(w);
  }
  return (fit.innovationVariance * stepS) / (re * re + im * im);
}

/**
 * Options of AutoregressiveGains.
 * @example const perSymbol: AutoregressiveOptions = { order: 20, stepS: 1e-3 / 14 };
 */
export interface AutoregressiveOptions {
  /** Model order p >= 1 (scenario key fading.order). */
  order: number;
  /** Nominal step T between successive gains, seconds (subframe or symbol step). */
  stepS: number;
  /** Diagonal loading epsilon, default AR_DEFAULT_LOADING. */
  loading?: number;
}

const drawOneComplex = (stream: RandomStream): void => {
  stream.nextUniform();
  stream.nextUniform();
};

/**
 * AR(p) gains of every path, unit power scaled by sqrt(gamma_l). Paths sharing their Doppler
 * spreads share one fit. A path with no spread (dopplersHz [] or all 0) keeps its start value
 * (the limit f_D -> 0).
 * @example
 *   const g = new AutoregressiveGains([{ id: 'los', power: 1, phaseRad: 0, dopplersHz: [100] }], 7, { order: 20, stepS: 1e-3 });
 *   g.fill(new Float64Array(2 * 10), 0, 10); // ten steps of path 'los'
 */
export class AutoregressiveGains implements GainProcess {
  readonly pathCount: number;
  /** The fit of each path (undefined for a path without Doppler spread). */
  readonly fits: readonly (ArFit | undefined)[];
  private readonly order: number;
  private readonly streams: BlockedStreams[];
  private readonly amplitudes: Float64Array;
  private readonly history: Float64Array; // [L, p] complex ring buffer of the last p unit-power values
  private readonly starts: Float64Array; // [L, p] complex stationary start values x_0..x_(p-1)
  private readonly draw = new Float64Array(2);
  private position = 0; // steps computed so far

  constructor(
    paths: readonly FadingPath[],
    private readonly seed: number,
    options: AutoregressiveOptions,
  ) {
    checkFadingPaths('AutoregressiveGains()', paths);
    const { order, stepS } = options;
    if (!Number.isInteger(order) || order < 1) throw new RangeError(`AutoregressiveGains(): order must be an integer >= 1, got ${order}`);
    if (!(stepS > 0) || !Number.isFinite(stepS)) throw new RangeError(`AutoregressiveGains(): stepS must be a finite number > 0, got ${stepS}`);
    const loading = options.loading ?? AR_DEFAULT_LOADING;
    this.order = order;
    this.pathCount = paths.length;
    const cache = new Map<string, ArFit>();
    this.fits = paths.map((p) => {
      if (p.dopplersHz.every((f) => f === 0)) return undefined;
      const key = p.dopplersHz.join(',');
      let fit = cache.get(key);
      if (fit === undefined) {
        try {
          fit = fitAutoregressive(clarkeTargetCorrelation(p.dopplersHz, stepS, order), loading);
        } catch (e) {
          if (e instanceof ArFitError)
            throw new ArFitError(e.problem, `AutoregressiveGains(): path ${p.id} (Doppler spreads ${key} Hz, step ${stepS} s): ${e.message}`);
          throw e;
        }
        cache.set(key, fit);
      }
      return fit;
    });
    this.streams = paths.map((p) => new BlockedStreams(seed, p.id, drawOneComplex));
    this.amplitudes = Float64Array.from(paths, (p) => Math.sqrt(p.power));
    this.history = new Float64Array(2 * order * paths.length);
    this.starts = new Float64Array(2 * order * paths.length);
    paths.forEach((p, l) => this.drawStart(l, p.id));
  }

  private drawStart(l: number, id: string): void {
    const p = this.order;
    const z = new Float64Array(2 * p);
    const stream = new RandomStream(this.seed, id, 0, AR_START_LANE);
    for (let i = 0; i < p; i++) stream.nextComplexNormal(z, 2 * i);
    const fit = this.fits[l];
    const base = 2 * p * l;
    for (let i = 0; i < p; i++) {
      let re = 0;
      let im = 0;
      if (fit === undefined) {
        re = z[0]!; // no spread: the process stays at its first value
        im = z[1]!;
      } else {
        for (let j = 0; j <= i; j++) {
          const c = fit.startFactor[i * p + j]!;
          re += c * z[2 * j]!;
          im += c * z[2 * j + 1]!;
        }
      }
      this.starts[base + 2 * i] = re;
      this.starts[base + 2 * i + 1] = im;
    }
  }

  /** Advance every path by one step; the new value goes to the ring slot `position mod p`. */
  private step(): void {
    const s = this.position;
    const p = this.order;
    const slot = s % p;
    for (let l = 0; l < this.pathCount; l++) {
      const base = 2 * p * l;
      const fit = this.fits[l];
      let re: number;
      let im: number;
      if (s < p || fit === undefined) {
        const i = fit === undefined ? 0 : s;
        re = this.starts[base + 2 * i]!;
        im = this.starts[base + 2 * i + 1]!;
      } else {
        const a = fit.coefficients;
        re = 0;
        im = 0;
        for (let k = 1; k <= p; k++) {
          const j = base + 2 * ((s - k) % p); // x_(s-k)
          re += a[k - 1]! * this.history[j]!;
          im += a[k - 1]! * this.history[j + 1]!;
        }
        this.streams[l]!.at(s).nextComplexNormal(this.draw, 0, fit.innovationVariance);
        re += this.draw[0]!;
        im += this.draw[1]!;
      }
      this.history[base + 2 * slot] = re;
      this.history[base + 2 * slot + 1] = im;
    }
    this.position++;
  }

  /** GainProcess.fill: steps [first, first + count); an earlier `first` replays from step 0. */
  fill(out: Float64Array, first: number, count: number): void {
    checkGainOut('AutoregressiveGains.fill()', out, first, count, this.pathCount);
    if (first < this.position) this.position = 0;
    while (this.position < first) this.step();
    const L = this.pathCount;
    const p = this.order;
    for (let s = 0; s < count; s++) {
      this.step();
      const slot = (first + s) % p;
      for (let l = 0; l < L; l++) {
        const a = this.amplitudes[l]!;
        out[2 * (s * L + l)] = a * this.history[2 * p * l + 2 * slot]!;
        out[2 * (s * L + l) + 1] = a * this.history[2 * p * l + 2 * slot + 1]!;
      }
    }
  }
}
