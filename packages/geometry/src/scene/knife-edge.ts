/**
 * Single knife-edge diffraction loss of ITU-R P.526 (section 4.1):
 *   J(v) = 6.9 + 20 log10(sqrt((v - 0.1)^2 + 1) + v - 0.1) dB for v > -0.78, else 0,
 * with the Fresnel-Kirchhoff parameter v = h sqrt((2 / lambda) (1 / d1 + 1 / d2)), h the height
 * of the edge above the direct line (negative when the line clears the edge), d1 and d2 the
 * distances from the two ends to the edge along the line.
 */

/**
 * P.526 knife-edge loss J(v) in dB (about 6.03 dB at v = 0).
 * @example knifeEdgeLossDb(0) // 6.0329
 */
export function knifeEdgeLossDb(v: number): number {
  if (Number.isNaN(v)) throw new RangeError(`knifeEdgeLossDb(): v must be a number, got ${v}`);
  if (v <= -0.78) return 0;
  if (v === Infinity) return Infinity;
  const w = v - 0.1;
  return 6.9 + 20 * Math.log10(Math.sqrt(w * w + 1) + w);
}

/**
 * Fresnel-Kirchhoff diffraction parameter v = h sqrt((2 / lambda) (1 / d1 + 1 / d2)).
 * @example fresnelParameter(1, 100, 100, 0.01) // 2 (h = 1 m at mid-span of 200 m, lambda = 1 cm)
 */
export function fresnelParameter(heightM: number, d1M: number, d2M: number, wavelengthM: number): number {
  if (!(d1M > 0) || !(d2M > 0)) throw new RangeError(`fresnelParameter(): d1M and d2M must be > 0, got ${d1M} and ${d2M}`);
  if (!(wavelengthM > 0)) throw new RangeError(`fresnelParameter(): wavelengthM must be > 0, got ${wavelengthM}`);
  return heightM * Math.sqrt((2 / wavelengthM) * (1 / d1M + 1 / d2M));
}
