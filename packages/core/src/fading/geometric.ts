/**
 * Geometric Doppler gains in continuous time.
 *
 * Without a Rician factor each path turns at its own signed Doppler shift f_l (docs/conventions.md, Gains):
 *   rho_l(t) = sqrt(gamma_l) exp(j (phase_l + 2 pi f_l t)).
 * With `ricianKDb` (K = 10^(K_dB / 10)) the path is a specular part of power K / (K + 1) turning at
 * f_l plus a diffuse part of power 1 / (K + 1), a unit-power Clarke process X_l(t) of the path's
 * spreads (the sum-of-sinusoids model of sum-of-sinusoids.ts, same streams):
 *   rho_l(t) = sqrt(gamma_l) [sqrt(K / (K + 1)) exp(j (phase_l + 2 pi f_l t)) + sqrt(1 / (K + 1)) X_l(t)],
 * so E|rho_l|^2 = gamma_l and |rho_l| is Rician with nu^2 / (2 sigma^2) = K.
 * Gains: [steps, L] complex interleaved (gains.ts).
 */
import type { GainProcess } from '../gains.js';
import { checkFadingPaths, checkGainOut, type ContinuousGainProcess, type FadingPath, type StepClock } from './clock.js';
import { SOS_DEFAULT_SINUSOIDS, SumOfSinusoidsGains } from './sum-of-sinusoids.js';

/**
 * Options of GeometricGains.
 * @example const rician: GeometricOptions = { clock: uniformClock(1e-3), ricianKDb: 6 };
 */
export interface GeometricOptions {
  /** When each step happens. */
  clock: StepClock;
  /** Rician K factor in dB (scenario key fading.ricianKDb); absent: purely specular paths. */
  ricianKDb?: number | undefined;
  /** Sinusoids of the diffuse part, default SOS_DEFAULT_SINUSOIDS. */
  sinusoids?: number | undefined;
}

/**
 * Geometric (deterministic Doppler) gains, optionally Rician.
 * @example
 *   const g = new GeometricGains([{ id: 'los', power: 4, phaseRad: 0, dopplersHz: [], dopplerHz: 250 }], 0, { clock: uniformClock(1e-3) });
 *   const out = new Float64Array(2);
 *   g.fillAtTimes(out, [1e-3]); // out: Float64Array [1.2e-16, 2] = [2 cos(pi / 2), 2 sin(pi / 2)]
 */
export class GeometricGains implements GainProcess, ContinuousGainProcess {
  readonly pathCount: number;
  /** K as a linear power ratio, or undefined. */
  readonly ricianK: number | undefined;
  private readonly clock: StepClock;
  private readonly specular: Float64Array; // [L] amplitude of the specular part
  private readonly diffuseAmplitude: Float64Array; // [L]
  private readonly phases: Float64Array; // [L]
  private readonly angularDopplers: Float64Array; // [L] 2 pi f_l
  private readonly diffuse: SumOfSinusoidsGains | undefined;
  private readonly value = new Float64Array(2);

  constructor(paths: readonly FadingPath[], seed: number, options: GeometricOptions) {
    checkFadingPaths('GeometricGains()', paths);
    if (options.clock === undefined || typeof options.clock.timeS !== 'function') throw new TypeError('GeometricGains(): options.clock must be a StepClock');
    this.clock = options.clock;
    const kDb = options.ricianKDb;
    if (kDb !== undefined && !Number.isFinite(kDb)) throw new RangeError(`GeometricGains(): ricianKDb must be a finite number of dB, got ${kDb}`);
    this.ricianK = kDb === undefined ? undefined : 10 ** (kDb / 10);
    this.pathCount = paths.length;
    const specularShare = this.ricianK === undefined ? 1 : this.ricianK / (this.ricianK + 1);
    this.specular = Float64Array.from(paths, (p) => Math.sqrt(p.power * specularShare));
    this.diffuseAmplitude = Float64Array.from(paths, (p) => Math.sqrt(p.power * (1 - specularShare)));
    this.phases = Float64Array.from(paths, (p) => p.phaseRad);
    this.angularDopplers = Float64Array.from(paths, (p) => 2 * Math.PI * (p.dopplerHz ?? 0));
    this.diffuse =
      this.ricianK === undefined
        ? undefined
        : new SumOfSinusoidsGains(paths, seed, { sinusoids: options.sinusoids ?? SOS_DEFAULT_SINUSOIDS, clock: options.clock });
  }

  /** GainProcess.fill: steps [first, first + count) at the clock's times. */
  fill(out: Float64Array, first: number, count: number): void {
    checkGainOut('GeometricGains.fill()', out, first, count, this.pathCount);
    for (let s = 0; s < count; s++) this.writeStep(out, s, this.clock.timeS(first + s));
  }

  /** ContinuousGainProcess.fillAtTimes: the gains at arbitrary times. */
  fillAtTimes(out: Float64Array, timesS: ArrayLike<number>): void {
    checkGainOut('GeometricGains.fillAtTimes()', out, 0, timesS.length, this.pathCount);
    for (let s = 0; s < timesS.length; s++) this.writeStep(out, s, timesS[s]!);
  }

  private writeStep(out: Float64Array, s: number, t: number): void {
    const L = this.pathCount;
    const v = this.value;
    for (let l = 0; l < L; l++) {
      const phase = this.phases[l]! + this.angularDopplers[l]! * t;
      let re = this.specular[l]! * Math.cos(phase);
      let im = this.specular[l]! * Math.sin(phase);
      if (this.diffuse !== undefined) {
        this.diffuse.evaluate(v, 0, l, t);
        re += this.diffuseAmplitude[l]! * v[0]!;
        im += this.diffuseAmplitude[l]! * v[1]!;
      }
      out[2 * (s * L + l)] = re;
      out[2 * (s * L + l) + 1] = im;
    }
  }
}
