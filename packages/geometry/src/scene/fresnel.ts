/**
 * Fresnel reflection coefficients of a wave in air meeting a half-space of complex relative
 * permittivity eta (non-magnetic), incidence angle t from the surface normal:
 *
 *   Gamma_TE = (cos t - sqrt(eta - sin^2 t)) / (cos t + sqrt(eta - sin^2 t))
 *   Gamma_TM = (eta cos t - sqrt(eta - sin^2 t)) / (eta cos t + sqrt(eta - sin^2 t))
 *
 * sqrt is the principal branch (time convention exp(+j omega t), so a lossy eta has Im < 0).
 *
 * Sign convention (the one used everywhere in pathweave). With k_i, k_r the unit propagation
 * directions of the incident and reflected waves and n the surface normal:
 *   s   = (k_i x n) / |k_i x n|     TE unit vector, the same for both waves;
 *   p_i = k_i x s,  p_r = k_r x s   TM unit vectors of the incident and reflected waves;
 *   E_r = Gamma_TE (E_i . s) s + Gamma_TM (E_i . p_i) p_r.
 * In this basis Gamma_TM(0) = -Gamma_TE(0) (at normal incidence p_r = -p_i, so every
 * polarisation is reflected alike, as it must be), a perfect conductor has Gamma_TE = -1 and
 * Gamma_TM = +1, and Gamma_TM vanishes at the Brewster angle atan(sqrt(eta)) of a lossless medium.
 */
import { cdiv, csqrt, type Complex } from './complex.js';
import type { Surface } from './materials.js';

/**
 * TE and TM reflection coefficients.
 * @example const pec: FresnelCoefficients = { te: [-1, 0], tm: [1, 0] }; // a perfect conductor
 */
export interface FresnelCoefficients {
  te: Complex;
  tm: Complex;
}

/**
 * Fresnel coefficients for incidence angle `incidenceRad` (from the normal, 0..pi/2) onto eta.
 * @example fresnel([4, 0], Math.PI / 4) // { te: [-0.451416, 0], tm: [0.203777, 0] }
 */
export function fresnel(eta: Readonly<Complex>, incidenceRad: number): FresnelCoefficients {
  if (!(incidenceRad >= 0 && incidenceRad <= Math.PI / 2 + 1e-12)) {
    throw new RangeError(`fresnel(): incidenceRad must be in [0, pi/2], got ${incidenceRad}`);
  }
  return fresnelCos(eta, Math.cos(Math.min(incidenceRad, Math.PI / 2)));
}

/**
 * The same from cos t (0..1), the form the tracer uses.
 * @example fresnelCos([4, 0], 1).te // [-0.333333, 0]
 */
export function fresnelCos(eta: Readonly<Complex>, cosT: number): FresnelCoefficients {
  const sin2 = 1 - cosT * cosT;
  const root = csqrt([eta[0] - sin2, eta[1]]);
  const te = cdiv([cosT - root[0], -root[1]], [cosT + root[0], root[1]]);
  const ec: Complex = [eta[0] * cosT, eta[1] * cosT];
  const tm = cdiv([ec[0] - root[0], ec[1] - root[1]], [ec[0] + root[0], ec[1] + root[1]]);
  return { te, tm };
}

/**
 * Coefficients of a resolved surface at cos t: Fresnel for a dielectric, (-1, +1) for a perfect
 * conductor, (-A, -A) for a fixed loss of amplitude A.
 * @example surfaceCoefficients({ kind: 'conductor' }, 0.5) // { te: [-1, 0], tm: [1, 0] }
 */
export function surfaceCoefficients(surface: Surface, cosT: number): FresnelCoefficients {
  switch (surface.kind) {
    case 'dielectric':
      return fresnelCos(surface.eta, cosT);
    case 'conductor':
      return { te: [-1, 0], tm: [1, 0] };
    case 'fixed':
      return { te: [-surface.amplitude, 0], tm: [-surface.amplitude, 0] };
  }
}

/**
 * Brewster angle atan(sqrt(eps)) in radians of a lossless medium of relative permittivity eps.
 * @example brewsterAngle(4) * 180 / Math.PI // 63.4349
 */
export function brewsterAngle(relativePermittivity: number): number {
  if (!(relativePermittivity > 0)) throw new RangeError(`brewsterAngle(): relativePermittivity must be > 0, got ${relativePermittivity}`);
  return Math.atan(Math.sqrt(relativePermittivity));
}
