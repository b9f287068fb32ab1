/**
 * Transmission through a wall of finite thickness: the single-layer slab of ITU-R P.2040 (the
 * multiple reflections inside the slab summed in closed form), for a wave in air meeting a slab
 * of complex relative permittivity eta and thickness d at incidence angle t from the normal:
 *
 *   q  = (2 pi d / lambda) sqrt(eta - sin^2 t),   q0 = (2 pi d / lambda) cos t,
 *   R  = R' (1 - exp(-2 j q)) / (1 - R'^2 exp(-2 j q)),
 *   T  = (1 - R'^2) exp(-j (q - q0)) / (1 - R'^2 exp(-2 j q)),
 *
 * R' the Fresnel coefficient of one air-slab interface (fresnel.ts, TE or TM). The phase of T is
 * referred to the straight path through the slab in air (q0), which the tracer already counts in
 * the path's length, so a slab of zero thickness transmits with T = 1. The transmitted wave leaves
 * parallel to the incident one (its lateral shift inside the slab is neglected); the field is
 * mapped as E_t = T_TE (E . s) s + T_TM (E . p) p in the basis of fresnel.ts (p the same for the
 * incident and transmitted waves).
 */
import type { Complex } from './complex.js';
import { fresnelCos, type FresnelCoefficients } from './fresnel.js';
import { csqrt } from './complex.js';

/**
 * Reflection and transmission coefficients of a slab, TE and TM.
 * @example const clear: SlabCoefficients = { reflection: { te: [0, 0], tm: [0, 0] }, transmission: { te: [1, 0], tm: [1, 0] } }; // a slab of zero thickness
 */
export interface SlabCoefficients {
  reflection: FresnelCoefficients;
  transmission: FresnelCoefficients;
}

/**
 * The ITU-R P.2040 single-layer slab coefficients at cos t (0..1) for permittivity eta,
 * thickness (m) and wavelength (m).
 * @example slabCoefficients([4, 0], 0.0025, 0.01, 1).transmission.te // [0, -1]: a half-wave slab (d = lambda / (2 sqrt(eta))) is transparent at normal incidence, phase -(q - q0) = -pi / 2
 */
export function slabCoefficients(eta: Readonly<Complex>, thicknessM: number, wavelengthM: number, cosT: number): SlabCoefficients {
  if (!(thicknessM >= 0) || !Number.isFinite(thicknessM))
    throw new RangeError(`slabCoefficients(): thicknessM must be a finite number >= 0, got ${thicknessM}`);
  if (!(wavelengthM > 0)) throw new RangeError(`slabCoefficients(): wavelengthM must be > 0, got ${wavelengthM}`);
  if (!(cosT >= 0 && cosT <= 1)) throw new RangeError(`slabCoefficients(): cosT must be in [0, 1], got ${cosT}`);
  const f = fresnelCos(eta, cosT);
  const k = (2 * Math.PI * thicknessM) / wavelengthM;
  const root = csqrt([eta[0] - (1 - cosT * cosT), eta[1]]);
  const q: Complex = [k * root[0], k * root[1]];
  const q0 = k * cosT;
  // e2 = exp(-2 j q), e1 = exp(-j (q - q0))
  const e2 = cexp([2 * q[1], -2 * q[0]]);
  const e1 = cexp([q[1], -(q[0] - q0)]);
  const one = (r: Complex): { R: Complex; T: Complex } => {
    const r2 = cmul(r, r);
    const den: Complex = [1 - (r2[0] * e2[0] - r2[1] * e2[1]), -(r2[0] * e2[1] + r2[1] * e2[0])];
    const R = cdiv(cmul(r, [1 - e2[0], -e2[1]]), den);
    const T = cdiv(cmul([1 - r2[0], -r2[1]], e1), den);
    return { R, T };
  };
  const te = one(f.te),
    tm = one(f.tm);
  return { reflection: { te: te.R, tm: tm.R }, transmission: { te: te.T, tm: tm.T } };
}

function cexp(z: Complex): Complex {
  const m = Math.exp(z[0]);
  return [m * Math.cos(z[1]), m * Math.sin(z[1])];
}

function cmul(a: Complex, b: Complex): Complex {
  return [a[0] * b[0] - a[1] * b[1], a[0] * b[1] + a[1] * b[0]];
}

function cdiv(a: Complex, b: Complex): Complex {
  const d = b[0] * b[0] + b[1] * b[1];
  return [(a[0] * b[0] + a[1] * b[1]) / d, (a[1] * b[0] - a[0] * b[1]) / d];
}
