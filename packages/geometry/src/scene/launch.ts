/**
 * Ray launching: shooting and bouncing rays with reception spheres (Ling, Chou and Lee 1989;
 * Seidel and Rappaport 1994), as the tracer's `method: 'launch'` for high orders and large
 * meshes (docs/conventions.md, "Ray launching").
 *
 * Rays leave the transmitter along the vertices of a geodesic sphere (an icosahedron whose faces
 * are split into N x N triangles, projected onto the unit sphere: 10 N^2 + 2 rays; 2-D scenes: a
 * circle of evenly spaced rays). Each ray is followed to its nearest wall (the scene's bounding
 * volume hierarchy, `Bvh.raycast`) and reflected specularly, up to `maxBounces` reflections;
 * a transmissive wall (thicknessM) both reflects the ray and lets a copy through. The receiver
 * collects a ray when it lies within alpha s / sqrt(3) of one of its segments (alpha the largest
 * angle between neighbouring rays, s the unfolded length to the receiver's foot on the ray; 2-D:
 * alpha s / 2), the radius at which neighbouring rays' spheres just cover the wavefront.
 *
 * The ray paths are approximate; only their wall sequences are kept (one per sequence:
 * duplicates removed), and each sequence is refined into the exact specular path by the image
 * method, with the same arithmetic and the same validity tests as `traceReflections`, so a path
 * found both ways is the same path bit for bit. A refined reflection point that falls outside its
 * wall but inside a coplanar one (a tessellated floor, a mesh) moves to that wall.
 */
import type { Vec3 } from '../vec3.js';
import { Bvh } from './bvh.js';
import type { PreparedScene } from './scene.js';

/**
 * The highest reflection order ray launching accepts (`scene.launch.maxBounces`).
 * @example LAUNCH_MAX_BOUNCES // 6
 */
export const LAUNCH_MAX_BOUNCES = 6;

/**
 * Default angular spacing of the launched rays, degrees (3-D: geodesic frequency 64, 40 962 rays; 2-D: 360 rays).
 * @example geodesicFrequency({}) // 64
 */
export const DEFAULT_LAUNCH_SPACING_DEG = 1;

/**
 * Most rays one trace may launch (a geodesic sphere of frequency 1000).
 * @example LAUNCH_MAX_RAYS // 10000002
 */
export const LAUNCH_MAX_RAYS = 10_000_002;

/**
 * Settings of ray launching (the `scene.launch` key): `rays` or `angularSpacingDeg` (not both)
 * and the highest reflection order.
 * @example const dense: LaunchSettings = { rays: 163842, maxBounces: 4 }; // geodesic frequency 128
 */
export interface LaunchSettings {
  /** Least number of rays: the geodesic sphere with at least this many vertices (10 N^2 + 2); 2-D: exactly this many. */
  rays?: number;
  /** Largest angle between neighbouring rays, degrees (default 1). */
  angularSpacingDeg?: number;
  /** Highest number of reflections per path, 1..LAUNCH_MAX_BOUNCES (default the scene's maxReflectionOrder). */
  maxBounces?: number;
}

// The central angle of an icosahedron's edge, atan(2): the spacing of frequency 1.
const ICOSA_EDGE_RAD = Math.atan(2);

/**
 * Geodesic frequency N of the 3-D ray sphere for the settings: the least N with 10 N^2 + 2 >=
 * `rays`, or with an icosahedron edge angle / N <= `angularSpacingDeg` (default 1 degree).
 * @example [geodesicFrequency({ rays: 1000 }), geodesicFrequency({ angularSpacingDeg: 2 })] // [10, 32]
 */
export function geodesicFrequency(settings: Readonly<LaunchSettings>): number {
  if (settings.rays !== undefined) return Math.max(1, Math.ceil(Math.sqrt((settings.rays - 2) / 10) - 1e-12));
  const alpha = ((settings.angularSpacingDeg ?? DEFAULT_LAUNCH_SPACING_DEG) * Math.PI) / 180;
  return Math.max(1, Math.ceil(ICOSA_EDGE_RAD / alpha - 1e-9));
}

/**
 * Unit ray directions and the largest angle between neighbouring rays (radians).
 * @example const s = geodesicSphere(1); [s.count, +((s.spacingRad * 180) / Math.PI).toFixed(3)] // [12, 63.435]: the icosahedron
 */
export interface RaySet {
  /** xyz per ray. */
  directions: Float64Array;
  count: number;
  /** Largest angle between two rays joined by an edge of the subdivision (2-D: 2 pi / count). */
  spacingRad: number;
}

// Icosahedron: vertices (0, +-1, +-phi) cyclically; 20 faces.
const PHI = (1 + Math.sqrt(5)) / 2;
const ICOSA_V = [
  [-1, PHI, 0],
  [1, PHI, 0],
  [-1, -PHI, 0],
  [1, -PHI, 0],
  [0, -1, PHI],
  [0, 1, PHI],
  [0, -1, -PHI],
  [0, 1, -PHI],
  [PHI, 0, -1],
  [PHI, 0, 1],
  [-PHI, 0, -1],
  [-PHI, 0, 1],
] as const;
const ICOSA_F = [
  [0, 11, 5],
  [0, 5, 1],
  [0, 1, 7],
  [0, 7, 10],
  [0, 10, 11],
  [1, 5, 9],
  [5, 11, 4],
  [11, 10, 2],
  [10, 7, 6],
  [7, 1, 8],
  [3, 9, 4],
  [3, 4, 2],
  [3, 2, 6],
  [3, 6, 8],
  [3, 8, 9],
  [4, 9, 5],
  [2, 4, 11],
  [6, 2, 10],
  [8, 6, 7],
  [9, 8, 1],
] as const;

const sphereCache = new Map<number, RaySet>();

/**
 * The geodesic sphere of frequency N: the icosahedron's faces split into N^2 triangles (points
 * a + i (b - a) / N + j (c - a) / N), projected onto the unit sphere; 10 N^2 + 2 directions, each
 * once (cached per N).
 * @example geodesicSphere(64).count // 40962
 */
export function geodesicSphere(frequency: number): RaySet {
  if (!Number.isInteger(frequency) || frequency < 1 || 10 * frequency * frequency + 2 > LAUNCH_MAX_RAYS)
    throw new RangeError(`geodesicSphere(): frequency must be an integer from 1 to 1000, got ${frequency}`);
  const hit = sphereCache.get(frequency);
  if (hit !== undefined) return hit;
  const N = frequency;
  const count = 10 * N * N + 2;
  const out = new Float64Array(3 * count);
  let n = 0;
  const put = (x: number, y: number, z: number): void => {
    const l = Math.hypot(x, y, z);
    out[3 * n] = x / l;
    out[3 * n + 1] = y / l;
    out[3 * n + 2] = z / l;
    n++;
  };
  for (const v of ICOSA_V) put(v[0], v[1], v[2]);
  // each edge's inner points once (from the face that lists it with a < b), then each face's interior
  const lerp = (a: number, b: number, c: number, i: number, j: number): void => {
    const A = ICOSA_V[a]!,
      B = ICOSA_V[b]!,
      C = ICOSA_V[c]!;
    put(
      A[0] + (i * (B[0] - A[0]) + j * (C[0] - A[0])) / N,
      A[1] + (i * (B[1] - A[1]) + j * (C[1] - A[1])) / N,
      A[2] + (i * (B[2] - A[2]) + j * (C[2] - A[2])) / N,
    );
  };
  for (const f of ICOSA_F)
    for (let e = 0; e < 3; e++) {
      const a = f[e]!,
        b = f[(e + 1) % 3]!;
      if (a < b) for (let i = 1; i < N; i++) lerp(a, b, b, i, 0);
    }
  for (const f of ICOSA_F) for (let i = 1; i < N; i++) for (let j = 1; i + j < N; j++) lerp(f[0], f[1], f[2], i, j);
  // the largest angle along an edge of the subdivision (by symmetry one face holds every kind)
  const f = ICOSA_F[0];
  const p = (i: number, j: number): Vec3 => {
    const A = ICOSA_V[f[0]],
      B = ICOSA_V[f[1]],
      C = ICOSA_V[f[2]];
    const x = A[0] + (i * (B[0] - A[0]) + j * (C[0] - A[0])) / N,
      y = A[1] + (i * (B[1] - A[1]) + j * (C[1] - A[1])) / N,
      z = A[2] + (i * (B[2] - A[2]) + j * (C[2] - A[2])) / N;
    const l = Math.hypot(x, y, z);
    return [x / l, y / l, z / l];
  };
  const angle = (a: Vec3, b: Vec3): number => 2 * Math.asin(Math.min(1, Math.hypot(a[0] - b[0], a[1] - b[1], a[2] - b[2]) / 2));
  let spacing = 0;
  for (let i = 0; i < N; i++)
    for (let j = 0; i + j < N; j++) {
      const a = p(i, j),
        b = p(i + 1, j),
        c = p(i, j + 1);
      spacing = Math.max(spacing, angle(a, b), angle(a, c), angle(b, c));
    }
  const set: RaySet = { directions: out, count, spacingRad: spacing };
  if (sphereCache.size > 8) sphereCache.clear();
  sphereCache.set(N, set);
  return set;
}

/**
 * `count` rays evenly around the horizontal circle (2-D scenes), the first along +x.
 * @example [circleRays(4).count, circleRays(4).spacingRad] // [4, 1.5708]: 90 degrees apart
 */
export function circleRays(count: number): RaySet {
  if (!Number.isInteger(count) || count < 3 || count > LAUNCH_MAX_RAYS)
    throw new RangeError(`circleRays(): count must be an integer from 3 to ${LAUNCH_MAX_RAYS}, got ${count}`);
  const out = new Float64Array(3 * count);
  for (let i = 0; i < count; i++) {
    const a = (2 * Math.PI * i) / count;
    out[3 * i] = Math.cos(a);
    out[3 * i + 1] = Math.sin(a);
  }
  return { directions: out, count, spacingRad: (2 * Math.PI) / count };
}

/**
 * The rays a scene launches with these settings: the geodesic sphere (3-D) or the circle (2-D:
 * `rays` rays, else 360 / angularSpacingDeg rounded up).
 * @example raysFor(prepareScene({ walls: [{ vertices: [[0, 5], [9, 5]] }] }), { angularSpacingDeg: 2 }).count // 180
 */
export function raysFor(ps: PreparedScene, settings: Readonly<LaunchSettings>): RaySet {
  if (!ps.is2D) return geodesicSphere(geodesicFrequency(settings));
  if (settings.rays !== undefined) return circleRays(Math.max(3, Math.ceil(settings.rays)));
  return circleRays(Math.max(3, Math.ceil(360 / (settings.angularSpacingDeg ?? DEFAULT_LAUNCH_SPACING_DEG) - 1e-9)));
}

/**
 * Problems of launch settings, as [key, message] pairs (empty when valid).
 * @example launchSettingsProblems({ rays: 100, angularSpacingDeg: 1 }) // [['rays', 'give rays or angularSpacingDeg, not both']]
 */
export function launchSettingsProblems(s: Readonly<LaunchSettings>): [string, string][] {
  const out: [string, string][] = [];
  const fmt = (v: unknown): string => (typeof v === 'number' ? String(v) : (JSON.stringify(v) ?? String(v)));
  if (typeof s !== 'object' || s === null) return [['', `must be an object { rays?, angularSpacingDeg?, maxBounces? }, got ${fmt(s)}`]];
  if (s.rays !== undefined && s.angularSpacingDeg !== undefined) out.push(['rays', 'give rays or angularSpacingDeg, not both']);
  if (s.rays !== undefined && !(Number.isInteger(s.rays) && s.rays >= 12 && s.rays <= LAUNCH_MAX_RAYS))
    out.push(['rays', `must be an integer from 12 to ${LAUNCH_MAX_RAYS}, got ${fmt(s.rays)}`]);
  if (s.angularSpacingDeg !== undefined && !(typeof s.angularSpacingDeg === 'number' && s.angularSpacingDeg >= 0.0637 && s.angularSpacingDeg <= 30))
    out.push(['angularSpacingDeg', `must be a number from 0.0637 to 30 (degrees), got ${fmt(s.angularSpacingDeg)}`]);
  if (s.maxBounces !== undefined && !(Number.isInteger(s.maxBounces) && s.maxBounces >= 1 && s.maxBounces <= LAUNCH_MAX_BOUNCES))
    out.push(['maxBounces', `must be an integer from 1 to ${LAUNCH_MAX_BOUNCES}, got ${fmt(s.maxBounces)}`]);
  return out;
}

/**
 * The launcher's view of the walls: the few walls whose box spans much of the scene (a ground
 * plane) are tested against every ray first, outside the hierarchy (they would make every node
 * on their way to the root as large as the scene); the rest go into a hierarchy of their own.
 */
interface LaunchIndex {
  large: Int32Array;
  bvh: Bvh;
  /** The hierarchy's primitive -> wall index. */
  wall: Int32Array;
}

/** Most walls tested outside the hierarchy. */
const MAX_LARGE = 8;
/** A wall is large when its box's half surface (2-D: half perimeter) exceeds this share of the scene's. */
const LARGE_SHARE = 0.2;
const indexCache = new WeakMap<PreparedScene, LaunchIndex>();

function launchIndex(ps: PreparedScene): LaunchIndex {
  let idx = indexCache.get(ps);
  if (idx !== undefined) return idx;
  const W = ps.wallCount,
    boxes = ps.bvh.boxes,
    root = ps.bvh.nodeBounds;
  const measure = (b: Float64Array, o: number): number => {
    const x = b[o + 3]! - b[o]!,
      y = b[o + 4]! - b[o + 1]!,
      z = b[o + 5]! - b[o + 2]!;
    return ps.is2D ? x + y : x * y + y * z + z * x;
  };
  const whole = W > 0 ? measure(root, 0) : 0;
  const share = Array.from({ length: W }, (_, w) => (whole > 0 ? measure(boxes, 6 * w) / whole : 0));
  const large = [...share.keys()]
    .filter((w) => share[w]! > LARGE_SHARE)
    .sort((a, b) => share[b]! - share[a]! || a - b)
    .slice(0, MAX_LARGE)
    .sort((a, b) => a - b);
  if (large.length === 0) idx = { large: new Int32Array(0), bvh: ps.bvh, wall: Int32Array.from({ length: W }, (_, w) => w) };
  else {
    const isLarge = new Set(large);
    const rest = [...share.keys()].filter((w) => !isLarge.has(w));
    const sub = new Float64Array(6 * rest.length);
    rest.forEach((w, i) => sub.set(boxes.subarray(6 * w, 6 * w + 6), 6 * i));
    idx = { large: Int32Array.from(large), bvh: new Bvh(sub), wall: Int32Array.from(rest) };
  }
  indexCache.set(ps, idx);
  return idx;
}

/** Most pass-throughs of transmissive walls followed per ray (each one splits the ray in two). */
const MAX_PASSES = 8;

/**
 * Shoots the rays of one trace; holds the ray state read by the long-lived hit callback, so the
 * per-ray loop allocates nothing.
 */
class Launcher {
  private readonly stack = new Int32Array(256);
  private readonly stackT = new Float64Array(256);
  private readonly tOut = new Float64Array(1);
  private readonly seq: Int32Array;
  private rx0 = 0;
  private rx1 = 0;
  private rx2 = 0;
  private k = 0;
  private maxB = 0;
  private readonly tMin: number;
  readonly found = new Map<string, number[]>();
  private readonly index: LaunchIndex;

  constructor(private readonly ps: PreparedScene) {
    this.index = launchIndex(ps);
    this.seq = new Int32Array(LAUNCH_MAX_BOUNCES);
    this.tMin = 100 * ps.padM; // a ray never legitimately meets a wall within 1e-6 m (per metre of scene size) of its start
  }

  /**
   * Nearest wall hit by the ray o + t u (t > tMin), its t in tOut[0] (Infinity for none); -1 for
   * none. A closest-hit traversal of the scene's hierarchy (its public arrays, bvh.ts) with the
   * ray's inverse direction computed once, near child first, subtrees beyond the best hit skipped:
   * the launcher's one hot loop, so the slab test is written out here.
   */
  private closestHit(ox: number, oy: number, oz: number, ux: number, uy: number, uz: number, last: number): number {
    const idx = this.index,
      bvh = idx.bvh,
      map = idx.wall,
      large = idx.large,
      b = bvh.nodeBounds,
      first = bvh.nodeFirst,
      count = bvh.nodeCount,
      order = bvh.order,
      stack = this.stack,
      st = this.stackT,
      pl = this.ps.planes,
      pad = this.ps.padM,
      tMin = this.tMin;
    // 1 / 0 = Infinity: the slab of an axis the ray runs along is all or nothing (NaN compares false and restricts nothing)
    const iu = 1 / ux,
      iv = 1 / uy,
      iw = 1 / uz;
    let best = -1,
      tBest = Infinity,
      top = 0;
    for (let i = 0; i < large.length; i++) {
      const w = large[i]!;
      if (w === last) continue;
      const o = 4 * w;
      const nx = pl[o]!,
        ny = pl[o + 1]!,
        nz = pl[o + 2]!;
      const den = nx * ux + ny * uy + nz * uz;
      if (den === 0) continue;
      const t = (pl[o + 3]! - (nx * ox + ny * oy + nz * oz)) / den;
      if (!(t > tMin) || t >= tBest) continue;
      if (this.ps.insideWall(w, ox + t * ux, oy + t * uy, oz + t * uz, 0)) {
        tBest = t;
        best = w;
      }
    }
    if (bvh.size === 0) {
      this.tOut[0] = tBest;
      return best;
    }
    stack[top] = 0;
    st[top++] = 0;
    while (top > 0) {
      top--;
      if (st[top]! > tBest) continue;
      let n = stack[top]!;
      for (;;) {
        const f = first[n]!;
        if (f >= 0) {
          for (let i = f, e = f + count[n]!; i < e; i++) {
            const w = map[order[i]!]!;
            if (w === last) continue;
            const o = 4 * w;
            const nx = pl[o]!,
              ny = pl[o + 1]!,
              nz = pl[o + 2]!;
            const den = nx * ux + ny * uy + nz * uz;
            if (den === 0) continue; // along the plane: grazing
            const t = (pl[o + 3]! - (nx * ox + ny * oy + nz * oz)) / den;
            if (!(t > tMin) || t >= tBest) continue;
            if (this.ps.insideWall(w, ox + t * ux, oy + t * uy, oz + t * uz, 0)) {
              tBest = t;
              best = w;
            }
          }
          break;
        }
        const c1 = n + 1,
          c2 = count[n]!;
        const e1 = slabEntry(b, 6 * c1, ox, oy, oz, iu, iv, iw, pad, tBest),
          e2 = slabEntry(b, 6 * c2, ox, oy, oz, iu, iv, iw, pad, tBest);
        if (e1 === Infinity && e2 === Infinity) break;
        if (e1 <= e2) {
          if (e2 !== Infinity) {
            stack[top] = c2;
            st[top++] = e2;
          }
          n = c1;
        } else {
          if (e1 !== Infinity) {
            stack[top] = c1;
            st[top++] = e1;
          }
          n = c2;
        }
      }
    }
    this.tOut[0] = tBest;
    return best;
  }

  run(tx: Readonly<Vec3>, rx: Readonly<Vec3>, rays: RaySet, maxBounces: number): void {
    this.rx0 = rx[0];
    this.rx1 = rx[1];
    this.rx2 = rx[2];
    this.k = this.ps.is2D ? rays.spacingRad / 2 : rays.spacingRad / Math.sqrt(3);
    this.maxB = maxBounces;
    const d = rays.directions;
    for (let i = 0; i < rays.count; i++) this.shoot(tx[0], tx[1], tx[2], d[3 * i]!, d[3 * i + 1]!, d[3 * i + 2]!, 0, 0, -1, 0);
  }

  /** Follow one ray from o along u (unit), `s0` metres unfolded so far, after `depth` reflections. */
  private shoot(ox: number, oy: number, oz: number, ux: number, uy: number, uz: number, s0: number, depth: number, last: number, passes: number): void {
    const ps = this.ps,
      pl = ps.planes;
    for (;;) {
      const w = this.closestHit(ox, oy, oz, ux, uy, uz, last);
      const L = this.tOut[0]!;
      if (depth >= 1) this.receive(ox, oy, oz, ux, uy, uz, s0, L, depth);
      if (w < 0) return;
      const hx = ox + L * ux,
        hy = oy + L * uy,
        hz = oz + L * uz;
      // through a transmissive wall without a reflection, even after the last one
      if (ps.transmissive[w] === 1 && passes < MAX_PASSES) this.shoot(hx, hy, hz, ux, uy, uz, s0 + L, depth, w, passes + 1);
      if (depth === this.maxB) return;
      this.seq[depth] = w;
      const o = 4 * w,
        nx = pl[o]!,
        ny = pl[o + 1]!,
        nz = pl[o + 2]!;
      const dn = 2 * (ux * nx + uy * ny + uz * nz);
      ux -= dn * nx;
      uy -= dn * ny;
      uz -= dn * nz;
      ox = hx;
      oy = hy;
      oz = hz;
      s0 += L;
      depth++;
      last = w;
    }
  }

  /** Keep the ray's wall sequence when the receiver's sphere meets the segment o + t u, 0 <= t <= L. */
  private receive(ox: number, oy: number, oz: number, ux: number, uy: number, uz: number, s0: number, L: number, depth: number): void {
    const vx = this.rx0 - ox,
      vy = this.rx1 - oy,
      vz = this.rx2 - oz;
    const t = vx * ux + vy * uy + vz * uz;
    if (t < 0 || t > L) return;
    const r = this.k * (s0 + t);
    if (vx * vx + vy * vy + vz * vz - t * t > r * r) return;
    const seq = Array.from(this.seq.subarray(0, depth));
    const key = seq.join(',');
    if (!this.found.has(key)) this.found.set(key, seq);
  }
}

/**
 * The wall sequences of the rays the receiver collects (duplicates removed), before refinement:
 * each a list of wall indices from the transmitter.
 * @example
 * const ps = prepareScene({ walls: [{ vertices: [[-5, 5], [15, 5]] }] }); // 2-D: one wall along y = 5
 * launchSequences(ps, [0, 0, 0], [10, 0, 0], { rays: 3600, maxBounces: 1 }) // [[0]]
 */
export function launchSequences(ps: PreparedScene, tx: Readonly<Vec3>, rx: Readonly<Vec3>, settings: Readonly<LaunchSettings>): number[][] {
  const maxBounces = settings.maxBounces ?? ps.maxReflectionOrder;
  if (!Number.isInteger(maxBounces) || maxBounces < 0 || maxBounces > LAUNCH_MAX_BOUNCES)
    throw new RangeError(`launchSequences(): maxBounces must be an integer from 0 to ${LAUNCH_MAX_BOUNCES}, got ${maxBounces}`);
  if (maxBounces === 0 || ps.wallCount === 0) return [];
  const l = new Launcher(ps);
  l.run(tx, rx, raysFor(ps, settings), maxBounces);
  return [...l.found.values()];
}

/**
 * Refine a wall sequence into the exact specular path by the image method: the reflection points
 * (fresh copies, from the transmitter), or undefined when the sequence yields no valid path (the
 * tests of `traceReflections`). `walls` is updated in place when a reflection point moves to a
 * coplanar wall (see the module comment).
 * @example
 * const ps = prepareScene({ walls: [{ vertices: [[-5, 5], [15, 5]] }] });
 * refineSequence(ps, [0, 0, 0], [10, 0, 0], [0]) // [[5, 5, 0]]
 */
export function refineSequence(ps: PreparedScene, tx: Readonly<Vec3>, rx: Readonly<Vec3>, walls: number[]): Vec3[] | undefined {
  const K = walls.length;
  const pl = ps.planes;
  const images = new Float64Array(3 * (K + 1));
  const pts = new Float64Array(3 * K);
  const tol = 1e-9;
  // each move to a coplanar wall restarts the refinement; a few moves per reflection at most
  for (let attempt = 0; attempt <= 4 * K; attempt++) {
    images[0] = tx[0];
    images[1] = tx[1];
    images[2] = tx[2];
    for (let k = 0; k < K; k++) {
      const w = walls[k]!,
        o = 4 * w;
      if (k > 0 && walls[k - 1] === w) return undefined;
      const px = images[3 * k]!,
        py = images[3 * k + 1]!,
        pz = images[3 * k + 2]!;
      const nx = pl[o]!,
        ny = pl[o + 1]!,
        nz = pl[o + 2]!;
      // the arithmetic of traceReflections, term for term, so that both give the same bits
      const f = nx * px + ny * py + nz * pz - pl[o + 3]!;
      if (f === 0) return undefined;
      images[3 * k + 3] = px - 2 * f * nx;
      images[3 * k + 4] = py - 2 * f * ny;
      images[3 * k + 5] = pz - 2 * f * nz;
    }
    let qx = rx[0],
      qy = rx[1],
      qz = rx[2];
    let moved = false;
    for (let k = K; k >= 1; k--) {
      const w = walls[k - 1]!,
        o = 4 * w;
      const nx = pl[o]!,
        ny = pl[o + 1]!,
        nz = pl[o + 2]!,
        d = pl[o + 3]!;
      const ix = images[3 * k]!,
        iy = images[3 * k + 1]!,
        iz = images[3 * k + 2]!;
      const fq = nx * qx + ny * qy + nz * qz - d,
        fi = nx * ix + ny * iy + nz * iz - d;
      if (!((fq > 0 && fi < 0) || (fq < 0 && fi > 0))) return undefined;
      const s = fq / (fq - fi);
      const px = qx + s * (ix - qx),
        py = qy + s * (iy - qy),
        pz = qz + s * (iz - qz);
      if (!ps.insideWall(w, px, py, pz, tol)) {
        const other = coplanarWallAt(ps, w, px, py, pz, tol);
        if (other < 0) return undefined;
        walls[k - 1] = other;
        moved = true;
        break;
      }
      pts[3 * (k - 1)] = px;
      pts[3 * (k - 1) + 1] = py;
      pts[3 * (k - 1) + 2] = pz;
      qx = px;
      qy = py;
      qz = pz;
    }
    if (moved) continue;
    let ax = images[0]!,
      ay = images[1]!,
      az = images[2]!,
      prev = -1;
    for (let k = 0; k <= K; k++) {
      const next = k < K ? walls[k]! : -1;
      const bx = k < K ? pts[3 * k]! : rx[0],
        by = k < K ? pts[3 * k + 1]! : rx[1],
        bz = k < K ? pts[3 * k + 2]! : rx[2];
      if (ps.segmentHitsWall(ax, ay, az, bx, by, bz, prev, next)) return undefined;
      ax = bx;
      ay = by;
      az = bz;
      prev = next;
    }
    const points: Vec3[] = [];
    for (let k = 0; k < K; k++) points.push([pts[3 * k]!, pts[3 * k + 1]!, pts[3 * k + 2]!]);
    return points;
  }
  return undefined;
}

/** A wall other than w in w's plane (normals within 1e-9, offsets within 1e-6 m per metre of scene size) that holds the point, or -1. */
function coplanarWallAt(ps: PreparedScene, w: number, x: number, y: number, z: number, tol: number): number {
  const pl = ps.planes,
    o = 4 * w;
  const nx = pl[o]!,
    ny = pl[o + 1]!,
    nz = pl[o + 2]!;
  const e = 100 * ps.padM;
  let found = -1;
  ps.bvh.forEachOnSegment(
    x - e * nx,
    y - e * ny,
    z - e * nz,
    x + e * nx,
    y + e * ny,
    z + e * nz,
    (v) => {
      if (v === w) return false;
      const q = 4 * v;
      const c = nx * pl[q]! + ny * pl[q + 1]! + nz * pl[q + 2]!;
      if (Math.abs(c) < 1 - 1e-9) return false;
      if (Math.abs(pl[q]! * x + pl[q + 1]! * y + pl[q + 2]! * z - pl[q + 3]!) > e) return false;
      if (!ps.insideWall(v, x, y, z, tol)) return false;
      found = v;
      return true;
    },
    ps.padM,
  );
  return found;
}

/**
 * Specular reflection paths of order 1..maxBounces by ray launching and image-method refinement;
 * calls `emit(wallSequence, reflectionPoints)` once per distinct valid sequence, in the order of
 * the sequences' text (arrays are fresh copies). Paths it finds are those of `traceReflections`
 * (bit for bit); it may miss some (docs/conventions.md, "Ray launching").
 * @example
 * const ps = prepareScene({ walls: [{ vertices: [[-5, 5], [15, 5]] }, { vertices: [[-5, -5], [15, -5]] }] });
 * const ids: string[] = [];
 * launchReflections(ps, [0, 0, 0], [10, 0, 0], { maxBounces: 2 }, (w) => ids.push(w.join('>')));
 * ids // ['0', '0>1', '1', '1>0']
 */
export function launchReflections(
  ps: PreparedScene,
  tx: Readonly<Vec3>,
  rx: Readonly<Vec3>,
  settings: Readonly<LaunchSettings>,
  emit: (walls: number[], points: Vec3[]) => void,
): void {
  const seqs = launchSequences(ps, tx, rx, settings);
  const done = new Map<string, Vec3[]>();
  for (const seq of seqs) {
    const walls = [...seq];
    const points = refineSequence(ps, tx, rx, walls);
    if (points === undefined) continue;
    const key = walls.join(',');
    if (!done.has(key)) done.set(key, points);
  }
  const keys = [...done.keys()].sort();
  for (const key of keys) emit(key.split(',').map(Number), done.get(key)!);
}

/** Ray parameter where o + t u enters box o6 of b widened by pad (0 when inside), Infinity when it misses before tMax; (iu, iv, iw) = 1 / u. */
function slabEntry(b: Float64Array, o6: number, ox: number, oy: number, oz: number, iu: number, iv: number, iw: number, pad: number, tMax: number): number {
  let t0 = 0,
    t1 = tMax;
  let u = (b[o6]! - pad - ox) * iu,
    v = (b[o6 + 3]! + pad - ox) * iu;
  if (u > v) {
    const x = u;
    u = v;
    v = x;
  }
  if (u > t0) t0 = u;
  if (v < t1) t1 = v;
  u = (b[o6 + 1]! - pad - oy) * iv;
  v = (b[o6 + 4]! + pad - oy) * iv;
  if (u > v) {
    const x = u;
    u = v;
    v = x;
  }
  if (u > t0) t0 = u;
  if (v < t1) t1 = v;
  u = (b[o6 + 2]! - pad - oz) * iw;
  v = (b[o6 + 5]! + pad - oz) * iw;
  if (u > v) {
    const x = u;
    u = v;
    v = x;
  }
  if (u > t0) t0 = u;
  if (v < t1) t1 = v;
  return t0 <= t1 ? t0 : Infinity;
}
