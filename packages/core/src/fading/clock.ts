/**
 * Step clocks and the path description shared by the fading models of this folder.
 *
 * A gain process fills steps s = first .. first + count - 1 (GainProcess.fill of gains.ts). A
 * StepClock says when step s happens: uniformly every `stepS` seconds (one step per subframe, or
 * per symbol of a uniform `timing.symbolsPerSubframe`), or at the true, uneven OFDM symbol times
 * of an NR numerology (step s = symbol s mod N of subframe floor(s / N)). Continuous-time models
 * (sum-of-sinusoids, geometric) evaluate at `timeS(s)`; the discrete AR recursion steps by the
 * nominal `stepS`.
 */
import type { GainPath } from '../gains.js';
import { nrNominalSymbolStepS, nrSymbolTimesS, NR_SUBFRAME_S, type NrNumerology, type SymbolReference } from './numerology.js';

/**
 * When each step of a gain process happens.
 * @example const everyHalfMs: StepClock = { stepS: 5e-4, timeS: (step) => step * 5e-4 };
 */
export interface StepClock {
  /** Nominal uniform step, seconds (the step of discrete recursions). */
  readonly stepS: number;
  /** True time of step `step` (an integer >= 0), seconds from the start of the run. */
  timeS(step: number): number;
}

/**
 * Steps every `stepS` seconds: t = step * stepS.
 * @example uniformClock(1e-3).timeS(3) // 0.003
 */
export function uniformClock(stepS: number): StepClock {
  if (!(stepS > 0) || !Number.isFinite(stepS)) throw new RangeError(`uniformClock(): stepS must be a finite number > 0, got ${stepS}`);
  return { stepS, timeS: (step: number) => step * stepS };
}

/**
 * One step per OFDM symbol of an NR numerology at its true times:
 * t = floor(s / N) * subframeS + t_l, l = s mod N, t_l from nrSymbolTimesS.
 * `subframeS` is 1 ms in NR; a longer one leaves a gap after each subframe's symbols.
 * @example numerologyClock(nrNumerology(0)).timeS(15) // 1e-3 + 7.1875e-5
 */
export function numerologyClock(numerology: NrNumerology, reference: SymbolReference = 'start', subframeS = NR_SUBFRAME_S): StepClock {
  if (!(subframeS >= NR_SUBFRAME_S) || !Number.isFinite(subframeS)) {
    throw new RangeError(`numerologyClock(): subframeS must be >= 1e-3 s (the symbols of an NR subframe fill 1 ms), got ${subframeS}`);
  }
  const starts = nrSymbolTimesS(numerology, reference);
  const n = starts.length;
  return {
    stepS: nrNominalSymbolStepS(numerology),
    timeS: (step: number) => Math.floor(step / n) * subframeS + starts[step % n]!,
  };
}

/**
 * One path as the fading models of this folder see it: the GainPath fields except the
 * Gauss-Markov alpha, plus the Doppler figures the models need.
 * @example const walker: FadingPath = { id: 'los', power: 1, phaseRad: 0, dopplersHz: [280], dopplerHz: -120 };
 */
export interface FadingPath extends Pick<GainPath, 'id' | 'power' | 'phaseRad'> {
  /**
   * Maximum Doppler spreads of the moving ends, Hz: [] when nothing moves, [f_D] for one moving end
   * (isotropic scattering around it), [f_t, f_r] for both (isotropic scattering around each).
   * This is PathCorrelation.dopplersHz of doppler.ts.
   */
  dopplersHz: readonly number[];
  /** Signed geometric Doppler shift f_l of the path, Hz (geometric model); 0 when absent. */
  dopplerHz?: number | undefined;
}

/**
 * A gain process that can also be evaluated at arbitrary times (continuous-time models).
 * @example
 * const shift: ContinuousGainProcess = new GeometricGains([{ id: 'los', power: 4, phaseRad: 0, dopplersHz: [], dopplerHz: 250 }], 0, { clock: uniformClock(1e-3) });
 * const out = new Float64Array(2);
 * shift.fillAtTimes(out, [1e-3]);
 * out // Float64Array [1.2e-16, 2]: amplitude 2, turned by 2 pi 250 Hz * 1 ms
 */
export interface ContinuousGainProcess {
  readonly pathCount: number;
  /**
   * Write the gains at times `timesS[i]`, i = 0 .. timesS.length - 1, into `out`
   * ([timesS.length, L] complex interleaved). Each value depends on its time only.
   */
  fillAtTimes(out: Float64Array, timesS: ArrayLike<number>): void;
}

/**
 * Shared validation of a path list (programming errors).
 * @example checkFadingPaths('f()', [{ id: 'a', power: -1, phaseRad: 0, dopplersHz: [] }]) // throws RangeError "f(): path a: power must be a finite number >= 0, got -1"
 */
export function checkFadingPaths(fn: string, paths: readonly FadingPath[]): void {
  const seen = new Set<string>();
  for (const p of paths) {
    if (typeof p.id !== 'string') throw new TypeError(`${fn}: path id must be a string, got ${typeof p.id}`);
    if (seen.has(p.id)) throw new RangeError(`${fn}: path ids must be unique (they key the random streams), got "${p.id}" twice`);
    seen.add(p.id);
    if (!(p.power >= 0) || !Number.isFinite(p.power)) throw new RangeError(`${fn}: path ${p.id}: power must be a finite number >= 0, got ${p.power}`);
    if (!Array.isArray(p.dopplersHz) || p.dopplersHz.length > 2) {
      throw new RangeError(`${fn}: path ${p.id}: dopplersHz must hold 0, 1 or 2 spreads, got ${JSON.stringify(p.dopplersHz)}`);
    }
    for (const f of p.dopplersHz) {
      if (!(f >= 0) || !Number.isFinite(f)) throw new RangeError(`${fn}: path ${p.id}: Doppler spreads must be finite and >= 0 Hz, got ${f}`);
    }
    if (p.dopplerHz !== undefined && !Number.isFinite(p.dopplerHz)) throw new RangeError(`${fn}: path ${p.id}: dopplerHz must be finite, got ${p.dopplerHz}`);
  }
}

/**
 * Shared check of an output array for `count` steps of `paths` paths.
 * @example checkGainOut('f()', new Float64Array(4), 0, 3, 1) // throws RangeError "f(): out needs 6 values, got 4"
 */
export function checkGainOut(fn: string, out: Float64Array, first: number, count: number, paths: number): void {
  if (!Number.isInteger(first) || first < 0) throw new RangeError(`${fn}: first must be an integer >= 0, got ${first}`);
  if (!Number.isInteger(count) || count < 0) throw new RangeError(`${fn}: count must be an integer >= 0, got ${count}`);
  if (out.length < 2 * count * paths) throw new RangeError(`${fn}: out needs ${2 * count * paths} values, got ${out.length}`);
}
