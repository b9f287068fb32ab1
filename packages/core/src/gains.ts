/**
 * Gain processes. Gains are laid out [steps, L] complex, interleaved re/im in a Float64Array:
 * the gain of path l at step s (relative to the first step asked for) is at 2 (s L + l).
 * Every path runs a unit-power process which is then scaled by sqrt(gamma_l), so its numbers
 * do not depend on its power (docs/conventions.md, Reproducibility).
 */
import { BlockedStreams, type RandomStream } from './random.js';

/**
 * One path as the gain process sees it.
 * @example const los: GainPath = { id: 'los', power: 0.5, phaseRad: 0, alpha: 0.99 };
 */
export interface GainPath {
  /** Stable identity (keys the random streams). */
  id: string;
  /** Mean power gamma_l = E|rho|^2, linear. */
  power: number;
  /** arg(rho) at t = 0 in radians (static model). */
  phaseRad: number;
  /** Lag-1 correlation of the Gauss-Markov model. */
  alpha: number;
}

/**
 * A source of per-step complex path gains.
 * @example
 * const gains: GainProcess = new StaticGains([{ id: 'a', power: 4, phaseRad: 0, alpha: 1 }]);
 * const out = new Float64Array(4);
 * gains.fill(out, 0, 2);
 * out // Float64Array [2, 0, 2, 0]: sqrt(4) at both steps
 */
export interface GainProcess {
  /** Number of paths L. */
  readonly pathCount: number;
  /**
   * Write the gains of steps [first, first + count) into `out` ([count, L], interleaved).
   * Calls in increasing order are cheap; an earlier `first` replays from step 0.
   */
  fill(out: Float64Array, first: number, count: number): void;
}

/**
 * rho_l = sqrt(gamma_l) exp(j phase_l), the same at every step.
 * @example
 * const out = new Float64Array(2);
 * new StaticGains([{ id: 'a', power: 0.25, phaseRad: Math.PI, alpha: 1 }]).fill(out, 5, 1);
 * out // Float64Array [-0.5, 6.1e-17]: the same at every step
 */
export class StaticGains implements GainProcess {
  readonly pathCount: number;
  private readonly values: Float64Array;

  constructor(paths: readonly GainPath[]) {
    this.pathCount = paths.length;
    this.values = new Float64Array(2 * paths.length);
    paths.forEach((p, l) => {
      const a = Math.sqrt(p.power);
      this.values[2 * l] = a * Math.cos(p.phaseRad);
      this.values[2 * l + 1] = a * Math.sin(p.phaseRad);
    });
  }

  fill(out: Float64Array, _first: number, count: number): void {
    checkOut('StaticGains.fill()', out, count, this.pathCount);
    for (let s = 0; s < count; s++) out.set(this.values, 2 * s * this.pathCount);
  }
}

const drawOneComplex = (stream: RandomStream): void => {
  stream.nextUniform();
  stream.nextUniform();
};

/**
 * Gauss-Markov (AR(1)) gains of docs/conventions.md: rho_s = alpha rho_(s-1) + sqrt(1 - alpha^2) nu_s,
 * nu ~ CN(0, gamma) i.i.d., rho_0 ~ CN(0, gamma) (stationary start). Step s draws one complex
 * normal from the stream of (seed, path id, s div RANDOM_BLOCK_STEPS); rho_0 is that draw at s = 0.
 * @example
 * const g = new GaussMarkovGains([{ id: 'los', power: 1, phaseRad: 0, alpha: 0.9 }], 7);
 * const whole = new Float64Array(6), tail = new Float64Array(2);
 * g.fill(whole, 0, 3);
 * new GaussMarkovGains([{ id: 'los', power: 1, phaseRad: 0, alpha: 0.9 }], 7).fill(tail, 2, 1);
 * tail[0] === whole[4] // true: step 2 does not depend on where the run starts
 */
export class GaussMarkovGains implements GainProcess {
  readonly pathCount: number;
  private readonly streams: BlockedStreams[];
  private readonly state: Float64Array; // unit-power rho at step `position - 1`
  private readonly draw = new Float64Array(2);
  private position = 0;

  constructor(
    private readonly paths: readonly GainPath[],
    seed: number,
  ) {
    this.pathCount = paths.length;
    for (const p of paths) {
      if (!(p.alpha >= -1 && p.alpha <= 1)) throw new RangeError(`GaussMarkovGains(): path ${p.id}: alpha must lie in [-1, 1], got ${p.alpha}`);
    }
    this.streams = paths.map((p) => new BlockedStreams(seed, p.id, drawOneComplex));
    this.state = new Float64Array(2 * paths.length);
  }

  private step(): void {
    const s = this.position;
    for (let l = 0; l < this.pathCount; l++) {
      this.streams[l]!.at(s).nextComplexNormal(this.draw, 0);
      if (s === 0) {
        this.state[2 * l] = this.draw[0]!;
        this.state[2 * l + 1] = this.draw[1]!;
      } else {
        const a = this.paths[l]!.alpha;
        const b = Math.sqrt(Math.max(0, 1 - a * a));
        this.state[2 * l] = a * this.state[2 * l]! + b * this.draw[0]!;
        this.state[2 * l + 1] = a * this.state[2 * l + 1]! + b * this.draw[1]!;
      }
    }
    this.position++;
  }

  fill(out: Float64Array, first: number, count: number): void {
    checkOut('GaussMarkovGains.fill()', out, count, this.pathCount);
    if (first < this.position) this.position = 0; // replay the cheap recursion from step 0
    while (this.position < first) this.step();
    const L = this.pathCount;
    for (let s = 0; s < count; s++) {
      this.step();
      for (let l = 0; l < L; l++) {
        const a = Math.sqrt(this.paths[l]!.power);
        out[2 * (s * L + l)] = a * this.state[2 * l]!;
        out[2 * (s * L + l) + 1] = a * this.state[2 * l + 1]!;
      }
    }
  }
}

function checkOut(fn: string, out: Float64Array, count: number, paths: number): void {
  if (!Number.isInteger(count) || count < 0) throw new RangeError(`${fn}: count must be an integer >= 0, got ${count}`);
  if (out.length < 2 * count * paths) throw new RangeError(`${fn}: out needs ${2 * count * paths} values, got ${out.length}`);
}
