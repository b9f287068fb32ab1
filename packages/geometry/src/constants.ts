/**
 * Speed of light in vacuum, m/s (exact, SI definition of the metre).
 * @example SPEED_OF_LIGHT * 80e-9 // 23.98339664: metres travelled in 80 ns
 */
export const SPEED_OF_LIGHT = 299_792_458;

/**
 * Degrees to radians.
 * @example 180 * DEG // 3.141592653589793
 */
export const DEG = Math.PI / 180;

/**
 * Wavelength in metres at a frequency in hertz.
 * @example wavelength(28e9) // 0.010706873...
 */
export function wavelength(frequencyHz: number): number {
  return SPEED_OF_LIGHT / frequencyHz;
}

/**
 * Free-space wavenumber k0 = 2 pi f / c in rad/m.
 * @example wavenumber(SPEED_OF_LIGHT) // 6.283185307179586
 */
export function wavenumber(frequencyHz: number): number {
  return (2 * Math.PI * frequencyHz) / SPEED_OF_LIGHT;
}
