/**
 * Wall materials: the ITU-R P.2040-3 Table 3 model, a perfect conductor, custom constants, and
 * a fixed reflection loss.
 *
 * P.2040 model (f in GHz): eps' = a f^b, sigma = c f^d S/m, and the complex relative permittivity
 * eta = eps' - j sigma / (2 pi f eps0) (time convention exp(+j omega t), matching the carrier
 * phase exp(-j k0 d) of the tracer). Coefficients are those of P.2040-2 / P.2040-3 Table 3.
 * Each table entry carries the frequency range over which pathweave treats it as validated
 * (1-40 GHz for all five: the range stated with the coefficients in our check values). The
 * Recommendation itself lists wider ranges for some materials, and a separate coefficient set for
 * glass and ceiling board at 220-450 GHz (from memory, M); those are not included, so a carrier
 * outside 1-40 GHz gives a warning (returned, never thrown) and the 1-40 GHz fit is still used.
 */
import type { Complex } from './complex.js';

/**
 * Vacuum permittivity eps0 in F/m (CODATA 2018).
 * @example VACUUM_PERMITTIVITY // 8.8541878128e-12
 */
export const VACUUM_PERMITTIVITY = 8.8541878128e-12;

/**
 * Coefficients of the P.2040 model eps' = a f^b, sigma = c f^d (f in GHz).
 * @example const glass: P2040Coefficients = { a: 6.31, b: 0, c: 0.0036, d: 1.3394, validRangesGHz: [[1, 40]] };
 */
export interface P2040Coefficients {
  a: number;
  b: number;
  c: number;
  d: number;
  /** Frequency ranges in GHz, [low, high] inclusive, over which the fit is validated here. */
  validRangesGHz: readonly (readonly [number, number])[];
}

/**
 * Names of the tabulated P.2040 materials.
 * @example const name: P2040MaterialName = 'plasterboard';
 */
export type P2040MaterialName = 'concrete' | 'glass' | 'wood' | 'plasterboard' | 'brick';

/**
 * Every material name accepted in `Wall.material`. `metal` is a perfect conductor.
 * @example const name: MaterialName = 'metal';
 */
export type MaterialName = P2040MaterialName | 'metal';

/**
 * A material given by its constants: eps' (> 0) and conductivity in S/m (>= 0).
 * @example const drywall: CustomMaterial = { relativePermittivity: 2.9, conductivitySpm: 0.02 };
 */
export interface CustomMaterial {
  relativePermittivity: number;
  conductivitySpm: number;
}

/**
 * A wall's material: a table name or custom constants.
 * @example const specs: MaterialSpec[] = ['brick', { relativePermittivity: 5, conductivitySpm: 0.1 }];
 */
export type MaterialSpec = MaterialName | CustomMaterial;

/**
 * ITU-R P.2040-3 Table 3 coefficients (V, secondary copy in check-values.md).
 * @example P2040_MATERIALS.concrete.a // 5.24
 */
export const P2040_MATERIALS: Readonly<Record<P2040MaterialName, Readonly<P2040Coefficients>>> = Object.freeze({
  concrete: { a: 5.24, b: 0, c: 0.0462, d: 0.7822, validRangesGHz: [[1, 40]] },
  glass: { a: 6.31, b: 0, c: 0.0036, d: 1.3394, validRangesGHz: [[1, 40]] },
  wood: { a: 1.99, b: 0, c: 0.0047, d: 1.0718, validRangesGHz: [[1, 40]] },
  plasterboard: { a: 2.73, b: 0, c: 0.0085, d: 0.9395, validRangesGHz: [[1, 40]] },
  brick: { a: 3.91, b: 0, c: 0.0238, d: 0.16, validRangesGHz: [[1, 40]] },
});

/**
 * Every accepted material name, in the order used in messages.
 * @example MATERIAL_NAMES.length // 6
 */
export const MATERIAL_NAMES: readonly MaterialName[] = ['concrete', 'glass', 'wood', 'plasterboard', 'brick', 'metal'];

/**
 * The material a wall gets when it names none.
 * @example DEFAULT_MATERIAL // "concrete"
 */
export const DEFAULT_MATERIAL: MaterialName = 'concrete';

/**
 * How a surface reflects, resolved at one frequency:
 * - `dielectric`: Fresnel coefficients of a half-space of complex relative permittivity `eta`;
 * - `conductor`: perfect conductor, Gamma_TE = -1 and Gamma_TM = +1 (TM convention of fresnel.ts);
 * - `fixed`: a fixed loss replacing Fresnel, Gamma_TE = Gamma_TM = -10^(-L/20) (amplitude
 *   10^(-L/20), phase pi for both components in the basis of fresnel.ts).
 * @example const lossy: Surface = { kind: 'fixed', amplitude: 0.5 }; // a 6 dB reflection loss
 */
export type Surface = { kind: 'dielectric'; eta: Complex } | { kind: 'conductor' } | { kind: 'fixed'; amplitude: number };

/**
 * A resolved surface and, when the frequency is outside the material's validated range, a warning.
 * @example const metal: ResolvedSurface = { surface: { kind: 'conductor' } }; // no warning: valid at every frequency
 */
export interface ResolvedSurface {
  surface: Surface;
  warning?: string;
}

/**
 * Complex relative permittivity eta = eps' - j sigma / (2 pi f eps0) of a P.2040 material.
 * @example p2040Permittivity('concrete', 28e9) // { eta: [5.24, -0.401904], conductivitySpm: 0.62605 }
 */
export function p2040Permittivity(name: P2040MaterialName, frequencyHz: number): { eta: Complex; conductivitySpm: number; warning?: string } {
  const co = P2040_MATERIALS[name];
  if (co === undefined)
    throw new RangeError(`p2040Permittivity(): name must be one of ${Object.keys(P2040_MATERIALS).join(', ')}, got ${JSON.stringify(name)}`);
  checkFrequency('p2040Permittivity()', frequencyHz);
  const fGHz = frequencyHz / 1e9;
  const epsReal = co.a * fGHz ** co.b;
  const sigma = co.c * fGHz ** co.d;
  const eta: Complex = [epsReal, -sigma / (2 * Math.PI * frequencyHz * VACUUM_PERMITTIVITY)];
  const inside = co.validRangesGHz.some(([lo, hi]) => fGHz >= lo && fGHz <= hi);
  if (inside) return { eta, conductivitySpm: sigma };
  const ranges = co.validRangesGHz.map(([lo, hi]) => `${lo}-${hi} GHz`).join(', ');
  return {
    eta,
    conductivitySpm: sigma,
    warning: `material "${name}" is validated for ${ranges}, got ${fGHz} GHz; the ITU-R P.2040 fit is used outside its range`,
  };
}

/**
 * Resolve a wall's reflection model at a frequency. `reflectionLossDb`, when given, replaces the
 * material. Without either, the wall is `DEFAULT_MATERIAL` (concrete).
 * @example resolveSurface({ reflectionLossDb: 6 }, 28e9).surface // { kind: 'fixed', amplitude: 0.50119 }
 */
export function resolveSurface(wall: { material?: MaterialSpec; reflectionLossDb?: number }, frequencyHz: number): ResolvedSurface {
  checkFrequency('resolveSurface()', frequencyHz);
  if (wall.reflectionLossDb !== undefined) {
    const l = wall.reflectionLossDb;
    if (!Number.isFinite(l) || l < 0) throw new RangeError(`resolveSurface(): reflectionLossDb must be a finite number >= 0, got ${l}`);
    return { surface: { kind: 'fixed', amplitude: 10 ** (-l / 20) } };
  }
  const m = wall.material ?? DEFAULT_MATERIAL;
  if (m === 'metal') return { surface: { kind: 'conductor' } };
  if (typeof m === 'string') {
    if (!(m in P2040_MATERIALS))
      throw new RangeError(
        `resolveSurface(): material must be one of ${MATERIAL_NAMES.join(', ')} or { relativePermittivity, conductivitySpm }, got ${JSON.stringify(m)}`,
      );
    const r = p2040Permittivity(m, frequencyHz);
    return r.warning === undefined ? { surface: { kind: 'dielectric', eta: r.eta } } : { surface: { kind: 'dielectric', eta: r.eta }, warning: r.warning };
  }
  const problem = customMaterialProblem(m);
  if (problem !== undefined) throw new RangeError(`resolveSurface(): ${problem}`);
  return { surface: { kind: 'dielectric', eta: [m.relativePermittivity, -m.conductivitySpm / (2 * Math.PI * frequencyHz * VACUUM_PERMITTIVITY)] } };
}

/**
 * A message when a custom material's constants are not allowed, else undefined.
 * @example customMaterialProblem({ relativePermittivity: 0, conductivitySpm: 1 }) // 'relativePermittivity must be a finite number > 0, got 0'
 */
export function customMaterialProblem(m: unknown): string | undefined {
  if (typeof m !== 'object' || m === null) return `material must be an object { relativePermittivity, conductivitySpm }, got ${String(m)}`;
  const { relativePermittivity: e, conductivitySpm: s } = m as Partial<CustomMaterial>;
  if (typeof e !== 'number' || !Number.isFinite(e) || e <= 0) return `relativePermittivity must be a finite number > 0, got ${String(e)}`;
  if (typeof s !== 'number' || !Number.isFinite(s) || s < 0) return `conductivitySpm must be a finite number >= 0, got ${String(s)}`;
  return undefined;
}

function checkFrequency(fn: string, f: number): void {
  if (!Number.isFinite(f) || f <= 0) throw new RangeError(`${fn}: frequencyHz must be a finite number > 0, got ${f}`);
}
