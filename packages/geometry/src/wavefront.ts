/**
 * Which wavefront an array's response assumes, and the responses that follow from the choice
 * (docs/conventions.md, "Array response"). Plane: r_n = g exp(+j k0 dot(u, p_n)) (array.ts).
 * Spherical: the source (or sink) sits at lengthM along u, r_n = g exp(-j k0 (|q - p_n| - |q|)).
 * "auto" is spherical when the path is shorter than the Fraunhofer distance 2 D^2 / lambda
 * (D the array's aperture, lambda at the carrier), plane beyond it.
 * Responses: [N] complex, interleaved re/im; element products [Nr, Nt] complex, row-major.
 */
import type { AntennaArray } from './array.js';
import { wavelength } from './constants.js';
import type { Vec3 } from './vec3.js';

/**
 * How an array's response treats the wavefront: plane, spherical, or spherical when 2 D^2 / lambda exceeds the path length.
 * @example const nearField: Wavefront = 'auto'; // spherical only inside the Fraunhofer distance
 */
export type Wavefront = 'plane' | 'spherical' | 'auto';

/**
 * The Fraunhofer distance 2 D^2 / lambda of an array at a carrier, metres (D its aperture).
 * @example fraunhoferDistanceM(AntennaArray.ula(64, 0.005), 30e9) // 19.859: D = 63 x 5 mm = 0.315 m, lambda = 9.993 mm
 */
export function fraunhoferDistanceM(array: AntennaArray, carrierHz: number): number {
  const D = array.aperture();
  return (2 * D * D) / wavelength(carrierHz);
}

/**
 * Whether the response of `array` for a path of unfolded length `lengthM` is spherical:
 * always for "spherical", never for "plane" (the default), inside the Fraunhofer distance for "auto".
 * @example
 * const big = AntennaArray.ula(64, 0.005); // Fraunhofer distance 19.859 m at 30 GHz
 * [usesSphericalWavefront(big, 'auto', 10, 30e9), usesSphericalWavefront(big, 'auto', 40, 30e9), usesSphericalWavefront(big, undefined, 10, 30e9)] // [true, false, false]
 */
export function usesSphericalWavefront(array: AntennaArray, wavefront: Wavefront | undefined, lengthM: number, carrierHz: number): boolean {
  if (wavefront === 'spherical') return true;
  if (wavefront !== 'auto') return false;
  return fraunhoferDistanceM(array, carrierHz) > lengthM;
}

/**
 * The array's response towards the global unit direction u of a path of unfolded length
 * `lengthM`: spherical (the far end at lengthM along u) when the wavefront choice says so and
 * the length is positive, else the plane-wave response. k0 is the wavenumber of the response
 * (per subcarrier with beam squint); the choice always uses the carrier. Writes 2 N values.
 * @example
 * const out = new Float64Array(4);
 * waveResponse(out, AntennaArray.ula(2, 0.5), 'spherical', [1, 0, 0], 1, 4 * Math.PI, 1e9) // Float64Array [0.9261, -0.3772, 0.9261, -0.3772]: phase -4 pi (sqrt(1 + 0.25^2) - 1) = -0.3867 rad at both elements (plane: [1, 0, 1, 0])
 */
export function waveResponse(
  out: Float64Array,
  array: AntennaArray,
  wavefront: Wavefront | undefined,
  u: Readonly<Vec3>,
  lengthM: number,
  k0: number,
  carrierHz: number,
): Float64Array {
  if (usesSphericalWavefront(array, wavefront, lengthM, carrierHz) && lengthM > 0)
    return array.sphericalResponse(out, [u[0] * lengthM, u[1] * lengthM, u[2] * lengthM], k0);
  return array.response(out, u, k0);
}

/**
 * Element products of a line of sight with both arrays in each other's near field: every element
 * pair's exact distance, out[offset + 2 (m Nt + n)] = g exp(-j k0 (|q_m - p_n| - d)) with q, p the
 * element positions, d = lengthM the reference distance and g the two element amplitudes along
 * the line. `arrival` is the global unit vector from the receiver towards the transmitter.
 * @example
 * const rx = AntennaArray.ula(2, 0.5), tx = AntennaArray.ula(1, 0);
 * const out = new Float64Array(4);
 * nearFieldLineOfSightProducts(out, 0, rx, tx, [1, 0, 0], 1, 4 * Math.PI);
 * out // Float64Array [0.9261, -0.3772, 0.9261, -0.3772]: each receive element sqrt(1 + 0.25^2) m from the transmitter, phase -4 pi (1.0308 - 1)
 */
export function nearFieldLineOfSightProducts(
  out: Float64Array,
  offset: number,
  rx: AntennaArray,
  tx: AntennaArray,
  arrival: Readonly<Vec3>,
  lengthM: number,
  k0: number,
): Float64Array {
  // The transmitter's reference point seen from the receiver's: lengthM along the arrival direction.
  const tx0x = arrival[0] * lengthM,
    tx0y = arrival[1] * lengthM,
    tx0z = arrival[2] * lengthM;
  const g = rx.elementAmplitude(arrival) * tx.elementAmplitude([-arrival[0], -arrival[1], -arrival[2]]);
  const q = rx.globalOffsets,
    p = tx.globalOffsets;
  for (let m = 0; m < rx.size; m++) {
    for (let n = 0; n < tx.size; n++) {
      const d = Math.hypot(tx0x + p[3 * n]! - q[3 * m]!, tx0y + p[3 * n + 1]! - q[3 * m + 1]!, tx0z + p[3 * n + 2]! - q[3 * m + 2]!);
      const phase = -k0 * (d - lengthM);
      const i = offset + 2 * (m * tx.size + n);
      out[i] = g * Math.cos(phase);
      out[i + 1] = g * Math.sin(phase);
    }
  }
  return out;
}
