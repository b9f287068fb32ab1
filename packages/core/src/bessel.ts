/**
 * Bessel function of the first kind, order zero, to about 1e-15 absolute for all real x.
 * - |x| < 5: the power series (DLMF 10.2.2); terms stay below I0(5) ~ 27, so little is lost.
 * - 5 <= |x| < 25: Miller's backward recurrence J_(k-1) = (2k / x) J_k - J_(k+1), normalised by
 *   1 = J0 + 2 (J2 + J4 + ...) (DLMF 10.12.4 / 10.74(iv)).
 * - |x| >= 25: Hankel's asymptotic expansion (DLMF 10.17.3), truncated at its smallest term,
 *   which is below 1e-20 there.
 */

/**
 * J0(x).
 * @example besselJ0(1) // 0.7651976865579666
 * @example besselJ0(2.404825557695773) // ~0 (first zero)
 */
export function besselJ0(x: number): number {
  const ax = Math.abs(x);
  if (ax < 5) return seriesJ0(ax);
  if (ax < 25) return millerJ0(ax);
  return hankelJ0(ax);
}

function seriesJ0(x: number): number {
  const q = -(x * x) / 4;
  let term = 1;
  let sum = 1;
  for (let k = 1; k < 60; k++) {
    term *= q / (k * k);
    sum += term;
    if (Math.abs(term) < 1e-17 * Math.abs(sum)) break;
  }
  return sum;
}

function millerJ0(x: number): number {
  // Start well above x, where J_m(x) is negligible; the start value's size is irrelevant.
  const m = 2 * Math.ceil((1.3 * x + 36) / 2);
  let next = 0; // J_(k+1)
  let current = 1e-300; // J_k, arbitrary small start
  let norm = 0; // 2 * sum of even orders >= 2
  for (let k = m; k >= 1; k--) {
    const previous = ((2 * k) / x) * current - next; // J_(k-1)
    next = current;
    current = previous;
    if (Math.abs(current) > 1e250) {
      current *= 1e-250;
      next *= 1e-250;
      norm *= 1e-250;
    }
    if ((k - 1) % 2 === 0 && k - 1 > 0) norm += 2 * current;
  }
  return current / (current + norm);
}

function hankelJ0(x: number): number {
  // a_k(0) = prod_{j<=k} (-(2j - 1)^2) / (k! 8^k); P sums (-1)^k a_2k / x^2k, Q (-1)^k a_(2k+1) / x^(2k+1).
  let p = 0;
  let q = 0;
  let a = 1; // a_0
  let power = 1; // 1 / x^k
  let previous = Infinity;
  for (let k = 0; k < 80; k++) {
    const term = a * power;
    if (Math.abs(term) > previous) break; // the series is asymptotic: stop at its smallest term
    previous = Math.abs(term);
    const sign = (k >> 1) % 2 === 0 ? 1 : -1;
    if (k % 2 === 0) p += sign * term;
    else q += sign * term;
    if (previous < 1e-20) break;
    a *= -((2 * k + 1) * (2 * k + 1)) / ((k + 1) * 8);
    power /= x;
  }
  const chi = x - Math.PI / 4;
  return Math.sqrt(2 / (Math.PI * x)) * (p * Math.cos(chi) - q * Math.sin(chi));
}
