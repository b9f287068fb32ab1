/**
 * Complex scalars as [re, im] tuples, for the scene model's coefficients (not for tensors, which
 * are interleaved typed arrays owned by core). Functions return new tuples: these run once per
 * path or per bounce, never per sample.
 */

/**
 * A complex number [re, im].
 * @example const j: Complex = [0, 1]; // the imaginary unit
 */
export type Complex = [number, number];

/** a * b. @example cmul([0, 1], [0, 1]) // [-1, 0] */
export function cmul(a: Readonly<Complex>, b: Readonly<Complex>): Complex {
  return [a[0] * b[0] - a[1] * b[1], a[0] * b[1] + a[1] * b[0]];
}

/** a / b. @example cdiv([1, 0], [0, 1]) // [0, -1] */
export function cdiv(a: Readonly<Complex>, b: Readonly<Complex>): Complex {
  const den = b[0] * b[0] + b[1] * b[1];
  return [(a[0] * b[0] + a[1] * b[1]) / den, (a[1] * b[0] - a[0] * b[1]) / den];
}

/** Principal square root (real part >= 0). @example csqrt([-4, 0]) // [0, 2] */
export function csqrt(a: Readonly<Complex>): Complex {
  const r = Math.hypot(a[0], a[1]);
  if (r === 0) return [0, 0];
  const re = Math.sqrt((r + a[0]) / 2);
  const im = Math.sqrt(Math.max(0, (r - a[0]) / 2));
  return [re, a[1] < 0 ? -im : im];
}

/** |a|. @example cabs([3, 4]) // 5 */
export function cabs(a: Readonly<Complex>): number {
  return Math.hypot(a[0], a[1]);
}

/** exp(j phase). @example cexpj(Math.PI) // [-1, 1.2e-16] */
export function cexpj(phaseRad: number): Complex {
  return [Math.cos(phaseRad), Math.sin(phaseRad)];
}
