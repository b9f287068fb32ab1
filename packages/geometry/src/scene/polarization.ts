/**
 * Polarisation of terminals and its transfer along a path.
 *
 * A terminal's polarisation is a unit vector in its array's local frame: vertical = local +z,
 * horizontal = local +y, a slant angle s (degrees from vertical towards horizontal) gives
 * [0, sin s, cos s]. It is rotated to the global frame by the array's rotation R.
 *
 * Transmitted field: for a departure direction u the field vector is R p projected on the plane
 * perpendicular to u and normalised. When R p is (within 1e-9) parallel to u the projection
 * vanishes; pathweave then uses the array's boresight R [1, 0, 0], which is perpendicular to
 * R p and therefore to u (a real dipole has a null there; element patterns model nulls, this
 * module only fixes the field direction). The receive polarisation is treated alike with the
 * arrival direction.
 *
 * Complex field vectors are Float64Array(6): [re x, re y, re z, im x, im y, im z].
 *
 * Direction basis (the basis of the 2x2 polarimetric matrix `[[tt, tp], [pt, pp]]`): for a unit
 * direction u of azimuth phi and elevation theta (docs/conventions.md),
 *   theta_hat = du/dtheta = [-sin(theta) cos(phi), -sin(theta) sin(phi), cos(theta)]  (upward,
 *               the negative of the zenith-angle unit vector of physics texts),
 *   phi_hat   = [-sin(phi), cos(phi), 0],
 * with phi = 0 when u is vertical (as degFromVector). The transmit side uses the basis of the
 * departure direction, the receive side that of the arrival direction (pointing from the
 * receiver towards the last interaction). A horizontal line-of-sight path has the matrix
 * [[1, 0], [0, -1]].
 */
import { applyRotation, type Mat3 } from '../rotation.js';
import type { Vec3 } from '../vec3.js';
import { DEG } from '../constants.js';
import type { FresnelCoefficients } from './fresnel.js';

/**
 * A terminal's polarisation: a name, or a slant angle in degrees from vertical towards horizontal.
 * @example const choices: Polarization[] = ['vertical', { slantDeg: 45 }];
 */
export type Polarization = 'vertical' | 'horizontal' | { slantDeg: number };

/**
 * The polarisation as a unit vector in the array's local frame.
 * @example polarizationVectorLocal({ slantDeg: 90 }) // [0, 1, 6.1e-17]
 */
export function polarizationVectorLocal(p: Polarization = 'vertical'): Vec3 {
  if (p === 'vertical') return [0, 0, 1];
  if (p === 'horizontal') return [0, 1, 0];
  if (typeof p === 'object' && p !== null && Number.isFinite(p.slantDeg)) {
    const s = p.slantDeg * DEG;
    return [0, Math.sin(s), Math.cos(s)];
  }
  throw new TypeError(`polarizationVectorLocal(): polarization must be "vertical", "horizontal" or { slantDeg: finite number }, got ${JSON.stringify(p)}`);
}

const BORESIGHT: Readonly<Vec3> = [1, 0, 0];

/**
 * The field direction radiated (or received) along unit direction u: R p projected perpendicular
 * to u and normalised, with the boresight fallback described in the module comment.
 * @example terminalFieldVector([0, 0, 0], [0, 0, 1], identity(), [1, 0, 0]) // [0, 0, 1]
 */
export function terminalFieldVector(out: Vec3, polLocal: Readonly<Vec3>, rotation: Mat3, u: Readonly<Vec3>): Vec3 {
  applyRotation(out, rotation, polLocal);
  const c = out[0] * u[0] + out[1] * u[1] + out[2] * u[2];
  let x = out[0] - c * u[0],
    y = out[1] - c * u[1],
    z = out[2] - c * u[2];
  let n = Math.hypot(x, y, z);
  if (n < 1e-9) {
    applyRotation(out, rotation, BORESIGHT);
    x = out[0];
    y = out[1];
    z = out[2];
    n = Math.hypot(x, y, z);
  }
  out[0] = x / n;
  out[1] = y / n;
  out[2] = z / n;
  return out;
}

/**
 * The (theta_hat, phi_hat) basis of a unit direction, written as [tx, ty, tz, px, py, pz].
 * @example directionBasis(new Float64Array(6), [1, 0, 0]) // [0, 0, 1, 0, 1, 0]
 */
export function directionBasis(out: Float64Array, u: Readonly<Vec3>): Float64Array {
  const h = Math.hypot(u[0], u[1]);
  let cp = 1,
    sp = 0;
  if (h > 0) {
    cp = u[0] / h;
    sp = u[1] / h;
  }
  const st = u[2],
    ct = h;
  out[0] = -st * cp;
  out[1] = -st * sp;
  out[2] = ct;
  out[3] = -sp;
  out[4] = cp;
  out[5] = 0;
  return out;
}

/**
 * Reflect a complex field vector `e` (Float64Array(6)) travelling along unit kIn off a surface of
 * unit normal n into direction kOut, with the TE/TM convention of fresnel.ts; writes `out`
 * (may alias `e`). At normal incidence (k_in x n = 0) any s perpendicular to n gives the same result.
 * @example reflectField(new Float64Array(6), Float64Array.of(1, 0, 0, 0, 0, 0), [0, 0, -1], [0, 0, 1], [0, 0, 1], fresnel([4, 0], 0))
 * // [-0.3333, 0, 0, 0, 0, 0]: normal incidence on eta = 4
 */
export function reflectField(
  out: Float64Array,
  e: Float64Array,
  kIn: Readonly<Vec3>,
  kOut: Readonly<Vec3>,
  n: Readonly<Vec3>,
  c: FresnelCoefficients,
): Float64Array {
  // s = normalize(kIn x n)
  let sx = kIn[1] * n[2] - kIn[2] * n[1];
  let sy = kIn[2] * n[0] - kIn[0] * n[2];
  let sz = kIn[0] * n[1] - kIn[1] * n[0];
  let sn = Math.hypot(sx, sy, sz);
  if (sn < 1e-12) {
    // normal incidence: any unit vector perpendicular to n
    if (Math.abs(n[0]) < 0.9) {
      sx = 0;
      sy = n[2];
      sz = -n[1];
    } else {
      sx = -n[2];
      sy = 0;
      sz = n[0];
    }
    sn = Math.hypot(sx, sy, sz);
  }
  sx /= sn;
  sy /= sn;
  sz /= sn;
  // p_i = kIn x s, p_r = kOut x s
  const pix = kIn[1] * sz - kIn[2] * sy,
    piy = kIn[2] * sx - kIn[0] * sz,
    piz = kIn[0] * sy - kIn[1] * sx;
  const prx = kOut[1] * sz - kOut[2] * sy,
    pry = kOut[2] * sx - kOut[0] * sz,
    prz = kOut[0] * sy - kOut[1] * sx;
  const esRe = e[0]! * sx + e[1]! * sy + e[2]! * sz,
    esIm = e[3]! * sx + e[4]! * sy + e[5]! * sz;
  const epRe = e[0]! * pix + e[1]! * piy + e[2]! * piz,
    epIm = e[3]! * pix + e[4]! * piy + e[5]! * piz;
  const [teRe, teIm] = c.te,
    [tmRe, tmIm] = c.tm;
  const aRe = teRe * esRe - teIm * esIm,
    aIm = teRe * esIm + teIm * esRe; // Gamma_TE (E . s)
  const bRe = tmRe * epRe - tmIm * epIm,
    bIm = tmRe * epIm + tmIm * epRe; // Gamma_TM (E . p_i)
  out[0] = aRe * sx + bRe * prx;
  out[1] = aRe * sy + bRe * pry;
  out[2] = aRe * sz + bRe * prz;
  out[3] = aIm * sx + bIm * prx;
  out[4] = aIm * sy + bIm * pry;
  out[5] = aIm * sz + bIm * prz;
  return out;
}

/**
 * Project a complex field vector on the plane perpendicular to unit k (no renormalisation):
 * the re-radiation of a small induced dipole, used for point scatterers.
 * @example projectFieldPerpendicular(new Float64Array(6), Float64Array.of(0, 0, 1, 0, 0, 0), [Math.SQRT1_2, 0, Math.SQRT1_2]) // [-0.5, 0, 0.5, 0, 0, 0]
 */
export function projectFieldPerpendicular(out: Float64Array, e: Float64Array, k: Readonly<Vec3>): Float64Array {
  const cRe = e[0]! * k[0] + e[1]! * k[1] + e[2]! * k[2];
  const cIm = e[3]! * k[0] + e[4]! * k[1] + e[5]! * k[2];
  out[0] = e[0]! - cRe * k[0];
  out[1] = e[1]! - cRe * k[1];
  out[2] = e[2]! - cRe * k[2];
  out[3] = e[3]! - cIm * k[0];
  out[4] = e[4]! - cIm * k[1];
  out[5] = e[5]! - cIm * k[2];
  return out;
}
