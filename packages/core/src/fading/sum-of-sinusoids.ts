/**
 * Sum-of-sinusoids Rayleigh gains in continuous time.
 *
 * One moving end (spread f_D, w_d = 2 pi f_D), the model of Zheng & Xiao (IEEE Trans. Commun.,
 * 2003) with M sinusoids, scaled to unit power:
 *   X(t) = (1 / sqrt(M)) sum_n [cos(w_d t cos a_n + phi_n) + j cos(w_d t sin a_n + psi_n)],
 *   a_n = (2 pi n - pi + theta) / (4 M), n = 1..M,
 * with theta, phi_n, psi_n independent and uniform on [-pi, pi) per path. As theta varies the a_n
 * sweep [0, pi/2) uniformly, so the in-phase and quadrature autocorrelations are each
 * J0(w_d tau) / 2 for any M, their cross-correlation is 0 and E[X(t + tau) X*(t)] = J0(w_d tau).
 *
 * Both ends moving (spreads f_t, f_r, isotropic scattering around each end), a double-ring sum of
 * M x M complex sinusoids (derived here; its structure follows the mobile-to-mobile models of
 * Patel, Stuber & Pratt, IEEE Trans. Commun., 2005, from memory M):
 *   X(t) = (1 / M) sum_n sum_m exp(j (w_t t cos b_n + w_r t cos c_m + phi_nm)),
 *   b_n = (2 pi n - pi + theta_t) / M, c_m = (2 pi m - pi + theta_r) / M,
 * theta_t, theta_r, phi_nm independent uniform on [-pi, pi). Each angle set sweeps the full circle
 * uniformly, and E[exp(j x cos b)] = J0(x) over a uniform b, so
 *   E[X(t + tau) X*(t)] = J0(w_t tau) J0(w_r tau),  E[X(t + tau) X(t)] = 0,
 * and Re/Im are uncorrelated (cos b is symmetric, so E sin(w_t tau cos b + w_r tau cos c) = 0).
 * It is evaluated as sum_n e_n(t) sum_m g_m(t) C_nm with e_n, g_m the per-end phasors and
 * C_nm = exp(j phi_nm): 4M trigonometric calls and M^2 complex multiply-adds per sample.
 *
 * Numbers: path l draws its angles and phases once from the stream (seed, path id, block 0,
 * lane SOS_LANE); a gain depends only on its time, so any slice equals the full run bit for bit.
 * Gains: [steps, L] complex interleaved (gains.ts).
 */
import type { GainProcess } from '../gains.js';
import { RandomStream } from '../random.js';
import { checkFadingPaths, checkGainOut, type ContinuousGainProcess, type FadingPath, type StepClock } from './clock.js';

/**
 * Fewest sinusoids accepted (fourth-order statistics are good from M = 8, Zheng & Xiao).
 * @example new SumOfSinusoidsGains([{ id: 'a', power: 1, phaseRad: 0, dopplersHz: [100] }], 1, { sinusoids: 4, clock: uniformClock(1e-3) }) // throws RangeError "SumOfSinusoidsGains(): sinusoids must be an integer >= 8, got 4"
 */
export const SOS_MIN_SINUSOIDS = 8;
/**
 * A default for fading.sinusoids.
 * @example SOS_DEFAULT_SINUSOIDS // 16
 */
export const SOS_DEFAULT_SINUSOIDS = 16;
/**
 * Lane of the stream that draws a path's angles and phases.
 * @example SOS_LANE // 2
 */
export const SOS_LANE = 2;

const TWO_PI = 2 * Math.PI;

/**
 * Options of SumOfSinusoidsGains.
 * @example const options: SumOfSinusoidsOptions = { sinusoids: 32, clock: uniformClock(1e-3) };
 */
export interface SumOfSinusoidsOptions {
  /** M >= SOS_MIN_SINUSOIDS (scenario key fading.sinusoids); per end for the double ring. */
  sinusoids: number;
  /** When each step happens (uniformClock or numerologyClock). */
  clock: StepClock;
}

/**
 * Sum-of-sinusoids gains, unit power scaled by sqrt(gamma_l), single ring for zero or one
 * non-zero spread, double ring for two.
 * @example
 *   const g = new SumOfSinusoidsGains([{ id: 'a', power: 1, phaseRad: 0, dopplersHz: [100] }], 1, { sinusoids: 16, clock: uniformClock(1e-3) });
 *   g.fillAtTimes(new Float64Array(2), [0.0123]); // Float64Array [-0.1852, -0.03734]: the gain at t = 12.3 ms
 */
export class SumOfSinusoidsGains implements GainProcess, ContinuousGainProcess {
  readonly pathCount: number;
  readonly sinusoids: number;
  private readonly clock: StepClock;
  private readonly amplitudes: Float64Array;
  private readonly doubleRing: Uint8Array; // 1 when path l uses the double ring
  // Single ring: [L, M] angular frequencies and phases.
  private readonly wIn: Float64Array;
  private readonly wQuad: Float64Array;
  private readonly phaseIn: Float64Array;
  private readonly phaseQuad: Float64Array;
  // Double ring: [L, M] angular frequencies per end, [L, M, M] complex C_nm.
  private readonly wTx: Float64Array;
  private readonly wRx: Float64Array;
  private readonly coupling: Float64Array;
  private readonly phasorTx: Float64Array; // [M] complex scratch
  private readonly phasorRx: Float64Array;
  private readonly value = new Float64Array(2);

  constructor(paths: readonly FadingPath[], seed: number, options: SumOfSinusoidsOptions) {
    checkFadingPaths('SumOfSinusoidsGains()', paths);
    const M = options.sinusoids;
    if (!Number.isInteger(M) || M < SOS_MIN_SINUSOIDS) {
      throw new RangeError(`SumOfSinusoidsGains(): sinusoids must be an integer >= ${SOS_MIN_SINUSOIDS}, got ${M}`);
    }
    if (options.clock === undefined || typeof options.clock.timeS !== 'function')
      throw new TypeError('SumOfSinusoidsGains(): options.clock must be a StepClock');
    this.sinusoids = M;
    this.clock = options.clock;
    const L = paths.length;
    this.pathCount = L;
    this.amplitudes = Float64Array.from(paths, (p) => Math.sqrt(p.power));
    this.doubleRing = new Uint8Array(L);
    this.wIn = new Float64Array(L * M);
    this.wQuad = new Float64Array(L * M);
    this.phaseIn = new Float64Array(L * M);
    this.phaseQuad = new Float64Array(L * M);
    const rings = paths.filter((p) => p.dopplersHz.filter((f) => f > 0).length === 2).length;
    this.wTx = new Float64Array(rings > 0 ? L * M : 0);
    this.wRx = new Float64Array(rings > 0 ? L * M : 0);
    this.coupling = new Float64Array(rings > 0 ? 2 * L * M * M : 0);
    this.phasorTx = new Float64Array(2 * M);
    this.phasorRx = new Float64Array(2 * M);
    paths.forEach((p, l) => {
      const stream = new RandomStream(seed, p.id, 0, SOS_LANE);
      const angle = (): number => TWO_PI * stream.nextUniform() - Math.PI; // uniform on [-pi, pi)
      const spreads = p.dopplersHz.filter((f) => f > 0);
      if (spreads.length === 2) {
        this.doubleRing[l] = 1;
        const thetaT = angle();
        const thetaR = angle();
        for (let n = 0; n < M; n++) {
          this.wTx[l * M + n] = TWO_PI * spreads[0]! * Math.cos((TWO_PI * (n + 1) - Math.PI + thetaT) / M);
          this.wRx[l * M + n] = TWO_PI * spreads[1]! * Math.cos((TWO_PI * (n + 1) - Math.PI + thetaR) / M);
        }
        for (let i = 0; i < M * M; i++) {
          const phi = angle();
          this.coupling[2 * (l * M * M + i)] = Math.cos(phi);
          this.coupling[2 * (l * M * M + i) + 1] = Math.sin(phi);
        }
      } else {
        const wd = TWO_PI * (spreads[0] ?? 0);
        const theta = angle();
        for (let n = 0; n < M; n++) {
          const a = (TWO_PI * (n + 1) - Math.PI + theta) / (4 * M);
          this.wIn[l * M + n] = wd * Math.cos(a);
          this.wQuad[l * M + n] = wd * Math.sin(a);
        }
        for (let n = 0; n < M; n++) this.phaseIn[l * M + n] = angle();
        for (let n = 0; n < M; n++) this.phaseQuad[l * M + n] = angle();
      }
    });
  }

  /**
   * The unit-power gain X_l(t) of path l, written to out[offset], out[offset + 1].
   * @example
   * const g = new SumOfSinusoidsGains([{ id: 'a', power: 1, phaseRad: 0, dopplersHz: [100] }], 1, { sinusoids: 16, clock: uniformClock(1e-3) });
   * const buf = new Float64Array(2);
   * g.evaluate(buf, 0, 0, 0.5); // buf: Float64Array [0.7705, 0.1135], X_0 at t = 0.5 s (as g.fillAtTimes(buf, [0.5]))
   */
  evaluate(out: Float64Array, offset: number, l: number, timeS: number): void {
    const M = this.sinusoids;
    if (this.doubleRing[l] === 1) {
      const et = this.phasorTx;
      const er = this.phasorRx;
      for (let n = 0; n < M; n++) {
        const a = this.wTx[l * M + n]! * timeS;
        const b = this.wRx[l * M + n]! * timeS;
        et[2 * n] = Math.cos(a);
        et[2 * n + 1] = Math.sin(a);
        er[2 * n] = Math.cos(b);
        er[2 * n + 1] = Math.sin(b);
      }
      const c = this.coupling;
      const base = 2 * l * M * M;
      let re = 0;
      let im = 0;
      for (let n = 0; n < M; n++) {
        let sr = 0; // sum_m g_m C_nm
        let si = 0;
        for (let m = 0; m < M; m++) {
          const cr = c[base + 2 * (n * M + m)]!,
            ci = c[base + 2 * (n * M + m) + 1]!;
          const gr = er[2 * m]!,
            gi = er[2 * m + 1]!;
          sr += gr * cr - gi * ci;
          si += gr * ci + gi * cr;
        }
        const tr = et[2 * n]!,
          ti = et[2 * n + 1]!;
        re += tr * sr - ti * si;
        im += tr * si + ti * sr;
      }
      out[offset] = re / M;
      out[offset + 1] = im / M;
      return;
    }
    let re = 0;
    let im = 0;
    for (let n = l * M, end = l * M + M; n < end; n++) {
      re += Math.cos(this.wIn[n]! * timeS + this.phaseIn[n]!);
      im += Math.cos(this.wQuad[n]! * timeS + this.phaseQuad[n]!);
    }
    const scale = 1 / Math.sqrt(M);
    out[offset] = re * scale;
    out[offset + 1] = im * scale;
  }

  /** GainProcess.fill: steps [first, first + count) at the clock's times. */
  fill(out: Float64Array, first: number, count: number): void {
    checkGainOut('SumOfSinusoidsGains.fill()', out, first, count, this.pathCount);
    for (let s = 0; s < count; s++) this.writeStep(out, s, this.clock.timeS(first + s));
  }

  /** ContinuousGainProcess.fillAtTimes: the gains at arbitrary times. */
  fillAtTimes(out: Float64Array, timesS: ArrayLike<number>): void {
    checkGainOut('SumOfSinusoidsGains.fillAtTimes()', out, 0, timesS.length, this.pathCount);
    for (let s = 0; s < timesS.length; s++) this.writeStep(out, s, timesS[s]!);
  }

  private writeStep(out: Float64Array, s: number, t: number): void {
    const L = this.pathCount;
    const v = this.value;
    for (let l = 0; l < L; l++) {
      this.evaluate(v, 0, l, t);
      const a = this.amplitudes[l]!;
      out[2 * (s * L + l)] = a * v[0]!;
      out[2 * (s * L + l) + 1] = a * v[1]!;
    }
  }
}
