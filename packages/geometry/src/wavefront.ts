/**
 * Which wavefront a path's array responses assume, and the responses that follow from the choice
 * (docs/conventions.md, "Array response"). Plane: r_n = g exp(+j k0 dot(u, p_n)) (array.ts).
 * Spherical at one end: the wave's centre of curvature sits at range R along u,
 * r_n = g (R / |q - p_n|) exp(-j k0 (|q - p_n| - R)), q = R u. Spherical at both ends of a
 * specular path (a line of sight, reflections, transmissions): every element pair's own distance
 * d_mn between receive element m and the image of transmit element n,
 * e_mn = g (d / d_mn) exp(-j k0 (d_mn - d)), the free-space field exp(-j k d) / d of each pair
 * divided by that of the reference points (which the path's amplitude already holds).
 * "auto" decides per link from both apertures: spherical when the range is shorter than
 * 2 (D_a + D_b)^2 / lambda (see linkFraunhoferDistanceM for the phase-error bound behind it).
 * Responses: [N] complex, interleaved re/im; element products [Nr, Nt] complex, row-major.
 */
import type { AntennaArray } from './array.js';
import { wavelength } from './constants.js';
import type { Vec3 } from './vec3.js';

/**
 * How an array's response treats the wavefront: plane, spherical, or spherical inside the link's Fraunhofer distance.
 * @example const nearField: Wavefront = 'auto'; // spherical only inside 2 (D_rx + D_tx)^2 / lambda
 */
export type Wavefront = 'plane' | 'spherical' | 'auto';

/**
 * The Fraunhofer distance 2 D^2 / lambda of a single array at a carrier, metres (D its aperture):
 * the link distance of the array facing a point (a scatterer, an edge, a one-element array).
 * @example fraunhoferDistanceM(AntennaArray.ula(64, 0.005), 30e9) // 19.859: D = 63 x 5 mm = 0.315 m, lambda = 9.993 mm
 */
export function fraunhoferDistanceM(array: AntennaArray, carrierHz: number): number {
  return linkFraunhoferDistanceM(array.aperture(), 0, carrierHz);
}

/**
 * The Fraunhofer distance of a link between two apertures, 2 (D_a + D_b)^2 / lambda, metres: the
 * form common in the near-field MIMO literature. Why: the exact pair distance
 * d_mn = |d u + p_n - q_m| exceeds its plane-wave (first-order) value by about
 * |(p_n - q_m) across u|^2 / (2 d), at most ((D_a + D_b) / 2)^2 / (2 d) with both reference
 * points inside the apertures, so the phase error of plane responses at both ends is at most
 * k0 (D_a + D_b)^2 / (8 d): pi / 8 (22.5 degrees) at this distance, the same criterion as the
 * single-aperture 2 D^2 / lambda (D_b = 0).
 * @example linkFraunhoferDistanceM(0.315, 0.015, 30e9) // 21.795: 2 x 0.33^2 / 9.993 mm (64 and 4 elements at 5 mm)
 */
export function linkFraunhoferDistanceM(apertureAM: number, apertureBM: number, carrierHz: number): number {
  const D = apertureAM + apertureBM;
  return (2 * D * D) / wavelength(carrierHz);
}

/**
 * Whether an end whose wavefront choice is `wavefront` uses the spherical response for a wave
 * whose centre of curvature is `rangeM` away, with `fraunhoferM` the link's Fraunhofer distance
 * (linkFraunhoferDistanceM): always for "spherical", never for "plane" (the default), strictly
 * inside the distance for "auto".
 * @example
 * const big = linkFraunhoferDistanceM(0.315, 0, 30e9); // 19.859 m
 * [usesSphericalWavefront('auto', 10, big), usesSphericalWavefront('auto', 40, big), usesSphericalWavefront(undefined, 10, big)] // [true, false, false]
 */
export function usesSphericalWavefront(wavefront: Wavefront | undefined, rangeM: number, fraunhoferM: number): boolean {
  if (wavefront === 'spherical') return true;
  if (wavefront !== 'auto') return false;
  return fraunhoferM > rangeM;
}

/**
 * The array's response towards the global unit direction u: spherical about the point rangeM
 * along u (each element's own distance in amplitude and phase, AntennaArray.sphericalResponse)
 * when `spherical` is set and the range is positive, else the plane-wave response. k0 is the
 * wavenumber of the response (per subcarrier with beam squint). Writes 2 N values.
 * @example
 * const out = new Float64Array(4);
 * waveResponse(out, AntennaArray.ula(2, 0.5), true, [1, 0, 0], 1, 4 * Math.PI) // Float64Array [0.8985, -0.3659, 0.8985, -0.3659]: 1 / 1.0308 at phase -4 pi (sqrt(1 + 0.25^2) - 1) = -0.3867 rad at both elements (plane: [1, 0, 1, 0])
 */
export function waveResponse(out: Float64Array, array: AntennaArray, spherical: boolean, u: Readonly<Vec3>, rangeM: number, k0: number): Float64Array {
  if (spherical && rangeM > 0) return array.sphericalResponse(out, [u[0] * rangeM, u[1] * rangeM, u[2] * rangeM], k0);
  return array.response(out, u, k0);
}

/**
 * Element products of a specular path (line of sight, reflections, transmissions) with both ends
 * spherical: out[offset + 2 (m Nt + n)] = g (d / d_mn) exp(-j k0 (d_mn - d)), d = lengthM the
 * unfolded length between the reference points, d_mn = |d a + M p_n - q_m| the distance from
 * receive element m to the image of transmit element n (q, p the global element offsets, a the
 * global unit arrival vector from the receiver towards the transmitter's image, M the image map
 * of specularImageMap, 9 values row-major at image[imageOffset..]: the identity for a line of
 * sight), g the element amplitudes along the arrival and the departure.
 * @example
 * const rx = AntennaArray.ula(2, 0.5), tx = AntennaArray.ula(1, 0);
 * const out = new Float64Array(4);
 * elementPairProducts(out, 0, rx, tx, [1, 0, 0], [-1, 0, 0], 1, 4 * Math.PI, Float64Array.of(1, 0, 0, 0, 1, 0, 0, 0, 1), 0);
 * out // Float64Array [0.8985, -0.3659, 0.8985, -0.3659]: each receive element sqrt(1 + 0.25^2) = 1.0308 m from the transmitter: amplitude 1 / 1.0308, phase -4 pi (1.0308 - 1)
 */
export function elementPairProducts(
  out: Float64Array,
  offset: number,
  rx: AntennaArray,
  tx: AntennaArray,
  arrival: Readonly<Vec3>,
  departure: Readonly<Vec3>,
  lengthM: number,
  k0: number,
  image: Float64Array,
  imageOffset: number,
): Float64Array {
  // The image of the transmitter's reference point seen from the receiver's: lengthM along the arrival.
  const tx0x = arrival[0] * lengthM,
    tx0y = arrival[1] * lengthM,
    tx0z = arrival[2] * lengthM;
  const g = rx.elementAmplitude(arrival) * tx.elementAmplitude(departure);
  const M = image,
    o = imageOffset;
  const q = rx.globalOffsets,
    p = tx.globalOffsets;
  for (let n = 0; n < tx.size; n++) {
    const px = p[3 * n]!,
      py = p[3 * n + 1]!,
      pz = p[3 * n + 2]!;
    const ix = tx0x + M[o]! * px + M[o + 1]! * py + M[o + 2]! * pz,
      iy = tx0y + M[o + 3]! * px + M[o + 4]! * py + M[o + 5]! * pz,
      iz = tx0z + M[o + 6]! * px + M[o + 7]! * py + M[o + 8]! * pz;
    for (let m = 0; m < rx.size; m++) {
      const d = Math.hypot(ix - q[3 * m]!, iy - q[3 * m + 1]!, iz - q[3 * m + 2]!);
      const phase = -k0 * (d - lengthM);
      const a = (g * lengthM) / d;
      const i = offset + 2 * (m * tx.size + n);
      out[i] = a * Math.cos(phase);
      out[i + 1] = a * Math.sin(phase);
    }
  }
  return out;
}

/**
 * What a path's wavefront needs from its geometry: the interactions in order from the
 * transmitter (type and point, as a traced path holds them).
 * @example const hop: WavefrontPath = { interactions: [{ type: 'reflection', point: [5, 5, 0] }] };
 */
export interface WavefrontPath {
  readonly interactions: readonly { readonly type: 'reflection' | 'scatter' | 'diffraction' | 'transmission' | 'diffuse'; readonly point: Readonly<Vec3> }[];
}

/** Whether an interaction sends out a new wave (a scatterer, an edge or a diffuse tile) rather than an image of the incoming one. */
function restartsWave(type: WavefrontPath['interactions'][number]['type']): boolean {
  return type === 'scatter' || type === 'diffraction' || type === 'diffuse';
}

/**
 * The image map of a path into out[offset..] (9 values, row-major 3x3): the orthogonal map taking
 * a transmit element's offset from its array's reference point to the offset of its image (the
 * product of the mirror maps I - 2 n n^T of the reflections, the first one applied first; a
 * transmission is a straight pass and maps nothing). Returns false, writing nothing, for a path
 * with a scatterer, an edge or a diffuse tile: the wave leaving those is a new one, no image of the transmitter.
 * The normal of each reflection is found from the path itself (the difference of the unit
 * directions in and out), so the map holds for the path's geometry at the time it was traced.
 * @example
 * const out = new Float64Array(9);
 * specularImageMap(out, 0, { interactions: [{ type: 'reflection', point: [5, 5, 0] }] }, [0, 0, 0], [10, 0, 0]);
 * out // Float64Array [1, 0, 0, 0, -1, 0, 0, 0, 1]: the wall y = 5 mirrors y
 */
export function specularImageMap(out: Float64Array, offset: number, path: WavefrontPath, txPosition: Readonly<Vec3>, rxPosition: Readonly<Vec3>): boolean {
  const its = path.interactions;
  for (const it of its) if (restartsWave(it.type)) return false;
  // M starts as the identity; each reflection multiplies from the left: M <- (I - 2 n n^T) M.
  let m00 = 1,
    m01 = 0,
    m02 = 0,
    m10 = 0,
    m11 = 1,
    m12 = 0,
    m20 = 0,
    m21 = 0,
    m22 = 1;
  for (let i = 0; i < its.length; i++) {
    if (its[i]!.type !== 'reflection') continue;
    const a = i === 0 ? txPosition : its[i - 1]!.point;
    const b = its[i]!.point;
    const c = i + 1 < its.length ? its[i + 1]!.point : rxPosition;
    const la = Math.hypot(b[0] - a[0], b[1] - a[1], b[2] - a[2]);
    const lc = Math.hypot(c[0] - b[0], c[1] - b[1], c[2] - b[2]);
    // Specular: out = in - 2 (in . n) n, so n is along in - out.
    let nx = (b[0] - a[0]) / la - (c[0] - b[0]) / lc,
      ny = (b[1] - a[1]) / la - (c[1] - b[1]) / lc,
      nz = (b[2] - a[2]) / la - (c[2] - b[2]) / lc;
    const ln = Math.hypot(nx, ny, nz);
    if (!(ln > 0)) continue; // grazing: in = out, the mirror leaves the path's direction alone
    nx /= ln;
    ny /= ln;
    nz /= ln;
    const c0 = nx * m00 + ny * m10 + nz * m20,
      c1 = nx * m01 + ny * m11 + nz * m21,
      c2 = nx * m02 + ny * m12 + nz * m22;
    m00 -= 2 * nx * c0;
    m01 -= 2 * nx * c1;
    m02 -= 2 * nx * c2;
    m10 -= 2 * ny * c0;
    m11 -= 2 * ny * c1;
    m12 -= 2 * ny * c2;
    m20 -= 2 * nz * c0;
    m21 -= 2 * nz * c1;
    m22 -= 2 * nz * c2;
  }
  out[offset] = m00;
  out[offset + 1] = m01;
  out[offset + 2] = m02;
  out[offset + 3] = m10;
  out[offset + 4] = m11;
  out[offset + 5] = m12;
  out[offset + 6] = m20;
  out[offset + 7] = m21;
  out[offset + 8] = m22;
  return true;
}

/**
 * The ranges of a path's wavefront at its two ends, metres, into out[offset] (departure side) and
 * out[offset + 1] (arrival side): how far along the path, from each terminal, the wave's centre
 * of curvature lies. Specular interactions keep the image, so the range runs to the nearest
 * scatterer or edge along the path, else the unfolded length (`lengthM`). An edge is treated as a
 * point source (its curvature along the edge, s + s', is not modelled).
 * @example wavefrontRangesM(new Float64Array(2), 0, { interactions: [{ type: 'scatter', point: [3, 4, 0] }] }, [0, 0, 0], [6, 0, 0], 10) // Float64Array [5, 5]
 */
export function wavefrontRangesM(
  out: Float64Array,
  offset: number,
  path: WavefrontPath,
  txPosition: Readonly<Vec3>,
  rxPosition: Readonly<Vec3>,
  lengthM: number,
): Float64Array {
  const its = path.interactions;
  let first = -1,
    last = -1;
  for (let i = 0; i < its.length; i++) {
    const t = its[i]!.type;
    if (restartsWave(t)) {
      if (first < 0) first = i;
      last = i;
    }
  }
  if (first < 0) {
    out[offset] = lengthM;
    out[offset + 1] = lengthM;
    return out;
  }
  let dep = 0;
  for (let i = 0; i <= first; i++) dep += distance(i === 0 ? txPosition : its[i - 1]!.point, its[i]!.point);
  let arr = distance(its[its.length - 1]!.point, rxPosition);
  for (let i = its.length - 1; i > last; i--) arr += distance(its[i - 1]!.point, its[i]!.point);
  out[offset] = dep;
  out[offset + 1] = arr;
  return out;
}

function distance(a: Readonly<Vec3>, b: Readonly<Vec3>): number {
  return Math.hypot(b[0] - a[0], b[1] - a[1], b[2] - a[2]);
}
