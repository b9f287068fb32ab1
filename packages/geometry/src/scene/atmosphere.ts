/**
 * Atmospheric gas absorption, optional: a specific attenuation gamma in dB/km given by the user
 * (`gasAttenuationDbPerKm`), applied over a path's unfolded length: loss = gamma d / 1000 dB.
 *
 * Not provided, and why: ITU-R P.676 Annex 1 (line-by-line) needs the Recommendation's full
 * spectroscopic line tables for oxygen and water vapour, which this project does not hold; the
 * Annex 2 approximation is not implemented because its fitted coefficients are not available
 * here to check, and coefficients are not invented. Take gamma from P.676 for your conditions
 * (for example about 14.8 dB/km at 60 GHz and 0.10 dB/km at 28 GHz at sea level, 7.5 g/m^3,
 * per the Recommendation's own validation examples) and pass it in.
 */

/**
 * Field amplitude factor 10^(-gamma d / 20000) of gas absorption over `lengthM` metres.
 * @example gasAmplitudeFactor(1000, 20) // 0.1 (20 dB over 1 km)
 */
export function gasAmplitudeFactor(lengthM: number, gasAttenuationDbPerKm: number): number {
  if (!Number.isFinite(gasAttenuationDbPerKm) || gasAttenuationDbPerKm < 0) {
    throw new RangeError(`gasAmplitudeFactor(): gasAttenuationDbPerKm must be a finite number >= 0, got ${gasAttenuationDbPerKm}`);
  }
  if (!(lengthM >= 0)) throw new RangeError(`gasAmplitudeFactor(): lengthM must be >= 0, got ${lengthM}`);
  return 10 ** ((-gasAttenuationDbPerKm * lengthM) / 20000);
}
