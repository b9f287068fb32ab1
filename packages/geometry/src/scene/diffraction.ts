/**
 * Diffracted paths: single edge diffraction, and diffraction combined with one specular
 * reflection (before or after the edge), at the wedges of edges.ts with the UTD coefficients of
 * utd.ts.
 *
 * The diffraction point Q on an edge obeys Keller's law (the equal-angle condition: the
 * incident and diffracted rays make the same angle with the edge, on the cone about it). With
 * the source S and the observer O at distances rS, rO from the edge line and at tS, tO along it,
 * unfolding O about the edge into the plane of S and the edge makes the path straight, so
 *   Q = A + t e,  t = tS + (tO - tS) rS / (rS + rO).
 * A reflection before the edge uses the image of the transmitter through the wall as S, a
 * reflection after it the image of the receiver as O (the reflection point is then where the
 * straight unfolded line meets the wall). A candidate is kept when Q lies on the finite edge,
 * both S and O see the edge from the wedge's exterior (0 <= phi, phi' <= n pi), the reflection
 * point lies inside its wall and between its neighbours, and no segment of the path crosses a wall.
 * A reflection on one of the wedge's own faces is not a separate path (the UTD coefficient
 * already holds the face reflections).
 *
 * Field transfer at Q (Kouyoumjian and Pathak 1974), s' the incident direction and s the
 * diffracted one, phi_hat' and phi_hat the unit vectors of increasing phi at the source side and
 * at the observer side (e x the unit offset from the edge), beta_hat0' = s' x phi_hat' and
 * beta_hat0 = s x phi_hat:
 *   E_d = -Ds (E . beta_hat0') beta_hat0 - Dh (E . phi_hat') phi_hat,
 * and the path's spreading is lambda / (4 pi) / sqrt(s' s (s' + s)) with s' and s the unfolded
 * lengths before and after Q (so that the amplitude matches the free-space normalisation of the
 * other paths, tracer.ts).
 */
import type { Vec3 } from '../vec3.js';
import { surfaceCoefficients } from './fresnel.js';
import type { ResolvedSurface } from './materials.js';
import { sceneWedges, WEDGE_STRIDE, type SceneWedges } from './edges.js';
import { Bvh } from './bvh.js';
import { sceneOcclusion, wallBeam } from './occlusion.js';
import type { PreparedScene } from './scene.js';
import { utdWedgeCoefficients, type DiffractionCoefficients } from './utd.js';

/**
 * One step of a diffracted path: a reflection on wall `index` or a diffraction at wedge `index`.
 * @example const steps: DiffractionStep[] = [{ type: 'reflection', index: 2 }, { type: 'diffraction', index: 0 }];
 */
export interface DiffractionStep {
  type: 'reflection' | 'diffraction';
  index: number;
}

const TWO_PI = 2 * Math.PI;

/**
 * The Keller point of wedge w for source s and observer o: the edge parameter t (metres from
 * the edge point A) and the distances of both from the edge line; undefined when an end lies on
 * the edge line or Q falls off a finite edge.
 */
function kellerPoint(wd: Float64Array, w: number, s: Readonly<Vec3>, o: Readonly<Vec3>, out: Float64Array): boolean {
  const b = WEDGE_STRIDE * w;
  const ax = wd[b]!,
    ay = wd[b + 1]!,
    az = wd[b + 2]!,
    ex = wd[b + 3]!,
    ey = wd[b + 4]!,
    ez = wd[b + 5]!,
    len = wd[b + 6]!;
  const sx = s[0] - ax,
    sy = s[1] - ay,
    sz = s[2] - az;
  const ox = o[0] - ax,
    oy = o[1] - ay,
    oz = o[2] - az;
  const ts = sx * ex + sy * ey + sz * ez,
    to = ox * ex + oy * ey + oz * ez;
  const rs = Math.hypot(sx - ts * ex, sy - ts * ey, sz - ts * ez),
    ro = Math.hypot(ox - to * ex, oy - to * ey, oz - to * ez);
  if (!(rs > 1e-9) || !(ro > 1e-9)) return false;
  const t = ts + ((to - ts) * rs) / (rs + ro);
  if (len !== Infinity && (t < 0 || t > len)) return false;
  out[0] = ax + t * ex;
  out[1] = ay + t * ey;
  out[2] = az + t * ez;
  return true;
}

/**
 * Angle phi in [0, 2 pi) of the offset d about wedge w's edge (module comment of edges.ts), from
 * the wedges' data array.
 * @example
 * const w = sceneWedges(prepareScene({ walls: [{ vertices: [[0, 0], [10, 0]] }] }));
 * wedgeAngle(w.data, 0, 0, -1, 0) // 4.712 (3 pi / 2): straight below the free end at the origin, face 0 along +x
 */
export function wedgeAngle(wd: Float64Array, w: number, dx: number, dy: number, dz: number): number {
  const b = WEDGE_STRIDE * w;
  const ex = wd[b + 3]!,
    ey = wd[b + 4]!,
    ez = wd[b + 5]!;
  const c = dx * ex + dy * ey + dz * ez;
  const px = dx - c * ex,
    py = dy - c * ey,
    pz = dz - c * ez;
  let a = Math.atan2(px * wd[b + 10]! + py * wd[b + 11]! + pz * wd[b + 12]!, px * wd[b + 7]! + py * wd[b + 8]! + pz * wd[b + 9]!);
  if (a < 0) a += TWO_PI;
  return a;
}

/** True when both the source side (towards s) and the observer side (towards o) of Q lie in the exterior of wedge w. */
function outsideWedge(wd: Float64Array, w: number, q: Float64Array, s: Readonly<Vec3>, o: Readonly<Vec3>): boolean {
  const lim = wd[WEDGE_STRIDE * w + 13]! * Math.PI + 1e-12;
  return wedgeAngle(wd, w, s[0] - q[0]!, s[1] - q[1]!, s[2] - q[2]!) <= lim && wedgeAngle(wd, w, o[0] - q[0]!, o[1] - q[1]!, o[2] - q[2]!) <= lim;
}

function mirrorInto(ps: PreparedScene, w: number, p: Readonly<Vec3>, out: Vec3): Vec3 {
  const pl = ps.planes,
    o = 4 * w;
  const f = pl[o]! * p[0] + pl[o + 1]! * p[1] + pl[o + 2]! * p[2] - pl[o + 3]!;
  out[0] = p[0] - 2 * f * pl[o]!;
  out[1] = p[1] - 2 * f * pl[o + 1]!;
  out[2] = p[2] - 2 * f * pl[o + 2]!;
  return out;
}

/**
 * Where the segment from q to the image point i crosses wall w, when q and i straddle the wall
 * and the crossing lies inside it; writes `out`.
 */
function reflectionPoint(ps: PreparedScene, w: number, qx: number, qy: number, qz: number, i: Readonly<Vec3>, out: Float64Array): boolean {
  const pl = ps.planes,
    o = 4 * w;
  const nx = pl[o]!,
    ny = pl[o + 1]!,
    nz = pl[o + 2]!,
    d = pl[o + 3]!;
  const fq = nx * qx + ny * qy + nz * qz - d,
    fi = nx * i[0] + ny * i[1] + nz * i[2] - d;
  if (!((fq > 0 && fi < 0) || (fq < 0 && fi > 0))) return false;
  const s = fq / (fq - fi);
  out[0] = qx + s * (i[0] - qx);
  out[1] = qy + s * (i[1] - qy);
  out[2] = qz + s * (i[2] - qz);
  return ps.insideWall(w, out[0], out[1], out[2], 1e-9);
}

/** Fewest walls for the pruned enumeration (below it every wedge and wall pair is tried, as the image method does). */
const PRUNE_MIN_WALLS = 32;
const edgeBvhCache = new WeakMap<PreparedScene, Bvh>();
/** The transmitter side's candidate keys of traceDiffractions for the last transmitter position. */
const txKeysCache = new WeakMap<PreparedScene, { tx: Vec3; keys: Float64Array }>();

/** A hierarchy over the wedges' edge segments (2-D: vertical lines, unbounded in z), built once per scene. */
function edgeBvh(ps: PreparedScene, wedges: SceneWedges): Bvh {
  let bvh = edgeBvhCache.get(ps);
  if (bvh === undefined) {
    const wd = wedges.data,
      boxes = new Float64Array(6 * wedges.count);
    for (let w = 0; w < wedges.count; w++) {
      const b = WEDGE_STRIDE * w,
        len = wd[b + 6]!;
      for (let k = 0; k < 3; k++) {
        const a = wd[b + k]!,
          e = wd[b + 3 + k]!;
        const z = a + (len === Infinity ? 0 : len * e);
        boxes[6 * w + k] = len === Infinity && k === 2 ? -Infinity : Math.min(a, z);
        boxes[6 * w + 3 + k] = len === Infinity && k === 2 ? Infinity : Math.max(a, z);
      }
    }
    bvh = new Bvh(boxes);
    edgeBvhCache.set(ps, bvh);
  }
  return bvh;
}

/**
 * Enumerate the valid diffracted paths (one diffraction, with at most one reflection before or
 * after it when `withReflection`); calls `emit(steps, points)` with fresh arrays for each, wedge
 * by wedge in index order (for each wedge: alone, then with wall 0 before, wall 0 after, wall 1
 * before, ...).
 *
 * Scenes of 32 walls or more are pruned, exactly (the same paths, bit for bit, in the same order
 * as `prune = false`, which tries every wedge and wall pair): with a reflection on wall r before
 * the edge, the diffraction point Q lies on the line from the transmitter's image through the
 * reflection point, beyond the wall, so in the beam through r from that image (wallBeam,
 * occlusion.ts); after the edge, in the beam through r from the receiver's image. Only the
 * wedges whose edge boxes meet the beam (a hierarchy over the edges) are tried with r.
 * @example
 * // A lone thin wall along x from 0 to 10 m: a receiver behind it gets the paths diffracted at both ends
 * const ps = prepareScene({ walls: [{ vertices: [[0, 0], [10, 0]] }] });
 * traceDiffractions(ps, [2, 5, 0], [3, -5, 0], false, (steps) => console.log(steps)) // [{ type: 'diffraction', index: 0 }] then [{ type: 'diffraction', index: 1 }]
 */
export function traceDiffractions(
  ps: PreparedScene,
  tx: Readonly<Vec3>,
  rx: Readonly<Vec3>,
  withReflection: boolean,
  emit: (steps: DiffractionStep[], points: Vec3[]) => void,
  prune = true,
): void {
  const wedges = sceneWedges(ps);
  const wd = wedges.data,
    faces = wedges.faces;
  const q = new Float64Array(3),
    p = new Float64Array(3);
  const image: Vec3 = [0, 0, 0];
  const W = ps.wallCount;
  // tx -> Q -> rx
  const alone = (w: number): void => {
    const f0 = faces[2 * w]!,
      fn = faces[2 * w + 1]!;
    if (
      kellerPoint(wd, w, tx, rx, q) &&
      outsideWedge(wd, w, q, tx, rx) &&
      !ps.segmentHitsWall(tx[0], tx[1], tx[2], q[0]!, q[1]!, q[2]!, f0, fn) &&
      !ps.segmentHitsWall(q[0]!, q[1]!, q[2]!, rx[0], rx[1], rx[2], f0, fn)
    ) {
      emit([{ type: 'diffraction', index: w }], [[q[0]!, q[1]!, q[2]!]]);
    }
  };
  // tx -> P (wall r) -> Q -> rx: source = image of tx
  const before = (w: number, r: number): void => {
    const f0 = faces[2 * w]!,
      fn = faces[2 * w + 1]!;
    mirrorInto(ps, r, tx, image);
    if (
      kellerPoint(wd, w, image, rx, q) &&
      outsideWedge(wd, w, q, image, rx) &&
      reflectionPoint(ps, r, q[0]!, q[1]!, q[2]!, image, p) &&
      !ps.segmentHitsWall(tx[0], tx[1], tx[2], p[0]!, p[1]!, p[2]!, r, -1) &&
      !ps.segmentHitsWall(p[0]!, p[1]!, p[2]!, q[0]!, q[1]!, q[2]!, r, f0) &&
      !ps.segmentHitsWall(q[0]!, q[1]!, q[2]!, rx[0], rx[1], rx[2], f0, fn)
    ) {
      emit(
        [
          { type: 'reflection', index: r },
          { type: 'diffraction', index: w },
        ],
        [
          [p[0]!, p[1]!, p[2]!],
          [q[0]!, q[1]!, q[2]!],
        ],
      );
    }
  };
  // tx -> Q -> P (wall r) -> rx: observer = image of rx
  const after = (w: number, r: number): void => {
    const f0 = faces[2 * w]!,
      fn = faces[2 * w + 1]!;
    mirrorInto(ps, r, rx, image);
    if (
      kellerPoint(wd, w, tx, image, q) &&
      outsideWedge(wd, w, q, tx, image) &&
      reflectionPoint(ps, r, q[0]!, q[1]!, q[2]!, image, p) &&
      !ps.segmentHitsWall(tx[0], tx[1], tx[2], q[0]!, q[1]!, q[2]!, f0, fn) &&
      !ps.segmentHitsWall(q[0]!, q[1]!, q[2]!, p[0]!, p[1]!, p[2]!, r, f0) &&
      !ps.segmentHitsWall(p[0]!, p[1]!, p[2]!, rx[0], rx[1], rx[2], r, -1)
    ) {
      emit(
        [
          { type: 'diffraction', index: w },
          { type: 'reflection', index: r },
        ],
        [
          [q[0]!, q[1]!, q[2]!],
          [p[0]!, p[1]!, p[2]!],
        ],
      );
    }
  };
  if (!withReflection || !prune || W < PRUNE_MIN_WALLS) {
    for (let w = 0; w < wedges.count; w++) {
      alone(w);
      if (!withReflection) continue;
      const f0 = faces[2 * w]!,
        fn = faces[2 * w + 1]!;
      for (let r = 0; r < W; r++) {
        if (r === f0 || r === fn) continue;
        before(w, r);
        after(w, r);
      }
    }
    return;
  }
  // Candidate (wedge, wall, side) triples from the beams, as keys ((w (W + 1) + r) 2 + side)
  // sorted into the exhaustive loop's order. A wall hidden from the transmitter (side 0) or the
  // receiver (side 1) by one convex wall (occlusion.ts) holds no reflection point of a path. The
  // transmitter's triples depend on it alone: kept between traces while it stays put.
  const bvh = edgeBvh(ps, wedges);
  const margin = 100 * ps.padM; // as the reflection beams (tracer.ts)
  const grow = 1e-6 * (ps.padM / 1e-8);
  const beam = new Float64Array(4 * (1 + Math.max(4, ps.maxWallVertices)));
  const found = new Int32Array(wedges.count);
  const occ = sceneOcclusion(ps);
  const pl = ps.planes;
  let keys = new Float64Array(1024),
    nKeys = 0;
  const collect = (side: number, e: Readonly<Vec3>): void => {
    const seen = occ?.seenFrom(e[0], e[1], e[2]);
    for (let r = 0; r < W; r++) {
      const o = 4 * r;
      const f = pl[o]! * e[0] + pl[o + 1]! * e[1] + pl[o + 2]! * e[2] - pl[o + 3]!;
      if (f === 0) continue; // in the wall's plane: the image is the point itself, no reflection
      if (occ !== undefined && seen !== undefined) {
        if (seen[r] === 0) seen[r] = occ.wallHiddenFromPoint(r, e[0], e[1], e[2]) ? 2 : 1;
        if (seen[r] === 2) continue;
      }
      mirrorInto(ps, r, e, image);
      const planes = wallBeam(ps, beam, 0, 0, 0, r, f > 0 ? 1 : -1, image[0], image[1], image[2], grow);
      const n = bvh.collectInHalfSpaces(beam, planes, margin, found);
      if (nKeys + n > keys.length) {
        const grown = new Float64Array(2 * (nKeys + n));
        grown.set(keys.subarray(0, nKeys));
        keys = grown;
      }
      for (let i = 0; i < n; i++) {
        const w = found[i]!;
        if (r === faces[2 * w]! || r === faces[2 * w + 1]!) continue;
        keys[nKeys++] = (w * (W + 1) + r) * 2 + side;
      }
    }
  };
  const kept = txKeysCache.get(ps);
  if (kept !== undefined && kept.tx[0] === tx[0] && kept.tx[1] === tx[1] && kept.tx[2] === tx[2]) {
    keys = new Float64Array(Math.max(1024, 2 * kept.keys.length));
    keys.set(kept.keys);
    nKeys = kept.keys.length;
  } else {
    collect(0, tx);
    txKeysCache.set(ps, { tx: [tx[0], tx[1], tx[2]], keys: keys.slice(0, nKeys) });
  }
  collect(1, rx);
  const sorted = keys.subarray(0, nKeys).sort();
  const perWedge = 2 * (W + 1);
  let k = 0;
  for (let w = 0; w < wedges.count; w++) {
    alone(w);
    for (; k < nKeys && Math.floor(sorted[k]! / perWedge) === w; k++) {
      const key = sorted[k]!,
        r = Math.floor(key / 2) % (W + 1);
      if (key % 2 === 0) before(w, r);
      else after(w, r);
    }
  }
}

/**
 * The diffraction points of a path's steps recomputed for new terminal positions (no validity
 * tests), for retracing a path between geometry updates.
 * @example
 * const ps = prepareScene({ walls: [{ vertices: [[0, 0], [10, 0]] }] });
 * diffractionPoints(ps, [{ type: 'diffraction', index: 0 }], [2, 5, 0], [-3, -5, 0]) // [[0, 0, 0]]
 */
export function diffractionPoints(ps: PreparedScene, steps: readonly DiffractionStep[], tx: Readonly<Vec3>, rx: Readonly<Vec3>): Vec3[] {
  const wd = sceneWedges(ps).data;
  const q = new Float64Array(3),
    p = new Float64Array(3);
  const image: Vec3 = [0, 0, 0];
  const d = steps.findIndex((s) => s.type === 'diffraction');
  const w = steps[d]!.index;
  const clampedKeller = (s: Readonly<Vec3>, o: Readonly<Vec3>): void => {
    if (kellerPoint(wd, w, s, o, q)) return;
    // off the finite edge (the path is kept until the next update): clamp to the nearer end
    const b = WEDGE_STRIDE * w,
      len = wd[b + 6]!;
    const t = Math.min(
      Math.max((s[0] - wd[b]!) * wd[b + 3]! + (s[1] - wd[b + 1]!) * wd[b + 4]! + (s[2] - wd[b + 2]!) * wd[b + 5]!, 0),
      len === Infinity ? 0 : len,
    );
    q[0] = wd[b]! + t * wd[b + 3]!;
    q[1] = wd[b + 1]! + t * wd[b + 4]!;
    q[2] = wd[b + 2]! + t * wd[b + 5]!;
  };
  if (steps.length === 1) {
    clampedKeller(tx, rx);
    return [[q[0]!, q[1]!, q[2]!]];
  }
  const r = steps[d === 0 ? 1 : 0]!.index;
  mirrorInto(ps, r, d === 0 ? rx : tx, image);
  if (d === 0) clampedKeller(tx, image);
  else clampedKeller(image, rx);
  reflectionPoint(ps, r, q[0]!, q[1]!, q[2]!, image, p);
  const Q: Vec3 = [q[0]!, q[1]!, q[2]!],
    P: Vec3 = [p[0]!, p[1]!, p[2]!];
  return d === 0 ? [Q, P] : [P, Q];
}

/**
 * The UTD coefficients of wedge w for a ray arriving along unit kIn and leaving along unit
 * kOut, s' and s the unfolded lengths before and after the edge, k the wavenumber; Luebbers'
 * heuristic with the faces' surfaces (a perfect conductor gives the Kouyoumjian-Pathak form);
 * `sides` holds the boundary terms on given sides (utd.ts).
 * Also returns the angles (radians) and the unit vectors of the edge-fixed bases.
 * @example
 * const ps = prepareScene({ walls: [{ vertices: [[0, 0], [10, 0]], material: 'metal' }] });
 * wedgeDiffraction(ps, 0, [Math.SQRT1_2, -Math.SQRT1_2, 0], [0, -1, 0], 10, 10, 2 * Math.PI / 0.0107, 28e9).phiRad // 4.712 (3 pi / 2: straight below the edge)
 */
export function wedgeDiffraction(
  ps: PreparedScene,
  w: number,
  kIn: Readonly<Vec3>,
  kOut: Readonly<Vec3>,
  sPrime: number,
  s: number,
  k: number,
  carrierHz: number,
  sides?: readonly number[],
): DiffractionCoefficients & {
  sides: [number, number, number, number];
  phiPrimeRad: number;
  phiRad: number;
  beta0Rad: number;
  n: number;
  phiHatIn: Vec3;
  betaHatIn: Vec3;
  phiHatOut: Vec3;
  betaHatOut: Vec3;
} {
  const wedges: SceneWedges = sceneWedges(ps);
  const wd = wedges.data,
    b = WEDGE_STRIDE * w;
  const ex = wd[b + 3]!,
    ey = wd[b + 4]!,
    ez = wd[b + 5]!,
    n = wd[b + 13]!;
  // A retraced path can stray inside the wedge before the next update: take the nearer face.
  const clamp = (a: number): number => (a <= n * Math.PI ? a : a - n * Math.PI < TWO_PI - a ? n * Math.PI : 0);
  const phiPrimeRad = clamp(wedgeAngle(wd, w, -kIn[0], -kIn[1], -kIn[2]));
  const phiRad = clamp(wedgeAngle(wd, w, kOut[0], kOut[1], kOut[2]));
  const cosB = Math.max(-1, Math.min(1, kIn[0] * ex + kIn[1] * ey + kIn[2] * ez));
  const beta0Rad = Math.acos(cosB);
  const sin2 = 1 - cosB * cosB;
  const L = ((s * sPrime) / (s + sPrime)) * sin2;
  const surfaces: ResolvedSurface[] = ps.surfacesAt(carrierHz);
  const f0 = wedges.faces[2 * w]!,
    fn = wedges.faces[2 * w + 1]!;
  const pl = ps.planes;
  const c0 = Math.min(1, Math.abs(kIn[0] * pl[4 * f0]! + kIn[1] * pl[4 * f0 + 1]! + kIn[2] * pl[4 * f0 + 2]!));
  const cn = Math.min(1, Math.abs(kOut[0] * pl[4 * fn]! + kOut[1] * pl[4 * fn + 1]! + kOut[2] * pl[4 * fn + 2]!));
  const D = utdWedgeCoefficients(
    k,
    { n, phiPrimeRad, phiRad, beta0Rad, distanceParameterM: L },
    surfaceCoefficients(surfaces[f0]!.surface, c0),
    surfaceCoefficients(surfaces[fn]!.surface, cn),
    sides,
  );
  // phi_hat = e x (unit offset perpendicular to e): source side offset is -kIn, observer side kOut
  const perpUnit = (x: number, y: number, z: number): Vec3 => {
    const c = x * ex + y * ey + z * ez;
    const px = x - c * ex,
      py = y - c * ey,
      pz = z - c * ez,
      m = Math.hypot(px, py, pz);
    return [px / m, py / m, pz / m];
  };
  const cross = (a: Readonly<Vec3>, c: Readonly<Vec3>): Vec3 => [a[1] * c[2] - a[2] * c[1], a[2] * c[0] - a[0] * c[2], a[0] * c[1] - a[1] * c[0]];
  const e: Vec3 = [ex, ey, ez];
  const phiHatIn = cross(e, perpUnit(-kIn[0], -kIn[1], -kIn[2]));
  const phiHatOut = cross(e, perpUnit(kOut[0], kOut[1], kOut[2]));
  return { ...D, phiPrimeRad, phiRad, beta0Rad, n, phiHatIn, betaHatIn: cross(kIn, phiHatIn), phiHatOut, betaHatOut: cross(kOut, phiHatOut) };
}

/**
 * Apply the diffraction dyadic to a complex field vector e (Float64Array(6), polarization.ts):
 * out = -Ds (e . betaIn) betaOut - Dh (e . phiIn) phiOut (may alias e).
 * @example diffractField(new Float64Array(6), Float64Array.of(0, 0, 1, 0, 0, 0), { soft: [0.5, 0], hard: [0, 0] }, [0, 0, -1], [0, -1, 0], [0, 0, 1], [0, 1, 0]) // [0, 0, 0.5, 0, 0, 0]
 */
export function diffractField(
  out: Float64Array,
  e: Float64Array,
  d: DiffractionCoefficients,
  betaIn: Readonly<Vec3>,
  phiIn: Readonly<Vec3>,
  betaOut: Readonly<Vec3>,
  phiOut: Readonly<Vec3>,
): Float64Array {
  const bRe = e[0]! * betaIn[0] + e[1]! * betaIn[1] + e[2]! * betaIn[2],
    bIm = e[3]! * betaIn[0] + e[4]! * betaIn[1] + e[5]! * betaIn[2];
  const pRe = e[0]! * phiIn[0] + e[1]! * phiIn[1] + e[2]! * phiIn[2],
    pIm = e[3]! * phiIn[0] + e[4]! * phiIn[1] + e[5]! * phiIn[2];
  const [sRe, sIm] = d.soft,
    [hRe, hIm] = d.hard;
  const aRe = -(sRe * bRe - sIm * bIm),
    aIm = -(sRe * bIm + sIm * bRe);
  const cRe = -(hRe * pRe - hIm * pIm),
    cIm = -(hRe * pIm + hIm * pRe);
  for (let i = 0; i < 3; i++) {
    out[i] = aRe * betaOut[i]! + cRe * phiOut[i]!;
    out[3 + i] = aIm * betaOut[i]! + cIm * phiOut[i]!;
  }
  return out;
}
