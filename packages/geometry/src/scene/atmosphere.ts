/**
 * Atmospheric gas absorption, optional: a specific attenuation gamma in dB/km given by the user
 * (`gasAttenuationDbPerKm`), applied over a path's unfolded length: loss = gamma d / 1000 dB.
 *
 * The specific attenuation comes from the user, or from ITU-R P.676-13 Annex 1 line by line
 * (p676.ts; scenario key scene.atmosphere), evaluated at the carrier. The Annex 2
 * approximation is not provided: it differs from Annex 1 by up to about 0.4 dB/km near 60 GHz.
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
