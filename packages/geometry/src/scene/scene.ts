/**
 * The scene model: walls, point scatterers and blockers, their validation (every problem at
 * once, each with a dotted path) and a `PreparedScene` that holds the wall planes and polygons
 * once, for the tracer's inner loops.
 *
 * Dimensions (docs/conventions.md, "2-D scenes"): a scene is 2-D when it has walls and every wall vertex has
 * two coordinates, or it has no walls and every scatterer and blocker point has two. In a 2-D
 * scene every point of the scene has two coordinates, terminals sit at z = 0, walls are vertical
 * planes of unbounded height and blockers are extruded likewise; in a 3-D scene every point has
 * three. Mixing is refused.
 *
 * Prepared layouts (W walls, B blockers):
 * - `planes` Float64Array(4 W): [nx, ny, nz, d] per wall, unit normal n, plane n . x = d;
 * - 3-D walls: `frames` Float64Array(9 W): [ox, oy, oz, e1x, e1y, e1z, e2x, e2y, e2z] (an origin
 *   in the plane and two in-plane unit axes), `polygons` Float64Array of [u, v] pairs of every
 *   wall's vertices in that frame, wall w at pairs polygonStart[w] .. polygonStart[w + 1] - 1,
 *   `bounds` Float64Array(4 W) [uMin, uMax, vMin, vMax];
 * - 2-D walls: `segments` Float64Array(5 W): [ax, ay, dx, dy, length], (dx, dy) the unit direction;
 * - every wall: `vertices` Float64Array of xyz (2-D: the two ends at z = 0), wall w's at
 *   vertexStart[w] .. vertexStart[w + 1] - 1; `bvh` a bounding volume hierarchy over the walls'
 *   boxes (2-D walls unbounded in z), used by every segment-against-walls query.
 */
import type { Vec3 } from '../vec3.js';
import { Bvh } from './bvh.js';
import { diffuseProblems, type DiffuseSettings } from './diffuse.js';
import { launchSettingsProblems, type LaunchSettings } from './launch.js';
import { customMaterialProblem, MATERIAL_NAMES, resolveSurface, type MaterialSpec, type ResolvedSurface } from './materials.js';

/**
 * A scene point: [x, y] in a 2-D scene, [x, y, z] in a 3-D one (metres).
 * @example const corners: ScenePoint[] = [[0, 5], [4, 5, 2.5]]; // a 2-D point, a 3-D point
 */
export type ScenePoint = readonly number[];

/**
 * A wall: a planar polygon (3-D, at least 3 coplanar vertices) or a segment (2-D, exactly 2
 * vertices, a vertical wall of unbounded height). Both sides reflect; walls are opaque.
 * @example const facade: Wall = { vertices: [[0, 5], [20, 5]], material: 'glass' }; // 2-D: a vertical wall along y = 5
 */
export interface Wall {
  vertices: readonly ScenePoint[];
  /** Table name or custom constants; default `concrete`. Ignored when `reflectionLossDb` is set. */
  material?: MaterialSpec;
  /** A fixed reflection loss in dB (>= 0) replacing the Fresnel coefficients. */
  reflectionLossDb?: number;
  /** Thickness in metres (> 0): the wall lets waves through as an ITU-R P.2040 slab of its material (slab.ts); without it the wall is opaque. */
  thicknessM?: number;
  /** Scattering coefficient S in [0, 1] of this wall when the scene has `diffuse` (diffuse.ts); default the material's or the settings' S. */
  scatteringCoefficient?: number;
}

/**
 * A point scatterer with bistatic radar cross-section `rcsM2` (m^2, > 0).
 * @example const lampPost: Scatterer = { position: [8, -3, 4], rcsM2: 0.5 };
 */
export interface Scatterer {
  position: ScenePoint;
  rcsM2: number;
}

/**
 * An axis-aligned box blocker.
 * @example const van: BoxBlocker = { shape: 'box', min: [5, -1, 0], max: [10, 1, 2.5], lossDb: 20 };
 */
export interface BoxBlocker {
  shape: 'box';
  min: ScenePoint;
  max: ScenePoint;
  /** Fixed loss in dB when a path segment crosses the box; without it, knife-edge diffraction. */
  lossDb?: number;
}

/**
 * A vertical cylinder blocker standing on `base` (the centre of its bottom disc).
 * @example const person: CylinderBlocker = { shape: 'cylinder', base: [6, 0, 0], radiusM: 0.25, heightM: 1.8 }; // knife-edge diffraction
 */
export interface CylinderBlocker {
  shape: 'cylinder';
  base: ScenePoint;
  radiusM: number;
  heightM: number;
  /** Fixed loss in dB when a path segment crosses the cylinder; without it, knife-edge diffraction. */
  lossDb?: number;
}

/**
 * A blocker: an obstacle that attenuates the path segments passing through or near it.
 * @example const pillar: Blocker = { shape: 'cylinder', base: [3, 2], radiusM: 0.3, heightM: 3 };
 */
export type Blocker = BoxBlocker | CylinderBlocker;

/**
 * The scene objects traced into paths, with the tracer's settings (the `scene` key of a scenario file).
 * @example const street: Scene = { walls: [{ vertices: [[0, 10], [50, 10]] }, { vertices: [[0, -10], [50, -10]] }], maxReflectionOrder: 1 };
 */
export interface Scene {
  /** Include the direct path (default true). */
  lineOfSight?: boolean;
  walls?: readonly Wall[];
  scatterers?: readonly Scatterer[];
  blockers?: readonly Blocker[];
  /** Highest number of wall reflections per path, integer 0..MAX_REFLECTION_ORDER (default 2). */
  maxReflectionOrder?: number;
  /** Keep at most this many paths, strongest first (default: all). */
  maxPaths?: number;
  /** Drop paths more than this many dB below the strongest (default: none dropped). */
  dynamicRangeDb?: number;
  /** Specific gas attenuation in dB/km applied over each unfolded length (default 0). */
  gasAttenuationDbPerKm?: number;
  /** Edge diffraction by the UTD at the wedges of the walls (edges.ts, diffraction.ts): single, and with one reflection when maxReflectionOrder >= 1 (default false). */
  diffraction?: boolean;
  /** Diffuse scattering from the walls (directive model of Degli-Esposti et al. 2007, diffuse.ts); absent: none. */
  diffuse?: DiffuseSettings;
  /** How reflections are found: "image" (the image method, every path; default) or "launch" (ray launching refined by the image method, launch.ts). */
  method?: 'image' | 'launch';
  /** Ray launching settings (used when method is "launch"). */
  launch?: LaunchSettings;
}

/**
 * One problem of a scene: dotted path, message naming the value and what is allowed, severity.
 * @example validateScene({ maxReflectionOrder: 9 }) // [{ path: 'scene.maxReflectionOrder', message: 'must be an integer from 0 to 3, got 9', severity: 'error' }]
 */
export interface SceneProblem {
  path: string;
  message: string;
  severity: 'error' | 'warning';
}

/**
 * Where the terminals are and at which carrier, for the checks that need them.
 * @example validateScene({ walls: [{ vertices: [[0, 0], [10, 0]] }] }, { transmitter: [0, 5, 1], receiver: [5, 0, 1] }) // [{ path: 'transmitter.position', message: 'must have z = 0 in a 2-D scene, got z = 1', severity: 'error' }, { path: 'receiver.position', ... }]
 */
export interface SceneContext {
  transmitter?: Readonly<Vec3>;
  receiver?: Readonly<Vec3>;
  /** With a carrier, materials outside their validated range give warnings. */
  carrierHz?: number;
  /** Dotted-path prefixes (defaults "scene", "transmitter.position", "receiver.position"). */
  scenePath?: string;
  transmitterPath?: string;
  receiverPath?: string;
}

/**
 * The highest reflection order accepted, by the tracer, the scene validation and the scenario
 * schema alike (image candidates grow as W (W - 1)^(order - 1) for W walls: order 3 keeps a
 * 20-wall scene at 20 + 20 x 19 + 20 x 19^2 = 7620 candidates per trace).
 * @example MAX_REFLECTION_ORDER // 3
 */
export const MAX_REFLECTION_ORDER = 3;
/**
 * Default `maxReflectionOrder`.
 * @example DEFAULT_REFLECTION_ORDER // 2
 */
export const DEFAULT_REFLECTION_ORDER = 2;
/**
 * Coplanarity tolerance: a vertex may sit this far from the wall's plane, times max(1, extent in m).
 * @example COPLANAR_TOLERANCE_M // 1e-6
 */
export const COPLANAR_TOLERANCE_M = 1e-6;
/**
 * Points per ring used for a cylinder's silhouette in 3-D (an inscribed polygon, 0.5 % of r inside).
 * @example 1 - Math.cos(Math.PI / CYLINDER_RING_POINTS) // 0.0048: the inscribed polygon reaches 0.5 % of r inside the circle
 */
export const CYLINDER_RING_POINTS = 32;

const fmt = (v: unknown): string => (typeof v === 'number' ? String(v) : (JSON.stringify(v) ?? String(v)));

/**
 * Validate a scene (and, with a context, the terminals against it); returns every problem,
 * never throws for scene content.
 * @example validateScene({ walls: [{ vertices: [[0, 0], [0, 0]] }] })
 * // [{ path: 'scene.walls[0].vertices', message: 'the two ends coincide at [0,0]: a 2-D wall needs length > 0', severity: 'error' }]
 */
export function validateScene(scene: Scene, context: SceneContext = {}): SceneProblem[] {
  return analyseScene(scene, context).problems;
}

interface Analysis {
  problems: SceneProblem[];
  is2D: boolean;
}

function analyseScene(scene: Scene, ctx: SceneContext): Analysis {
  const problems: SceneProblem[] = [];
  const sp = ctx.scenePath ?? 'scene';
  const err = (path: string, message: string): void => {
    problems.push({ path, message, severity: 'error' });
  };
  if (typeof scene !== 'object' || scene === null) {
    err(sp, `must be an object, got ${fmt(scene)}`);
    return { problems, is2D: false };
  }
  const walls = scene.walls ?? [];
  const scatterers = scene.scatterers ?? [];
  const blockers = scene.blockers ?? [];
  for (const [key, v] of [
    ['walls', scene.walls],
    ['scatterers', scene.scatterers],
    ['blockers', scene.blockers],
  ] as const) {
    if (v !== undefined && !Array.isArray(v)) err(`${sp}.${key}`, `must be an array, got ${fmt(v)}`);
  }
  const is2D = sceneIs2D(scene);
  const dim = is2D ? 2 : 3;
  const dimWord = is2D ? 'a 2-D scene (every wall vertex has 2 coordinates)' : 'a 3-D scene';
  const checkPoint = (path: string, p: unknown): p is ScenePoint => {
    if (!Array.isArray(p) || (p.length !== 2 && p.length !== 3) || !p.every((x) => typeof x === 'number' && Number.isFinite(x))) {
      err(path, `must be [x, y] or [x, y, z] of finite numbers, got ${fmt(p)}`);
      return false;
    }
    if (p.length !== dim) {
      err(path, `has ${p.length} coordinates in ${dimWord}: 2-D and 3-D coordinates cannot be mixed, every point needs ${dim}`);
      return false;
    }
    return true;
  };

  if (Array.isArray(walls)) {
    walls.forEach((wall, i) => {
      const wp = `${sp}.walls[${i}]`;
      if (typeof wall !== 'object' || wall === null) {
        err(wp, `must be an object { vertices, material?, reflectionLossDb? }, got ${fmt(wall)}`);
        return;
      }
      const vs = wall.vertices;
      if (!Array.isArray(vs)) {
        err(`${wp}.vertices`, `must be an array of points, got ${fmt(vs)}`);
      } else {
        let ok = true;
        vs.forEach((v, j) => {
          if (!checkPoint(`${wp}.vertices[${j}]`, v)) ok = false;
        });
        if (ok) {
          const g = wallGeometry(vs, is2D);
          if (typeof g === 'string') err(`${wp}.vertices`, g);
        }
      }
      if (wall.thicknessM !== undefined) {
        if (!(typeof wall.thicknessM === 'number' && Number.isFinite(wall.thicknessM) && wall.thicknessM > 0))
          err(`${wp}.thicknessM`, `must be a finite number > 0 (m), got ${fmt(wall.thicknessM)}`);
        else if (wall.reflectionLossDb !== undefined)
          err(`${wp}.thicknessM`, 'a wall with reflectionLossDb has no permittivity to transmit through; give a material instead');
        else if (wall.material === 'metal') err(`${wp}.thicknessM`, 'a metal wall (a perfect conductor) transmits nothing; leave thicknessM out');
      }
      if (
        wall.reflectionLossDb !== undefined &&
        !(typeof wall.reflectionLossDb === 'number' && Number.isFinite(wall.reflectionLossDb) && wall.reflectionLossDb >= 0)
      ) {
        err(`${wp}.reflectionLossDb`, `must be a finite number >= 0 (dB), got ${fmt(wall.reflectionLossDb)}`);
      }
      const m = wall.material;
      if (m !== undefined) {
        if (typeof m === 'string') {
          if (!(MATERIAL_NAMES as readonly string[]).includes(m))
            err(`${wp}.material`, `must be one of ${MATERIAL_NAMES.join(', ')} or { relativePermittivity, conductivitySpm }, got ${fmt(m)}`);
        } else {
          const p = customMaterialProblem(m);
          if (p !== undefined) err(`${wp}.material`, p);
        }
      }
      if (
        ctx.carrierHz !== undefined &&
        Number.isFinite(ctx.carrierHz) &&
        ctx.carrierHz > 0 &&
        wall.reflectionLossDb === undefined &&
        (m === undefined || (typeof m === 'string' && (MATERIAL_NAMES as readonly string[]).includes(m)))
      ) {
        const r = resolveSurface(m === undefined ? {} : { material: m as MaterialSpec }, ctx.carrierHz);
        if (r.warning !== undefined) problems.push({ path: `${wp}.material`, message: r.warning, severity: 'warning' });
      }
    });
  }

  if (Array.isArray(scatterers)) {
    scatterers.forEach((s, i) => {
      const p = `${sp}.scatterers[${i}]`;
      if (typeof s !== 'object' || s === null) {
        err(p, `must be an object { position, rcsM2 }, got ${fmt(s)}`);
        return;
      }
      checkPoint(`${p}.position`, s.position);
      if (!(typeof s.rcsM2 === 'number' && Number.isFinite(s.rcsM2) && s.rcsM2 > 0))
        err(`${p}.rcsM2`, `must be a finite number > 0 (m^2), got ${fmt(s.rcsM2)}`);
    });
  }

  if (Array.isArray(blockers)) {
    blockers.forEach((b, i) => {
      const p = `${sp}.blockers[${i}]`;
      if (typeof b !== 'object' || b === null) {
        err(p, `must be a box or cylinder object, got ${fmt(b)}`);
        return;
      }
      if (b.shape === 'box') {
        const okMin = checkPoint(`${p}.min`, b.min),
          okMax = checkPoint(`${p}.max`, b.max);
        if (okMin && okMax) {
          for (let k = 0; k < dim; k++) {
            if (!(b.min[k]! < b.max[k]!)) {
              err(`${p}.max`, `must exceed min in every coordinate, got min ${fmt(b.min)} and max ${fmt(b.max)}`);
              break;
            }
          }
        }
      } else if (b.shape === 'cylinder') {
        checkPoint(`${p}.base`, b.base);
        if (!(typeof b.radiusM === 'number' && Number.isFinite(b.radiusM) && b.radiusM > 0))
          err(`${p}.radiusM`, `must be a finite number > 0 (m), got ${fmt(b.radiusM)}`);
        if (!(typeof b.heightM === 'number' && Number.isFinite(b.heightM) && b.heightM > 0))
          err(`${p}.heightM`, `must be a finite number > 0 (m), got ${fmt(b.heightM)}`);
      } else {
        err(`${p}.shape`, `must be "box" or "cylinder", got ${fmt((b as { shape?: unknown }).shape)}`);
        return;
      }
      if (b.lossDb !== undefined && !(typeof b.lossDb === 'number' && Number.isFinite(b.lossDb) && b.lossDb >= 0))
        err(`${p}.lossDb`, `must be a finite number >= 0 (dB), got ${fmt(b.lossDb)}`);
    });
  }

  const order = scene.maxReflectionOrder;
  if (order !== undefined && !(Number.isInteger(order) && order >= 0 && order <= MAX_REFLECTION_ORDER)) {
    err(`${sp}.maxReflectionOrder`, `must be an integer from 0 to ${MAX_REFLECTION_ORDER}, got ${fmt(order)}`);
  }
  if (scene.lineOfSight !== undefined && typeof scene.lineOfSight !== 'boolean')
    err(`${sp}.lineOfSight`, `must be true or false, got ${fmt(scene.lineOfSight)}`);
  if (scene.maxPaths !== undefined && !(Number.isInteger(scene.maxPaths) && scene.maxPaths >= 1))
    err(`${sp}.maxPaths`, `must be an integer >= 1, got ${fmt(scene.maxPaths)}`);
  if (scene.dynamicRangeDb !== undefined && !(typeof scene.dynamicRangeDb === 'number' && scene.dynamicRangeDb > 0))
    err(`${sp}.dynamicRangeDb`, `must be a number > 0 (dB), got ${fmt(scene.dynamicRangeDb)}`);
  if (
    scene.gasAttenuationDbPerKm !== undefined &&
    !(typeof scene.gasAttenuationDbPerKm === 'number' && Number.isFinite(scene.gasAttenuationDbPerKm) && scene.gasAttenuationDbPerKm >= 0)
  ) {
    err(`${sp}.gasAttenuationDbPerKm`, `must be a finite number >= 0 (dB/km), got ${fmt(scene.gasAttenuationDbPerKm)}`);
  }

  if (scene.diffraction !== undefined && typeof scene.diffraction !== 'boolean')
    err(`${sp}.diffraction`, `must be true or false, got ${fmt(scene.diffraction)}`);

  problems.push(...diffuseProblems(scene, sp, is2D));
  if (scene.method !== undefined && scene.method !== 'image' && scene.method !== 'launch')
    err(`${sp}.method`, `must be "image" or "launch", got ${fmt(scene.method)}`);
  if (scene.launch !== undefined)
    for (const [key, message] of launchSettingsProblems(scene.launch)) err(key === '' ? `${sp}.launch` : `${sp}.launch.${key}`, message);

  checkTerminals(scene, is2D, ctx, problems);
  return { problems, is2D };
}

/** Problems of the terminals against a scene (inside a blocker, coinciding, z != 0 in 2-D). */
function checkTerminals(scene: Scene, is2D: boolean, ctx: SceneContext, problems: SceneProblem[]): void {
  const sp = ctx.scenePath ?? 'scene';
  const err = (path: string, message: string): void => {
    problems.push({ path, message, severity: 'error' });
  };
  const blockers = scene.blockers ?? [];
  const scatterers = scene.scatterers ?? [];
  const terminals: [string, Readonly<Vec3> | undefined][] = [
    [ctx.transmitterPath ?? 'transmitter.position', ctx.transmitter],
    [ctx.receiverPath ?? 'receiver.position', ctx.receiver],
  ];
  for (const [path, pos] of terminals) {
    if (pos === undefined) continue;
    if (!Array.isArray(pos) || pos.length !== 3 || !pos.every((x) => Number.isFinite(x))) {
      err(path, `must be [x, y, z] of finite numbers, got ${fmt(pos)}`);
      continue;
    }
    if (is2D && pos[2] !== 0) err(path, `must have z = 0 in a 2-D scene, got z = ${pos[2]}`);
    if (Array.isArray(blockers)) {
      blockers.forEach((b, i) => {
        if (pointInsideBlocker(b, pos, is2D)) err(path, `${fmt(pos)} is inside ${sp}.blockers[${i}] (a ${b.shape}); a terminal must be outside every blocker`);
      });
    }
    if (Array.isArray(scatterers)) {
      scatterers.forEach((s, i) => {
        if (
          Array.isArray(s?.position) &&
          s.position.length >= 2 &&
          Math.hypot(s.position[0]! - pos[0], s.position[1]! - pos[1], (s.position[2] ?? 0) - pos[2]) === 0
        ) {
          err(`${sp}.scatterers[${i}].position`, `coincides with the terminal at ${fmt(pos)}; a scatterer must be away from both terminals`);
        }
      });
    }
  }
  const tx = ctx.transmitter,
    rx = ctx.receiver;
  if (tx !== undefined && rx !== undefined && Array.isArray(tx) && Array.isArray(rx) && tx[0] === rx[0] && tx[1] === rx[1] && tx[2] === rx[2]) {
    err(ctx.receiverPath ?? 'receiver.position', `coincides with the transmitter at ${fmt(tx)}; the two terminals must be apart`);
  }
}

/**
 * True when the scene is 2-D (see the module comment).
 * @example sceneIs2D({ walls: [{ vertices: [[0, 0], [1, 0]] }] }) // true
 */
export function sceneIs2D(scene: Scene): boolean {
  const walls = Array.isArray(scene.walls) ? scene.walls : [];
  if (walls.length > 0)
    return walls.every((w) => Array.isArray(w?.vertices) && w.vertices.length > 0 && w.vertices.every((v: unknown) => Array.isArray(v) && v.length === 2));
  const pts: unknown[] = [];
  for (const s of Array.isArray(scene.scatterers) ? scene.scatterers : []) pts.push(s?.position);
  for (const b of Array.isArray(scene.blockers) ? scene.blockers : []) {
    if (b?.shape === 'box') pts.push(b.min, b.max);
    else pts.push((b as CylinderBlocker | undefined)?.base);
  }
  return pts.length > 0 && pts.every((p) => Array.isArray(p) && p.length === 2);
}

interface WallGeometry {
  normal: Vec3;
  offset: number;
  /** 3-D only */
  origin?: Vec3;
  e1?: Vec3;
  e2?: Vec3;
  uv?: number[];
  /** 2-D only */
  seg?: [number, number, number, number, number];
}

/** Plane and polygon of a wall, or a message saying why it is degenerate. */
function wallGeometry(vs: readonly ScenePoint[], is2D: boolean): WallGeometry | string {
  if (is2D) {
    if (vs.length !== 2) return `a 2-D wall is a segment with exactly 2 vertices [[x, y], [x, y]], got ${vs.length}`;
    const [a, b] = vs as [ScenePoint, ScenePoint];
    const dx = b[0]! - a[0]!,
      dy = b[1]! - a[1]!;
    const len = Math.hypot(dx, dy);
    if (!(len > 1e-9)) return `the two ends coincide at ${fmt(a)}: a 2-D wall needs length > 0`;
    const normal: Vec3 = [-dy / len, dx / len, 0];
    return { normal, offset: normal[0] * a[0]! + normal[1] * a[1]!, seg: [a[0]!, a[1]!, dx / len, dy / len, len] };
  }
  if (vs.length < 3) return `a 3-D wall is a polygon with at least 3 vertices [[x, y, z], ...], got ${vs.length}`;
  // Newell's normal (robust for non-convex polygons) and centroid.
  let nx = 0,
    ny = 0,
    nz = 0,
    cx = 0,
    cy = 0,
    cz = 0,
    extent = 0;
  const n = vs.length;
  for (let i = 0; i < n; i++) {
    const p = vs[i]!,
      q = vs[(i + 1) % n]!;
    nx += (p[1]! - q[1]!) * (p[2]! + q[2]!);
    ny += (p[2]! - q[2]!) * (p[0]! + q[0]!);
    nz += (p[0]! - q[0]!) * (p[1]! + q[1]!);
    cx += p[0]! / n;
    cy += p[1]! / n;
    cz += p[2]! / n;
  }
  for (const p of vs) extent = Math.max(extent, Math.hypot(p[0]! - vs[0]![0]!, p[1]! - vs[0]![1]!, p[2]! - vs[0]![2]!));
  const area2 = Math.hypot(nx, ny, nz);
  if (!(area2 > 1e-12 * Math.max(1, extent * extent)))
    return `the ${n} vertices are collinear or coincide (area ${area2 / 2} m^2): a wall needs a polygon of non-zero area`;
  const normal: Vec3 = [nx / area2, ny / area2, nz / area2];
  const offset = normal[0] * cx + normal[1] * cy + normal[2] * cz;
  const tol = COPLANAR_TOLERANCE_M * Math.max(1, extent);
  for (let i = 0; i < n; i++) {
    const p = vs[i]!;
    const dist = normal[0] * p[0]! + normal[1] * p[1]! + normal[2] * p[2]! - offset;
    if (Math.abs(dist) > tol)
      return `vertex ${i} ${fmt(p)} is ${Math.abs(dist).toPrecision(3)} m off the mean plane of the wall: the vertices must be coplanar within ${tol.toPrecision(3)} m`;
  }
  // In-plane frame: e1 along the longest edge from vertex 0, projected into the plane.
  const o: Vec3 = [cx, cy, cz];
  let e1: Vec3 = [0, 0, 0],
    best = 0;
  for (let i = 1; i < n; i++) {
    const d: Vec3 = [vs[i]![0]! - vs[0]![0]!, vs[i]![1]! - vs[0]![1]!, vs[i]![2]! - vs[0]![2]!];
    const c = d[0] * normal[0] + d[1] * normal[1] + d[2] * normal[2];
    d[0] -= c * normal[0];
    d[1] -= c * normal[1];
    d[2] -= c * normal[2];
    const l = Math.hypot(d[0], d[1], d[2]);
    if (l > best) {
      best = l;
      e1 = [d[0] / l, d[1] / l, d[2] / l];
    }
  }
  const e2: Vec3 = [normal[1] * e1[2] - normal[2] * e1[1], normal[2] * e1[0] - normal[0] * e1[2], normal[0] * e1[1] - normal[1] * e1[0]];
  const uv: number[] = [];
  for (const p of vs) {
    const d0 = p[0]! - o[0],
      d1 = p[1]! - o[1],
      d2 = p[2]! - o[2];
    uv.push(d0 * e1[0] + d1 * e1[1] + d2 * e1[2], d0 * e2[0] + d1 * e2[1] + d2 * e2[2]);
  }
  return { normal, offset, origin: o, e1, e2, uv };
}

/**
 * True when the point is inside (or on) the blocker; 2-D blockers are unbounded in z.
 * @example pointInsideBlocker({ shape: 'cylinder', base: [0, 0, 0], radiusM: 1, heightM: 2 }, [0.5, 0, 1], false) // true
 */
export function pointInsideBlocker(b: Blocker, p: Readonly<Vec3>, is2D: boolean): boolean {
  if (b.shape === 'box') {
    if (!Array.isArray(b.min) || !Array.isArray(b.max)) return false;
    const dims = is2D ? 2 : 3;
    for (let k = 0; k < dims; k++) if (!(p[k]! >= b.min[k]! && p[k]! <= b.max[k]!)) return false;
    return true;
  }
  if (b.shape === 'cylinder') {
    if (!Array.isArray(b.base)) return false;
    if (Math.hypot(p[0] - b.base[0]!, p[1] - b.base[1]!) > b.radiusM) return false;
    return is2D || (p[2] >= b.base[2]! && p[2] <= b.base[2]! + b.heightM);
  }
  return false;
}

/**
 * A scene checked and prepared for tracing: wall planes and polygons, blocker data, surfaces per
 * carrier. Build it once per scene with `prepareScene()` and pass it to `traceScene()`.
 * @example prepareScene({ walls: [{ vertices: [[0, 0, 0], [1, 0, 0], [1, 1, 0]] }] }).planes // [0, 0, 1, 0]
 */
export class PreparedScene {
  /** The scene as given. */
  readonly scene: Scene;
  readonly is2D: boolean;
  readonly wallCount: number;
  /** [nx, ny, nz, d] per wall. */
  readonly planes: Float64Array;
  /** 3-D walls: [origin, e1, e2] per wall (9 values). */
  readonly frames: Float64Array;
  /** 3-D walls: [u, v] pairs of all polygons. */
  readonly polygons: Float64Array;
  /** 3-D walls: first pair index of wall w, length W + 1. */
  readonly polygonStart: Int32Array;
  /** 3-D walls: [uMin, uMax, vMin, vMax] per wall. */
  readonly bounds: Float64Array;
  /** 2-D walls: [ax, ay, dx, dy, length] per wall. */
  readonly segments: Float64Array;
  /** Blocker silhouette points (3-D: box corners or cylinder rings), flattened xyz; 2-D: footprint points. */
  readonly blockerPoints: Float64Array[];
  /** Bounding sphere (3-D) or circle (2-D) of each blocker: [cx, cy, cz, r]. */
  readonly blockerSpheres: Float64Array;
  readonly lineOfSight: boolean;
  readonly maxReflectionOrder: number;
  /** 1 for a wall with `thicknessM` (waves pass through it, slab.ts), 0 for an opaque one. */
  readonly transmissive: Uint8Array;
  /** True when any wall is transmissive. */
  readonly hasTransmission: boolean;
  /** Every wall's vertices, xyz (2-D: the two ends at z = 0). */
  readonly vertices: Float64Array;
  /** First vertex index of wall w, length W + 1. */
  readonly vertexStart: Int32Array;
  /** Bounding volume hierarchy over the walls' boxes (see bvh.ts). */
  readonly bvh: Bvh;
  /** 3-D: 1 per wall whose polygon is convex (every triangle), else 0; 2-D: all 1. */
  readonly convex: Uint8Array;
  /** Most vertices of one wall. */
  readonly maxWallVertices: number;
  /** Padding of the boxes in metres: 1e-8 times max(1, largest coordinate), so rounding never loses a hit. */
  readonly padM: number;
  private readonly surfaceCache = new Map<number, ResolvedSurface[]>();
  // the segment of the running segmentHitsWall query, read by its long-lived visitor (no closure per query);
  // transmissive walls (thicknessM) let the segment through and are accounted by segmentTransmissions
  private qax = 0;
  private qay = 0;
  private qaz = 0;
  private qbx = 0;
  private qby = 0;
  private qbz = 0;
  private qSkipA = -1;
  private qSkipB = -1;
  private readonly crossVisitor = (w: number): boolean =>
    w !== this.qSkipA &&
    w !== this.qSkipB &&
    this.transmissive[w] !== 1 &&
    this.segmentCrossesWall(w, this.qax, this.qay, this.qaz, this.qbx, this.qby, this.qbz);

  /** Use `prepareScene()`; the constructor trusts a validated scene. */
  constructor(scene: Scene, is2D: boolean) {
    this.scene = scene;
    this.is2D = is2D;
    const walls = scene.walls ?? [];
    const W = walls.length;
    this.wallCount = W;
    this.planes = new Float64Array(4 * W);
    this.frames = new Float64Array(9 * W);
    this.bounds = new Float64Array(4 * W);
    this.segments = new Float64Array(5 * W);
    this.polygonStart = new Int32Array(W + 1);
    const uvAll: number[] = [];
    walls.forEach((wall, w) => {
      const g = wallGeometry(wall.vertices, is2D) as WallGeometry;
      this.planes.set([g.normal[0], g.normal[1], g.normal[2], g.offset], 4 * w);
      this.polygonStart[w] = uvAll.length / 2;
      if (g.seg !== undefined) this.segments.set(g.seg, 5 * w);
      if (g.uv !== undefined) {
        this.frames.set([...g.origin!, ...g.e1!, ...g.e2!], 9 * w);
        let uMin = Infinity,
          uMax = -Infinity,
          vMin = Infinity,
          vMax = -Infinity;
        for (let i = 0; i < g.uv.length; i += 2) {
          uMin = Math.min(uMin, g.uv[i]!);
          uMax = Math.max(uMax, g.uv[i]!);
          vMin = Math.min(vMin, g.uv[i + 1]!);
          vMax = Math.max(vMax, g.uv[i + 1]!);
        }
        this.bounds.set([uMin, uMax, vMin, vMax], 4 * w);
        uvAll.push(...g.uv);
      }
    });
    this.polygonStart[W] = uvAll.length / 2;
    this.polygons = Float64Array.from(uvAll);
    this.vertexStart = new Int32Array(W + 1);
    let nv = 0;
    walls.forEach((wall, w) => {
      this.vertexStart[w] = nv;
      nv += wall.vertices.length;
    });
    this.vertexStart[W] = nv;
    this.vertices = new Float64Array(3 * nv);
    const boxes = new Float64Array(6 * W);
    let maxAbs = 1;
    walls.forEach((wall, w) => {
      let x0 = Infinity,
        y0 = Infinity,
        z0 = is2D ? -Infinity : Infinity,
        x1 = -Infinity,
        y1 = -Infinity,
        z1 = is2D ? Infinity : -Infinity;
      wall.vertices.forEach((v, j) => {
        const x = v[0]!,
          y = v[1]!,
          z = is2D ? 0 : v[2]!;
        this.vertices.set([x, y, z], 3 * (this.vertexStart[w]! + j));
        x0 = Math.min(x0, x);
        x1 = Math.max(x1, x);
        y0 = Math.min(y0, y);
        y1 = Math.max(y1, y);
        if (!is2D) {
          z0 = Math.min(z0, z);
          z1 = Math.max(z1, z);
        }
        maxAbs = Math.max(maxAbs, Math.abs(x), Math.abs(y), Math.abs(z));
      });
      boxes.set([x0, y0, z0, x1, y1, z1], 6 * w);
    });
    this.padM = 1e-8 * maxAbs;
    this.bvh = new Bvh(boxes);
    this.convex = new Uint8Array(W).fill(1);
    let maxV = 0;
    for (let w = 0; w < W; w++) {
      const s = this.polygonStart[w]!,
        e = this.polygonStart[w + 1]!,
        n = e - s,
        poly = this.polygons;
      maxV = Math.max(maxV, walls[w]!.vertices.length);
      if (is2D) continue;
      let pos = 0,
        neg = 0;
      for (let i = 0; i < n; i++) {
        const a = s + i,
          b = s + ((i + 1) % n),
          c = s + ((i + 2) % n);
        const cr =
          (poly[2 * b]! - poly[2 * a]!) * (poly[2 * c + 1]! - poly[2 * b + 1]!) - (poly[2 * b + 1]! - poly[2 * a + 1]!) * (poly[2 * c]! - poly[2 * b]!);
        if (cr > 0) pos++;
        else if (cr < 0) neg++;
      }
      this.convex[w] = pos === 0 || neg === 0 ? 1 : 0;
    }
    this.maxWallVertices = maxV;
    const blockers = scene.blockers ?? [];
    this.blockerSpheres = new Float64Array(4 * blockers.length);
    this.blockerPoints = blockers.map((b, i) => {
      const pts = blockerSilhouettePoints(b, is2D);
      let cx = 0,
        cy = 0,
        cz = 0;
      const m = pts.length / 3;
      for (let k = 0; k < m; k++) {
        cx += pts[3 * k]! / m;
        cy += pts[3 * k + 1]! / m;
        cz += pts[3 * k + 2]! / m;
      }
      let r = 0;
      for (let k = 0; k < m; k++) r = Math.max(r, Math.hypot(pts[3 * k]! - cx, pts[3 * k + 1]! - cy, is2D ? 0 : pts[3 * k + 2]! - cz));
      if (b.shape === 'cylinder') r *= 1 / Math.cos(Math.PI / CYLINDER_RING_POINTS); // the true circle lies outside the ring polygon
      this.blockerSpheres.set([cx, cy, is2D ? 0 : cz, r], 4 * i);
      return pts;
    });
    this.transmissive = Uint8Array.from(walls, (w) => (w.thicknessM !== undefined ? 1 : 0));
    this.hasTransmission = this.transmissive.includes(1);
    this.lineOfSight = scene.lineOfSight ?? true;
    this.maxReflectionOrder = scene.maxReflectionOrder ?? DEFAULT_REFLECTION_ORDER;
  }

  /**
   * Problems of two terminal positions against this scene (validateScene's terminal checks).
   * @example
   * const ps = prepareScene({ walls: [{ vertices: [[0, 0, 0], [1, 0, 0], [1, 1, 0]] }] }); // one triangle in the plane z = 0
   * ps.terminalProblems([0, 0, 1], [0, 0, 1])
   * // [{ path: 'receiver.position', message: 'coincides with the transmitter at [0,0,1]; the two terminals must be apart', severity: 'error' }]
   */
  terminalProblems(transmitter: Readonly<Vec3>, receiver: Readonly<Vec3>): SceneProblem[] {
    const problems: SceneProblem[] = [];
    checkTerminals(this.scene, this.is2D, { transmitter, receiver }, problems);
    return problems;
  }

  /**
   * Surfaces of every wall at a carrier (cached), with material range warnings.
   * @example prepareScene({ walls: [{ vertices: [[0, 0], [1, 0]], material: 'metal' }] }).surfacesAt(28e9) // [{ surface: { kind: 'conductor' } }]
   */
  surfacesAt(carrierHz: number): ResolvedSurface[] {
    let s = this.surfaceCache.get(carrierHz);
    if (s === undefined) {
      s = (this.scene.walls ?? []).map((w) => resolveSurface(w, carrierHz));
      if (this.surfaceCache.size > 16) this.surfaceCache.clear();
      this.surfaceCache.set(carrierHz, s);
    }
    return s;
  }

  /**
   * True when the point (assumed on the wall's plane) lies inside wall w's polygon (3-D) or
   * within its segment (2-D, any height), boundary included within `tol` metres.
   * @example
   * const ps = prepareScene({ walls: [{ vertices: [[0, 0, 0], [1, 0, 0], [1, 1, 0]] }] }); // one triangle in the plane z = 0
   * [ps.insideWall(0, 0.5, 0.2, 0, 0), ps.insideWall(0, 0.2, 0.5, 0, 0)] // [true, false]: (0.2, 0.5) lies above the diagonal
   */
  insideWall(w: number, x: number, y: number, z: number, tol: number): boolean {
    if (this.is2D) {
      const s = this.segments;
      const o = 5 * w;
      const t = (x - s[o]!) * s[o + 2]! + (y - s[o + 1]!) * s[o + 3]!;
      return t >= -tol && t <= s[o + 4]! + tol;
    }
    const f = this.frames,
      fo = 9 * w;
    const dx = x - f[fo]!,
      dy = y - f[fo + 1]!,
      dz = z - f[fo + 2]!;
    const u = dx * f[fo + 3]! + dy * f[fo + 4]! + dz * f[fo + 5]!;
    const v = dx * f[fo + 6]! + dy * f[fo + 7]! + dz * f[fo + 8]!;
    const b = this.bounds,
      bo = 4 * w;
    if (u < b[bo]! - tol || u > b[bo + 1]! + tol || v < b[bo + 2]! - tol || v > b[bo + 3]! + tol) return false;
    const poly = this.polygons;
    const start = this.polygonStart[w]!,
      end = this.polygonStart[w + 1]!;
    // Crossing number, then (for points that test outside) distance to the boundary within tol.
    let inside = false;
    for (let i = start, j = end - 1; i < end; j = i++) {
      const ui = poly[2 * i]!,
        vi = poly[2 * i + 1]!,
        uj = poly[2 * j]!,
        vj = poly[2 * j + 1]!;
      if (vi > v !== vj > v && u < ((uj - ui) * (v - vi)) / (vj - vi) + ui) inside = !inside;
    }
    if (inside || tol <= 0) return inside;
    for (let i = start, j = end - 1; i < end; j = i++) {
      const ui = poly[2 * i]!,
        vi = poly[2 * i + 1]!,
        uj = poly[2 * j]!,
        vj = poly[2 * j + 1]!;
      const eu = ui - uj,
        ev = vi - vj,
        l2 = eu * eu + ev * ev;
      let t = l2 > 0 ? ((u - uj) * eu + (v - vj) * ev) / l2 : 0;
      t = t < 0 ? 0 : t > 1 ? 1 : t;
      const du = u - (uj + t * eu),
        dv = v - (vj + t * ev);
      if (du * du + dv * dv <= tol * tol) return true;
    }
    return false;
  }

  /**
   * True when the open segment a -> b crosses any opaque wall other than `skipA` and `skipB` (use
   * -1 for none); walls with `thicknessM` let it through (see `segmentTransmissions`). Grazing
   * along a wall's plane does not count as crossing it.
   * @example
   * const ps = prepareScene({ walls: [{ vertices: [[0, 0, 0], [1, 0, 0], [1, 1, 0]] }] }); // one triangle in the plane z = 0
   * [ps.segmentHitsWall(0.8, 0.2, 1, 0.8, 0.2, -1, -1, -1), ps.segmentHitsWall(0.2, 0.8, 1, 0.2, 0.8, -1, -1, -1)] // [true, false]: only the first crosses the triangle
   */
  segmentHitsWall(ax: number, ay: number, az: number, bx: number, by: number, bz: number, skipA: number, skipB: number): boolean {
    this.qax = ax;
    this.qay = ay;
    this.qaz = az;
    this.qbx = bx;
    this.qby = by;
    this.qbz = bz;
    this.qSkipA = skipA;
    this.qSkipB = skipB;
    return this.bvh.forEachOnSegment(ax, ay, az, bx, by, bz, this.crossVisitor, this.padM);
  }

  /**
   * True when the open segment a -> b crosses wall w (the test of segmentHitsWall for one wall).
   * @example
   * const ps = prepareScene({ walls: [{ vertices: [[0, 0, 0], [1, 0, 0], [1, 1, 0]] }] }); // one triangle in the plane z = 0
   * ps.segmentCrossesWall(0, 0.8, 0.2, 1, 0.8, 0.2, -1) // true
   */
  segmentCrossesWall(w: number, ax: number, ay: number, az: number, bx: number, by: number, bz: number): boolean {
    const pl = this.planes;
    const eps = 1e-9;
    const o = 4 * w;
    const nx = pl[o]!,
      ny = pl[o + 1]!,
      nz = pl[o + 2]!,
      d = pl[o + 3]!;
    const fa = nx * ax + ny * ay + nz * az - d;
    const fb = nx * bx + ny * by + nz * bz - d;
    if ((fa > 0 && fb > 0) || (fa < 0 && fb < 0)) return false; // both ends on one side
    const den = fa - fb;
    if (Math.abs(den) < 1e-15) return false; // in the plane: grazing
    const t = fa / den;
    if (t <= eps || t >= 1 - eps) return false;
    return this.insideWall(w, ax + t * (bx - ax), ay + t * (by - ay), az + t * (bz - az), 0);
  }

  /**
   * The transmissive walls (other than `skipA`, `skipB`) the open segment a -> b passes through,
   * in order from a: [wall, t] pairs, t the fraction of the way (or, with `only`, the crossings of
   * those walls' planes without the polygon test, for retracing).
   * @example
   * const ps = prepareScene({ walls: [{ vertices: [[5, -5], [5, 5]], material: 'glass', thicknessM: 0.01 }] });
   * ps.segmentTransmissions(0, 0, 0, 10, 0, 0, -1, -1) // [[0, 0.5]]
   */
  segmentTransmissions(
    ax: number,
    ay: number,
    az: number,
    bx: number,
    by: number,
    bz: number,
    skipA: number,
    skipB: number,
    only?: readonly number[],
  ): [number, number][] {
    const out: [number, number][] = [];
    if (!this.hasTransmission) return out;
    const pl = this.planes,
      eps = 1e-9;
    const dx = bx - ax,
      dy = by - ay,
      dz = bz - az;
    const list = only ?? Array.from({ length: this.wallCount }, (_, w) => w);
    for (const w of list) {
      if (only === undefined && (w === skipA || w === skipB || this.transmissive[w] !== 1)) continue;
      const o = 4 * w;
      const fa = pl[o]! * ax + pl[o + 1]! * ay + pl[o + 2]! * az - pl[o + 3]!;
      const fb = pl[o]! * bx + pl[o + 1]! * by + pl[o + 2]! * bz - pl[o + 3]!;
      const den = fa - fb;
      if (Math.abs(den) < 1e-15) {
        if (only !== undefined) out.push([w, 0.5]);
        continue;
      }
      const t = fa / den;
      if (only !== undefined) {
        out.push([w, Math.min(1, Math.max(0, t))]);
        continue;
      }
      if ((fa > 0 && fb > 0) || (fa < 0 && fb < 0) || t <= eps || t >= 1 - eps) continue;
      if (this.insideWall(w, ax + t * dx, ay + t * dy, az + t * dz, 0)) out.push([w, t]);
    }
    return out.sort((p, q) => p[1] - q[1]);
  }
}

/** Silhouette sample points of a blocker (see PreparedScene.blockerPoints). */
function blockerSilhouettePoints(b: Blocker, is2D: boolean): Float64Array {
  if (b.shape === 'box') {
    const [x0, y0] = b.min as [number, number],
      [x1, y1] = b.max as [number, number];
    if (is2D) return Float64Array.of(x0, y0, 0, x1, y0, 0, x1, y1, 0, x0, y1, 0);
    const z0 = b.min[2]!,
      z1 = b.max[2]!;
    const out = new Float64Array(24);
    let k = 0;
    for (const z of [z0, z1])
      for (const y of [y0, y1])
        for (const x of [x0, x1]) {
          out[k++] = x;
          out[k++] = y;
          out[k++] = z;
        }
    return out;
  }
  const cx = b.base[0]!,
    cy = b.base[1]!;
  const rings = is2D ? [0] : [b.base[2]!, b.base[2]! + b.heightM];
  const N = CYLINDER_RING_POINTS;
  const out = new Float64Array(3 * N * rings.length);
  let k = 0;
  for (const z of rings) {
    for (let i = 0; i < N; i++) {
      const a = (2 * Math.PI * i) / N;
      out[k++] = cx + b.radiusM * Math.cos(a);
      out[k++] = cy + b.radiusM * Math.sin(a);
      out[k++] = z;
    }
  }
  return out;
}

/**
 * Validate and prepare a scene; throws RangeError listing every error (warnings are not errors).
 * @example prepareScene({ walls: [{ vertices: [[0, 5], [10, 5]] }] }).is2D // true
 */
export function prepareScene(scene: Scene): PreparedScene {
  const a = analyseScene(scene, {});
  const errors = a.problems.filter((p) => p.severity === 'error');
  if (errors.length > 0) {
    throw new RangeError(
      `prepareScene(): the scene has ${errors.length} problem${errors.length === 1 ? '' : 's'}:\n` + errors.map((p) => `${p.path}: ${p.message}`).join('\n'),
    );
  }
  return new PreparedScene(scene, a.is2D);
}
