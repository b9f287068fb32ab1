/**
 * Band-limiting pulses p(t) for the tap-delay channel, with t in units of the sample period T
 * (x = t / T). Both are 1 at x = 0 and 0 at the other integers (Nyquist pulses).
 */

/**
 * Pulse shapes offered for the tap-delay output.
 * @example const pulse: PulseShape = 'raised-cosine';
 */
export type PulseShape = 'sinc' | 'raised-cosine';

/**
 * Normalised sinc, sin(pi x) / (pi x).
 * @example sincPulse(0) // 1
 * @example sincPulse(0.5) // 0.6366197723675814 (2 / pi)
 */
export function sincPulse(x: number): number {
  if (x === 0) return 1;
  const px = Math.PI * x;
  return Math.sin(px) / px;
}

/**
 * Raised-cosine pulse of roll-off beta in [0, 1]:
 * sinc(x) cos(pi beta x) / (1 - (2 beta x)^2), with its limit (pi / 4) sinc(1 / (2 beta)) at
 * |x| = 1 / (2 beta).
 * @example raisedCosinePulse(0, 0.25) // 1
 */
export function raisedCosinePulse(x: number, rollOff: number): number {
  if (rollOff === 0) return sincPulse(x);
  const d = 2 * rollOff * x;
  const denominator = 1 - d * d;
  if (Math.abs(denominator) < 1e-10) return (Math.PI / 4) * sincPulse(1 / (2 * rollOff));
  return (sincPulse(x) * Math.cos(Math.PI * rollOff * x)) / denominator;
}

/**
 * The pulse as a function of x = t / T.
 * @example pulseFunction('raised-cosine', 0.25)(0.5) // 0.6274
 */
export function pulseFunction(shape: PulseShape, rollOff = 0): (x: number) => number {
  if (shape === 'sinc') return sincPulse;
  if (!(rollOff >= 0 && rollOff <= 1)) throw new RangeError(`pulseFunction(): rollOff must lie in [0, 1], got ${rollOff}`);
  return (x) => raisedCosinePulse(x, rollOff);
}
