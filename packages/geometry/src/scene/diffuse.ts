/**
 * Diffuse scattering from rough walls (docs/conventions.md, "Diffuse scattering"): the directive
 * model of Degli-Esposti et al., IEEE Trans. Antennas Propag. 55(1), 2007, "Measurement and
 * modelling of scattering from buildings", and its Lambertian case, first order (tx -> tile -> rx).
 *
 * Each 3-D wall with a scattering coefficient S > 0 is cut into tiles (a grid of at most `tileM`
 * on a side in the wall's own frame, each cell clipped to the polygon: its area A and centroid P).
 * A tile seen by both terminals (from the same side of the wall) gives one path of kind `diffuse`
 * through P, with
 *   |amplitude| = lambda / (4 pi r_i r_s) * S * |Gamma| * sqrt(A cos(theta_i) D(k_s)),
 * r_i, r_s the lengths before and after P, theta_i the angle of incidence, |Gamma| the wall's
 * Fresnel reflection (applied per polarisation, like a reflection) and D the scattering pattern,
 * normalised so that its integral over the half-space in front of the wall is 1:
 *   Lambertian: D = cos(theta_s) / pi;
 *   directive:  D = ((1 + cos psi_R) / 2)^alphaR / F(alphaR, theta_i),
 * psi_R the angle between the scattered direction and the specular one, F the integral of the
 * lobe over the half-space (the paper's closed form, `directiveNormalization`). A tile thus
 * re-radiates S^2 |Gamma|^2 of the power it intercepts, and every specular reflection on the wall
 * has its coefficients multiplied by the reflection reduction factor R = sqrt(1 - S^2): specular
 * |Gamma|^2 (1 - S^2) plus diffuse S^2 |Gamma|^2 is the |Gamma|^2 of the smooth wall.
 *
 * The diffuse wave keeps the polarisation of the specular reflection, turned from the specular
 * direction onto the scattered one by the smallest rotation (its power is unchanged).
 */
import type { Vec3 } from '../vec3.js';
import type { FresnelCoefficients } from './fresnel.js';
import type { MaterialName } from './materials.js';
import { Occlusion } from './occlusion.js';
import type { PreparedScene, Scene, SceneProblem, Wall } from './scene.js';

/**
 * Diffuse scattering settings (the scene key `diffuse`); present, walls scatter diffusely.
 * @example const rough: DiffuseSettings = { tileM: 1, maxPathsPerWall: 8, scatteringCoefficient: 0.4, alphaR: 4 };
 */
export interface DiffuseSettings {
  /** Largest side of a tile, m (> 0): each wall is cut into a grid of cells of at most this size. */
  tileM: number;
  /** Keep at most this many tiles per wall, the strongest first (integer >= 1; default 16). */
  maxPathsPerWall?: number;
  /** Scattering coefficient S in [0, 1] of walls without their own or their material's (default DEFAULT_SCATTERING_COEFFICIENT). */
  scatteringCoefficient?: number;
  /** Directivity exponent alphaR of the directive lobe, integer 1..MAX_ALPHA_R (default DEFAULT_ALPHA_R). */
  alphaR?: number;
  /** "directive" (the lobe about the specular direction) or "lambertian" (cos-law); default "directive". */
  pattern?: 'directive' | 'lambertian';
  /** Scattering coefficient per named material (walls of that material without their own). */
  materials?: Partial<Record<MaterialName, number>>;
}

/**
 * Default scattering coefficient S (of the order of the values fitted to building walls in Degli-Esposti et al. 2007).
 * @example DEFAULT_SCATTERING_COEFFICIENT // 0.4
 */
export const DEFAULT_SCATTERING_COEFFICIENT = 0.4;
/**
 * Default directivity exponent alphaR of the directive pattern.
 * @example DEFAULT_ALPHA_R // 4
 */
export const DEFAULT_ALPHA_R = 4;
/**
 * Largest alphaR accepted (the closed-form normalisation is a finite sum over 0..alphaR).
 * @example MAX_ALPHA_R // 20
 */
export const MAX_ALPHA_R = 20;
/**
 * Default `maxPathsPerWall`.
 * @example DEFAULT_DIFFUSE_PATHS_PER_WALL // 16
 */
export const DEFAULT_DIFFUSE_PATHS_PER_WALL = 16;
/**
 * Most tiles a scene may be cut into (the sum over its scattering walls), to bound the cost of a trace.
 * @example MAX_DIFFUSE_TILES // 200000
 */
export const MAX_DIFFUSE_TILES = 200_000;

/**
 * F(alphaR, theta_i): the integral of ((1 + cos psi_R) / 2)^alphaR over the half-space in front
 * of the wall, psi_R measured from the specular direction at incidence theta_i; the closed form of
 * Degli-Esposti et al. 2007: F = 2^-alphaR sum_j C(alphaR, j) I_j, I_j = 2 pi / (j + 1) for even j,
 * I_j = 2 pi / (j + 1) cos(theta_i) sum_{w=0}^{(j-1)/2} C(2w, w) sin^{2w}(theta_i) / 2^{2w} for odd j.
 * @example [directiveNormalization(1, 1), directiveNormalization(4, 1)] // [4.712389, 2.434734]: at normal incidence; 3 pi / 2 for alphaR = 1
 */
export function directiveNormalization(alphaR: number, cosThetaI: number): number {
  const sin2 = Math.max(0, 1 - cosThetaI * cosThetaI);
  let sum = 0,
    binom = 1; // C(alphaR, j)
  let series = 0,
    term = 1; // C(2w, w) sin^{2w} / 4^w, summed up to w = (j - 1) / 2
  for (let j = 0; j <= alphaR; j++) {
    let I = (2 * Math.PI) / (j + 1);
    if (j % 2 === 1) {
      const w = (j - 1) / 2;
      if (w > 0) term *= (((2 * w - 1) * 2 * w) / (w * w)) * (sin2 / 4); // C(2w, w) / C(2w - 2, w - 1) = (2w - 1) 2w / w^2
      series += term;
      I *= cosThetaI * series;
    }
    sum += binom * I;
    binom = (binom * (alphaR - j)) / (j + 1);
  }
  return sum / 2 ** alphaR;
}

/**
 * The scattering pattern D, normalised to 1 over the half-space in front of the wall (see the module comment).
 * @example [diffusePattern('lambertian', 4, 1, 1, 1), diffusePattern('directive', 1, 1, 1, 1)] // [0.31831, 0.212207]: 1 / pi, and 1 / (3 pi / 2) for alphaR = 1 along the specular direction
 */
export function diffusePattern(pattern: 'directive' | 'lambertian', alphaR: number, cosThetaI: number, cosThetaS: number, cosPsiR: number): number {
  if (pattern === 'lambertian') return Math.max(0, cosThetaS) / Math.PI;
  return (0.5 * (1 + cosPsiR)) ** alphaR / directiveNormalization(alphaR, cosThetaI);
}

/**
 * The tiles of one scene: per wall, their centroids (xyz) and areas (m^2), and the wall's S.
 * @example const t: DiffuseTiles = sceneDiffuseTiles(prepareScene({ walls: [{ vertices: [[0, 5, 0], [2, 5, 0], [2, 5, 1], [0, 5, 1]] }], diffuse: { tileM: 1 } }))!; [t.start[1], t.area[0]] // [2, 1]
 */
export interface DiffuseTiles {
  /** First tile of wall w, length W + 1. */
  start: Int32Array;
  /** Tile centroids, xyz. */
  center: Float64Array;
  /** Tile areas, m^2. */
  area: Float64Array;
  /** Scattering coefficient S of each wall (0: no tiles). */
  coefficient: Float64Array;
  pattern: 'directive' | 'lambertian';
  alphaR: number;
  maxPathsPerWall: number;
}

const tileCache = new WeakMap<PreparedScene, DiffuseTiles>();
const occlusionCache = new WeakMap<PreparedScene, Occlusion>();

/** S of one wall: its own, else its material's, else the settings' default. */
function wallCoefficient(wall: Wall, d: DiffuseSettings): number {
  if (wall.scatteringCoefficient !== undefined) return wall.scatteringCoefficient;
  const m = wall.material;
  if (typeof m === 'string' && wall.reflectionLossDb === undefined) {
    const s = d.materials?.[m];
    if (s !== undefined) return s;
  }
  return d.scatteringCoefficient ?? DEFAULT_SCATTERING_COEFFICIENT;
}

/**
 * The tiles of a prepared scene with `diffuse` (cached per scene), or undefined without it.
 * @example sceneDiffuseTiles(prepareScene({ walls: [{ vertices: [[0, 5, 0], [3, 5, 0], [0, 5, 3]] }], diffuse: { tileM: 1 } }))!.area.reduce((a, b) => a + b) // 4.5: the clipped cells add up to the triangle's area
 */
export function sceneDiffuseTiles(ps: PreparedScene): DiffuseTiles | undefined {
  const d = ps.scene.diffuse;
  if (d === undefined || ps.is2D) return undefined;
  let t = tileCache.get(ps);
  if (t !== undefined) return t;
  const W = ps.wallCount;
  const walls = ps.scene.walls ?? [];
  const start = new Int32Array(W + 1);
  const coefficient = new Float64Array(W);
  const centers: number[] = [],
    areas: number[] = [];
  const vx = ps.vertices,
    vs = ps.vertexStart,
    pl = ps.planes;
  for (let w = 0; w < W; w++) {
    start[w] = areas.length;
    const S = wallCoefficient(walls[w]!, d);
    coefficient[w] = S;
    if (!(S > 0)) continue;
    // the wall's own frame: origin at its first vertex, u along its first edge, v = n x u
    const k0 = vs[w]!,
      k1 = vs[w + 1]!;
    const ox = vx[3 * k0]!,
      oy = vx[3 * k0 + 1]!,
      oz = vx[3 * k0 + 2]!;
    const nx = pl[4 * w]!,
      ny = pl[4 * w + 1]!,
      nz = pl[4 * w + 2]!;
    let ux = vx[3 * k0 + 3]! - ox,
      uy = vx[3 * k0 + 4]! - oy,
      uz = vx[3 * k0 + 5]! - oz;
    const un = ux * nx + uy * ny + uz * nz;
    ux -= un * nx;
    uy -= un * ny;
    uz -= un * nz;
    const ul = Math.hypot(ux, uy, uz);
    ux /= ul;
    uy /= ul;
    uz /= ul;
    const wx = ny * uz - nz * uy,
      wy = nz * ux - nx * uz,
      wz = nx * uy - ny * ux;
    const pv: number[] = [];
    let u0 = Infinity,
      u1 = -Infinity,
      v0 = Infinity,
      v1 = -Infinity;
    for (let k = k0; k < k1; k++) {
      const dx = vx[3 * k]! - ox,
        dy = vx[3 * k + 1]! - oy,
        dz = vx[3 * k + 2]! - oz;
      const u = dx * ux + dy * uy + dz * uz,
        v = dx * wx + dy * wy + dz * wz;
      pv.push(u, v);
      u0 = Math.min(u0, u);
      u1 = Math.max(u1, u);
      v0 = Math.min(v0, v);
      v1 = Math.max(v1, v);
    }
    const nu = Math.max(1, Math.ceil((u1 - u0) / d.tileM - 1e-9)),
      nv = Math.max(1, Math.ceil((v1 - v0) / d.tileM - 1e-9));
    const du = (u1 - u0) / nu,
      dv = (v1 - v0) / nv;
    for (let i = 0; i < nu; i++) {
      for (let j = 0; j < nv; j++) {
        const c = clipToRect(pv, u0 + i * du, u0 + (i + 1) * du, v0 + j * dv, v0 + (j + 1) * dv);
        if (c === undefined || !(c.area > 1e-12 * du * dv)) continue;
        areas.push(c.area);
        centers.push(ox + c.u * ux + c.v * wx, oy + c.u * uy + c.v * wy, oz + c.u * uz + c.v * wz);
      }
    }
  }
  start[W] = areas.length;
  t = {
    start,
    center: Float64Array.from(centers),
    area: Float64Array.from(areas),
    coefficient,
    pattern: d.pattern ?? 'directive',
    alphaR: d.alphaR ?? DEFAULT_ALPHA_R,
    maxPathsPerWall: d.maxPathsPerWall ?? DEFAULT_DIFFUSE_PATHS_PER_WALL,
  };
  tileCache.set(ps, t);
  return t;
}

/** Area and centroid of a polygon ([u, v] pairs) clipped to a rectangle (Sutherland-Hodgman). */
function clipToRect(p: readonly number[], ua: number, ub: number, va: number, vb: number): { area: number; u: number; v: number } | undefined {
  let pts = p.slice();
  const edges: [number, number, number][] = [
    [0, 1, ua],
    [0, -1, -ub],
    [1, 1, va],
    [1, -1, -vb],
  ]; // keep s * coordinate >= bound
  for (const [axis, s, b] of edges) {
    const out: number[] = [];
    const n = pts.length / 2;
    for (let i = 0; i < n; i++) {
      const ax = pts[2 * i]!,
        ay = pts[2 * i + 1]!;
      const j = (i + 1) % n;
      const bx = pts[2 * j]!,
        by = pts[2 * j + 1]!;
      const fa = s * (axis === 0 ? ax : ay) - b,
        fb = s * (axis === 0 ? bx : by) - b;
      if (fa >= 0) out.push(ax, ay);
      if (fa >= 0 !== fb >= 0) {
        const t = fa / (fa - fb);
        out.push(ax + t * (bx - ax), ay + t * (by - ay));
      }
    }
    pts = out;
    if (pts.length < 6) return undefined;
  }
  let a2 = 0,
    cu = 0,
    cv = 0;
  const n = pts.length / 2;
  for (let i = 0; i < n; i++) {
    const j = (i + 1) % n;
    const cr = pts[2 * i]! * pts[2 * j + 1]! - pts[2 * j]! * pts[2 * i + 1]!;
    a2 += cr;
    cu += (pts[2 * i]! + pts[2 * j]!) * cr;
    cv += (pts[2 * i + 1]! + pts[2 * j + 1]!) * cr;
  }
  if (a2 === 0) return undefined;
  return { area: Math.abs(a2) / 2, u: cu / (3 * a2), v: cv / (3 * a2) };
}

/**
 * S * sqrt(A cos(theta_i) D) of tile `tile` of wall `w` for a wave arriving from `from` and leaving towards `to`
 * (the factor of the amplitude beyond lambda / (4 pi r_i r_s) and the Fresnel coefficients); 0 when
 * the two are not on the same side of the wall.
 * @example
 * const ps = prepareScene({ walls: [{ vertices: [[-1, 0, -1], [1, 0, -1], [1, 0, 1], [-1, 0, 1]] }], diffuse: { tileM: 2, pattern: 'lambertian', scatteringCoefficient: 0.5 } });
 * diffuseTileFactor(ps, 0, 0, [0, 3, 0], [0, 3, 0]) // 0.56419: 0.5 sqrt(4 / pi) at normal incidence and normal scattering
 */
export function diffuseTileFactor(ps: PreparedScene, w: number, tile: number, from: Readonly<Vec3>, to: Readonly<Vec3>): number {
  const t = sceneDiffuseTiles(ps);
  if (t === undefined) return 0;
  const c = 3 * tile,
    o = 4 * w,
    pl = ps.planes;
  const px = t.center[c]!,
    py = t.center[c + 1]!,
    pz = t.center[c + 2]!;
  let nx = pl[o]!,
    ny = pl[o + 1]!,
    nz = pl[o + 2]!;
  // a = unit vector from P towards the source, b = towards the observer
  let ax = from[0] - px,
    ay = from[1] - py,
    az = from[2] - pz;
  let bx = to[0] - px,
    by = to[1] - py,
    bz = to[2] - pz;
  const la = Math.hypot(ax, ay, az),
    lb = Math.hypot(bx, by, bz);
  ax /= la;
  ay /= la;
  az /= la;
  bx /= lb;
  by /= lb;
  bz /= lb;
  let cosI = nx * ax + ny * ay + nz * az;
  if (cosI < 0) {
    nx = -nx;
    ny = -ny;
    nz = -nz;
    cosI = -cosI;
  }
  const cosS = nx * bx + ny * by + nz * bz;
  if (!(cosI > 0) || !(cosS > 0)) return 0;
  // specular direction: the incident direction (-a) mirrored, r = 2 cosI n - a
  const cosPsi = (2 * cosI * nx - ax) * bx + (2 * cosI * ny - ay) * by + (2 * cosI * nz - az) * bz;
  const D = diffusePattern(t.pattern, t.alphaR, cosI, cosS, Math.min(1, Math.max(-1, cosPsi)));
  return t.coefficient[w]! * Math.sqrt(t.area[tile]! * cosI * D);
}

/**
 * The reflection reduction factor R = sqrt(1 - S^2) of wall w (1 without `diffuse`).
 * @example reflectionReduction(prepareScene({ walls: [{ vertices: [[0, 5, 0], [2, 5, 0], [2, 5, 1]], scatteringCoefficient: 0.6 }], diffuse: { tileM: 1 } }), 0) // 0.8
 */
export function reflectionReduction(ps: PreparedScene, w: number): number {
  const t = sceneDiffuseTiles(ps);
  if (t === undefined) return 1;
  const s = t.coefficient[w]!;
  return Math.sqrt(1 - s * s);
}

/**
 * Reflection coefficients times a real factor (the reduction factor R).
 * @example scaleCoefficients({ te: [-1, 0], tm: [1, 0] }, 0.8) // { te: [-0.8, 0], tm: [0.8, 0] }
 */
export function scaleCoefficients(c: FresnelCoefficients, factor: number): FresnelCoefficients {
  return { te: [c.te[0] * factor, c.te[1] * factor], tm: [c.tm[0] * factor, c.tm[1] * factor] };
}

/**
 * Turn a complex field vector (Float64Array(6): real xyz, imaginary xyz) in place by the smallest
 * rotation taking unit vector `from` onto unit vector `to` (Rodrigues; `from` = -`to` does not occur
 * here: both point away from the same side of a wall).
 * @example Array.from(rotateField(Float64Array.of(0, 0, 1, 0, 0, 0), [1, 0, 0], [0, 1, 0])) // [0, 0, 1, 0, 0, 0]: the field along the axis stays
 */
export function rotateField(e: Float64Array, from: Readonly<Vec3>, to: Readonly<Vec3>): Float64Array {
  const kx = from[1] * to[2] - from[2] * to[1],
    ky = from[2] * to[0] - from[0] * to[2],
    kz = from[0] * to[1] - from[1] * to[0];
  const c = from[0] * to[0] + from[1] * to[1] + from[2] * to[2];
  if (!(c > -1 + 1e-12)) return e;
  const f = 1 / (1 + c);
  for (let part = 0; part < 6; part += 3) {
    const x = e[part]!,
      y = e[part + 1]!,
      z = e[part + 2]!;
    // v' = v c + (k x v) + k (k . v) / (1 + c), k = from x to
    const cx = ky * z - kz * y,
      cy = kz * x - kx * z,
      cz = kx * y - ky * x;
    const kd = (kx * x + ky * y + kz * z) * f;
    e[part] = x * c + cx + kx * kd;
    e[part + 1] = y * c + cy + ky * kd;
    e[part + 2] = z * c + cz + kz * kd;
  }
  return e;
}

/**
 * First-order diffuse paths: for every tile seen by both terminals from the same side of its wall
 * (the two legs free of opaque walls, as for reflections), the strongest `maxPathsPerWall` of each
 * wall by the tile factor over r_i r_s; calls `emit(wall, tile, centroid)`.
 * @example
 * const ps = prepareScene({ walls: [{ vertices: [[-2, 5, 0], [2, 5, 0], [2, 5, 2], [-2, 5, 2]] }], diffuse: { tileM: 1, maxPathsPerWall: 3 } });
 * let n = 0;
 * traceDiffuse(ps, [-1, 0, 1], [1, 0, 1], () => n++);
 * n // 3
 */
export function traceDiffuse(ps: PreparedScene, tx: Readonly<Vec3>, rx: Readonly<Vec3>, emit: (wall: number, tile: number, point: Vec3) => void): void {
  const t = sceneDiffuseTiles(ps);
  if (t === undefined) return;
  const W = ps.wallCount,
    pl = ps.planes,
    ce = t.center;
  let occ: Occlusion | undefined;
  if (W >= 32) {
    occ = occlusionCache.get(ps);
    if (occ === undefined) {
      occ = new Occlusion(ps);
      occlusionCache.set(ps, occ);
    }
  }
  const keepN = t.maxPathsPerWall;
  const bestTile = new Int32Array(keepN),
    bestValue = new Float64Array(keepN);
  for (let w = 0; w < W; w++) {
    const a = t.start[w]!,
      b = t.start[w + 1]!;
    if (a === b) continue;
    const o = 4 * w;
    const ft = pl[o]! * tx[0] + pl[o + 1]! * tx[1] + pl[o + 2]! * tx[2] - pl[o + 3]!,
      fr = pl[o]! * rx[0] + pl[o + 1]! * rx[1] + pl[o + 2]! * rx[2] - pl[o + 3]!;
    if (!((ft > 0 && fr > 0) || (ft < 0 && fr < 0))) continue; // scattering back into the half-space of incidence only
    if (occ !== undefined && (occ.wallHiddenFromPoint(w, tx[0], tx[1], tx[2]) || occ.wallHiddenFromPoint(w, rx[0], rx[1], rx[2]))) continue;
    let kept = 0;
    for (let k = a; k < b; k++) {
      const px = ce[3 * k]!,
        py = ce[3 * k + 1]!,
        pz = ce[3 * k + 2]!;
      if (ps.segmentHitsWall(tx[0], tx[1], tx[2], px, py, pz, -1, w)) continue;
      if (ps.segmentHitsWall(px, py, pz, rx[0], rx[1], rx[2], w, -1)) continue;
      const ri = Math.hypot(px - tx[0], py - tx[1], pz - tx[2]),
        rs = Math.hypot(rx[0] - px, rx[1] - py, rx[2] - pz);
      const v = diffuseTileFactor(ps, w, k, tx, rx) / (ri * rs);
      if (!(v > 0)) continue;
      // insertion into the list of the strongest (ties: the lower tile index first)
      if (kept === keepN && !(v > bestValue[keepN - 1]!)) continue;
      let i = kept < keepN ? kept++ : keepN - 1;
      while (i > 0 && bestValue[i - 1]! < v) {
        bestValue[i] = bestValue[i - 1]!;
        bestTile[i] = bestTile[i - 1]!;
        i--;
      }
      bestValue[i] = v;
      bestTile[i] = k;
    }
    for (let i = 0; i < kept; i++) {
      const k = bestTile[i]!;
      emit(w, k - a, [ce[3 * k]!, ce[3 * k + 1]!, ce[3 * k + 2]!]);
    }
  }
}

/**
 * Problems of a scene's `diffuse` settings and the walls' scattering coefficients (validateScene calls it).
 * @example diffuseProblems({ walls: [{ vertices: [[0, 0], [1, 0]] }], diffuse: { tileM: 0 } }, 'scene', true).map((p) => p.path) // ['scene.diffuse.tileM', 'scene.diffuse']
 */
export function diffuseProblems(scene: Scene, sp: string, is2D: boolean): SceneProblem[] {
  const out: SceneProblem[] = [];
  const err = (path: string, message: string): void => {
    out.push({ path, message, severity: 'error' });
  };
  const coefficientProblem = (v: unknown): string | undefined =>
    typeof v === 'number' && Number.isFinite(v) && v >= 0 && v <= 1 ? undefined : `must be a number from 0 to 1 (the scattering coefficient S), got ${fmt(v)}`;
  const walls = Array.isArray(scene.walls) ? scene.walls : [];
  walls.forEach((w, i) => {
    const s = (w as Wall | undefined)?.scatteringCoefficient;
    if (s === undefined) return;
    const p = coefficientProblem(s);
    if (p !== undefined) err(`${sp}.walls[${i}].scatteringCoefficient`, p);
  });
  const d = scene.diffuse;
  if (d === undefined) return out;
  const dp = `${sp}.diffuse`;
  if (typeof d !== 'object' || d === null) {
    err(dp, `must be an object { tileM, maxPathsPerWall?, scatteringCoefficient?, alphaR?, pattern?, materials? }, got ${fmt(d)}`);
    return out;
  }
  const tileOk = typeof d.tileM === 'number' && Number.isFinite(d.tileM) && d.tileM > 0;
  if (!tileOk) err(`${dp}.tileM`, `must be a finite number > 0 (m), got ${fmt(d.tileM)}`);
  if (d.maxPathsPerWall !== undefined && !(Number.isInteger(d.maxPathsPerWall) && d.maxPathsPerWall >= 1))
    err(`${dp}.maxPathsPerWall`, `must be an integer >= 1, got ${fmt(d.maxPathsPerWall)}`);
  if (d.scatteringCoefficient !== undefined) {
    const p = coefficientProblem(d.scatteringCoefficient);
    if (p !== undefined) err(`${dp}.scatteringCoefficient`, p);
  }
  if (d.alphaR !== undefined && !(Number.isInteger(d.alphaR) && d.alphaR >= 1 && d.alphaR <= MAX_ALPHA_R))
    err(`${dp}.alphaR`, `must be an integer from 1 to ${MAX_ALPHA_R}, got ${fmt(d.alphaR)}`);
  if (d.pattern !== undefined && d.pattern !== 'directive' && d.pattern !== 'lambertian')
    err(`${dp}.pattern`, `must be "directive" or "lambertian", got ${fmt(d.pattern)}`);
  if (d.materials !== undefined) {
    if (typeof d.materials !== 'object' || d.materials === null) err(`${dp}.materials`, `must be an object of material name to S, got ${fmt(d.materials)}`);
    else
      for (const [name, v] of Object.entries(d.materials)) {
        const p = coefficientProblem(v);
        if (p !== undefined) err(`${dp}.materials.${name}`, p);
      }
  }
  if (is2D) {
    err(dp, 'diffuse scattering needs a 3-D scene (walls as polygons): the walls of a 2-D scene have unbounded height and cannot be cut into tiles');
    return out;
  }
  if (tileOk) {
    let tiles = 0;
    for (const w of walls) if (typeof w === 'object' && w !== null && wallCoefficient(w, d) > 0) tiles += gridCells(w.vertices, d.tileM);
    if (tiles > MAX_DIFFUSE_TILES)
      err(`${dp}.tileM`, `cuts the walls into ${tiles} tiles, more than ${MAX_DIFFUSE_TILES}; give a larger tileM (${fmt(d.tileM)} m now)`);
  }
  return out;
}

/** Cells of the tile grid of a wall (the frame of sceneDiffuseTiles: u along the first edge, v = n x u), from its raw vertices; 0 when they are not a valid 3-D polygon. */
function gridCells(vs: unknown, tileM: number): number {
  if (!Array.isArray(vs) || vs.length < 3) return 0;
  const p = vs as number[][];
  if (!p.every((q) => Array.isArray(q) && q.length === 3 && q.every((x) => Number.isFinite(x)))) return 0;
  // Newell's normal
  let nx = 0,
    ny = 0,
    nz = 0;
  for (let i = 0; i < p.length; i++) {
    const a = p[i]!,
      b = p[(i + 1) % p.length]!;
    nx += (a[1]! - b[1]!) * (a[2]! + b[2]!);
    ny += (a[2]! - b[2]!) * (a[0]! + b[0]!);
    nz += (a[0]! - b[0]!) * (a[1]! + b[1]!);
  }
  const nl = Math.hypot(nx, ny, nz);
  if (!(nl > 0)) return 0;
  nx /= nl;
  ny /= nl;
  nz /= nl;
  let ux = p[1]![0]! - p[0]![0]!,
    uy = p[1]![1]! - p[0]![1]!,
    uz = p[1]![2]! - p[0]![2]!;
  const un = ux * nx + uy * ny + uz * nz;
  ux -= un * nx;
  uy -= un * ny;
  uz -= un * nz;
  const ul = Math.hypot(ux, uy, uz);
  if (!(ul > 0)) return 0;
  ux /= ul;
  uy /= ul;
  uz /= ul;
  const wx = ny * uz - nz * uy,
    wy = nz * ux - nx * uz,
    wz = nx * uy - ny * ux;
  let u0 = Infinity,
    u1 = -Infinity,
    v0 = Infinity,
    v1 = -Infinity;
  for (const q of p) {
    const u = q[0]! * ux + q[1]! * uy + q[2]! * uz,
      v = q[0]! * wx + q[1]! * wy + q[2]! * wz;
    u0 = Math.min(u0, u);
    u1 = Math.max(u1, u);
    v0 = Math.min(v0, v);
    v1 = Math.max(v1, v);
  }
  return Math.max(1, Math.ceil((u1 - u0) / tileM - 1e-9)) * Math.max(1, Math.ceil((v1 - v0) / tileM - 1e-9));
}

const fmt = (v: unknown): string => (typeof v === 'number' ? String(v) : (JSON.stringify(v) ?? String(v)));
