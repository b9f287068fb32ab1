/**
 * Conservative occlusion between faces for pruning image-method candidates: a wall B is hidden
 * from a point set A (a terminal, or the vertices of another wall) when one convex wall O cuts
 * every segment from A's convex hull to B's: all of A strictly on one side of O's plane, all of B
 * on the other, and every vertex-to-vertex segment crossing O's interior (the crossings of the
 * hull's segments lie in the convex hull of the vertex-pair crossings, a central projection
 * preserving convex hulls, so O convex suffices). Margins (metres) keep the test conservative
 * against the tracer's own tolerances: a pruned sequence is one the tracer would refuse.
 * 3-D scenes only (2-D scenes are small and are not pruned this way).
 */
import type { PreparedScene } from './scene.js';

/** Largest wall count with a cached wall-to-wall table (W^2 bytes). */
const PAIR_TABLE_MAX_WALLS = 4096;
/** Largest wall count pruned by occlusion (above it the per-trace visibility tests cost more than they save). */
const OCCLUSION_MAX_WALLS = 4096;
/** Fewest walls pruned by occlusion (below it the exhaustive tests are cheaper than the visibility tests). */
const OCCLUSION_MIN_WALLS = 32;
const occlusionCache = new WeakMap<PreparedScene, Occlusion>();

/**
 * The scene's Occlusion (made once, then cached), or undefined where the tracer does not prune
 * by occlusion: 2-D scenes, and 3-D scenes of fewer than 32 or more than 4096 walls.
 * @example sceneOcclusion(prepareScene({ walls: [{ vertices: [[0, 0, 0], [1, 0, 0], [1, 1, 0]] }] })) // undefined: one wall
 */
export function sceneOcclusion(ps: PreparedScene): Occlusion | undefined {
  const W = ps.wallCount;
  if (ps.is2D || W > OCCLUSION_MAX_WALLS || W < OCCLUSION_MIN_WALLS) return undefined;
  let o = occlusionCache.get(ps);
  if (o === undefined) {
    o = new Occlusion(ps);
    occlusionCache.set(ps, o);
  }
  return o;
}

/**
 * Occlusion queries over one prepared 3-D scene, with a lazily filled wall-to-wall table.
 * @example
 * const ps = prepareScene({ walls: [
 *   { vertices: [[0, -1, -1], [0, 1, -1], [0, 1, 1], [0, -1, 1]] },   // a small target at x = 0
 *   { vertices: [[5, -9, -9], [5, 9, -9], [5, 9, 9], [5, -9, 9]] } ] }); // a large screen at x = 5
 * new Occlusion(ps).wallHiddenFromPoint(0, 10, 0, 0) // true: the screen hides the target from (10, 0, 0)
 */
export class Occlusion {
  /** Per wall: +1 or -1, the orientation of its (u, v) polygon. */
  private readonly orientation: Float64Array;
  private readonly pairs: Uint8Array | undefined;
  private readonly found: Int32Array;
  private readonly box = new Float64Array(24);
  /** Scratch: [x0, y0, z0, x1, y1, z1] of the points around A and B. */
  private readonly extent = new Float64Array(6);
  private readonly point = new Float64Array(3);
  /** Margin of every side and inside test, metres (100 times the scene's box padding). */
  readonly margin: number;
  /** seenFrom's memos: the last two points (a transmitter and a receiver) and their tables. */
  private readonly seenPoints = new Float64Array(6).fill(NaN);
  private readonly seenTables: [Int8Array, Int8Array];
  private seenNext = 0;

  constructor(private readonly ps: PreparedScene) {
    const W = ps.wallCount;
    this.orientation = new Float64Array(W);
    this.found = new Int32Array(W);
    this.margin = 100 * ps.padM;
    this.pairs = W <= PAIR_TABLE_MAX_WALLS && !ps.is2D ? new Uint8Array(W * W) : undefined;
    this.seenTables = [new Int8Array(W), new Int8Array(W)];
    const poly = ps.polygons;
    for (let w = 0; w < W && !ps.is2D; w++) {
      const s = ps.polygonStart[w]!,
        e = ps.polygonStart[w + 1]!,
        n = e - s;
      let area = 0;
      for (let i = 0; i < n; i++) {
        const a = s + i,
          b = s + ((i + 1) % n);
        area += poly[2 * a]! * poly[2 * b + 1]! - poly[2 * b]! * poly[2 * a + 1]!;
      }
      this.orientation[w] = area >= 0 ? 1 : -1;
    }
  }

  /**
   * True when wall b is hidden from the point p (see the module comment).
   * @example
   * const ps = prepareScene({ walls: [{ vertices: [[0, -1, -1], [0, 1, -1], [0, 1, 1], [0, -1, 1]] }, { vertices: [[5, -9, -9], [5, 9, -9], [5, 9, 9], [5, -9, 9]] }] });
   * new Occlusion(ps).wallHiddenFromPoint(0, -10, 0, 0) // false: nothing stands between (-10, 0, 0) and the target
   */
  wallHiddenFromPoint(b: number, px: number, py: number, pz: number): boolean {
    if (this.ps.is2D) return false;
    const p = this.point;
    p[0] = px;
    p[1] = py;
    p[2] = pz;
    return this.hidden(p, 0, 1, b, -1);
  }

  /**
   * A memo of wallHiddenFromPoint for the point p, one value per wall (0 not yet known, 1 visible,
   * 2 hidden), for the caller to fill: the same table for the same point while it is one of the
   * last two points asked for (a static transmitter keeps its table between traces).
   * @example
   * const ps = prepareScene({ walls: [{ vertices: [[0, -1, -1], [0, 1, -1], [0, 1, 1], [0, -1, 1]] }] });
   * const occ = new Occlusion(ps), seen = occ.seenFrom(10, 0, 0);
   * [seen.length, occ.seenFrom(10, 0, 0) === seen, occ.seenFrom(-10, 0, 0) === seen] // [1, true, false]
   */
  seenFrom(px: number, py: number, pz: number): Int8Array {
    const P = this.seenPoints;
    for (let i = 0; i < 2; i++) {
      if (P[3 * i] === px && P[3 * i + 1] === py && P[3 * i + 2] === pz) {
        this.seenNext = 1 - i; // the other one is now the older
        return this.seenTables[i]!;
      }
    }
    const i = this.seenNext;
    this.seenNext = 1 - i;
    P[3 * i] = px;
    P[3 * i + 1] = py;
    P[3 * i + 2] = pz;
    return this.seenTables[i]!.fill(0);
  }

  /**
   * True when wall b is hidden from every point of wall a (cached per pair).
   * @example
   * const ps = prepareScene({ walls: [
   *   { vertices: [[0, -1, -1], [0, 1, -1], [0, 1, 1], [0, -1, 1]] },
   *   { vertices: [[5, -9, -9], [5, 9, -9], [5, 9, 9], [5, -9, 9]] },
   *   { vertices: [[10, -1, -1], [10, 1, -1], [10, 1, 1], [10, -1, 1]] } ] });
   * new Occlusion(ps).wallHiddenFromWall(2, 0) // true: the large screen at x = 5 stands between the two small walls
   */
  wallHiddenFromWall(b: number, a: number): boolean {
    const ps = this.ps;
    if (ps.is2D || a === b) return false;
    const t = this.pairs;
    if (t === undefined) return this.hidden(ps.vertices, ps.vertexStart[a]!, ps.vertexStart[a + 1]! - ps.vertexStart[a]!, b, a);
    const k = a * ps.wallCount + b;
    let v = t[k]!;
    if (v === 0) {
      v = this.hidden(ps.vertices, ps.vertexStart[a]!, ps.vertexStart[a + 1]! - ps.vertexStart[a]!, b, a) ? 2 : 1;
      t[k] = v;
      t[b * ps.wallCount + a] = v; // occlusion by a plane wall is symmetric
    }
    return v === 2;
  }

  /** Hidden test of wall b from points (first vertex index aStart, count aCount in pts). */
  private hidden(pts: Float64Array, aStart: number, aCount: number, b: number, skip: number): boolean {
    const ps = this.ps,
      V = ps.vertices,
      bs = ps.vertexStart[b]!,
      be = ps.vertexStart[b + 1]!;
    // candidate occluders: walls whose boxes meet the box around A and B
    const ext = this.extent;
    ext.fill(Infinity, 0, 3);
    ext.fill(-Infinity, 3, 6);
    extendExtent(ext, pts, aStart, aStart + aCount);
    extendExtent(ext, V, bs, be);
    const x0 = ext[0]!,
      y0 = ext[1]!,
      z0 = ext[2]!,
      x1 = ext[3]!,
      y1 = ext[4]!,
      z1 = ext[5]!;
    const bx = this.box;
    bx[0] = 1;
    bx[1] = 0;
    bx[2] = 0;
    bx[3] = x0;
    bx[4] = -1;
    bx[5] = 0;
    bx[6] = 0;
    bx[7] = -x1;
    bx[8] = 0;
    bx[9] = 1;
    bx[10] = 0;
    bx[11] = y0;
    bx[12] = 0;
    bx[13] = -1;
    bx[14] = 0;
    bx[15] = -y1;
    bx[16] = 0;
    bx[17] = 0;
    bx[18] = 1;
    bx[19] = z0;
    bx[20] = 0;
    bx[21] = 0;
    bx[22] = -1;
    bx[23] = -z1;
    const n = ps.bvh.collectInHalfSpaces(bx, 6, 0, this.found);
    for (let i = 0; i < n; i++) {
      const o = this.found[i]!;
      // transmissive walls let segments through (segmentHitsWall): they hide nothing
      if (o === b || o === skip || this.ps.convex[o] === 0 || this.ps.transmissive[o] === 1) continue;
      if (this.cuts(o, pts, aStart, aCount, bs, be)) return true;
    }
    return false;
  }

  /** True when convex wall o cuts every segment from points A to wall b's vertices [bs, be). */
  private cuts(o: number, pts: Float64Array, aStart: number, aCount: number, bs: number, be: number): boolean {
    const ps = this.ps,
      V = ps.vertices,
      pl = ps.planes,
      m = this.margin;
    const nx = pl[4 * o]!,
      ny = pl[4 * o + 1]!,
      nz = pl[4 * o + 2]!,
      d = pl[4 * o + 3]!;
    let side = 0;
    for (let i = aStart; i < aStart + aCount; i++) {
      const f = nx * pts[3 * i]! + ny * pts[3 * i + 1]! + nz * pts[3 * i + 2]! - d;
      const s = f > m ? 1 : f < -m ? -1 : 0;
      if (s === 0 || (side !== 0 && s !== side)) return false;
      side = s;
    }
    for (let j = bs; j < be; j++) {
      const f = nx * V[3 * j]! + ny * V[3 * j + 1]! + nz * V[3 * j + 2]! - d;
      if (!(side > 0 ? f < -m : f > m)) return false;
    }
    const fr = ps.frames,
      f9 = 9 * o;
    const ox = fr[f9]!,
      oy = fr[f9 + 1]!,
      oz = fr[f9 + 2]!;
    const poly = ps.polygons,
      s0 = ps.polygonStart[o]!,
      s1 = ps.polygonStart[o + 1]!,
      sigma = this.orientation[o]!;
    for (let i = aStart; i < aStart + aCount; i++) {
      const ax = pts[3 * i]!,
        ay = pts[3 * i + 1]!,
        az = pts[3 * i + 2]!;
      const fa = nx * ax + ny * ay + nz * az - d;
      for (let j = bs; j < be; j++) {
        const qx = V[3 * j]!,
          qy = V[3 * j + 1]!,
          qz = V[3 * j + 2]!;
        const fb = nx * qx + ny * qy + nz * qz - d;
        const t = fa / (fa - fb);
        const dx = ax + t * (qx - ax) - ox,
          dy = ay + t * (qy - ay) - oy,
          dz = az + t * (qz - az) - oz;
        const u = dx * fr[f9 + 3]! + dy * fr[f9 + 4]! + dz * fr[f9 + 5]!;
        const v = dx * fr[f9 + 6]! + dy * fr[f9 + 7]! + dz * fr[f9 + 8]!;
        for (let k = s0; k < s1; k++) {
          const k2 = k + 1 < s1 ? k + 1 : s0;
          const eu = poly[2 * k2]! - poly[2 * k]!,
            ev = poly[2 * k2 + 1]! - poly[2 * k + 1]!;
          const cr = sigma * (eu * (v - poly[2 * k + 1]!) - ev * (u - poly[2 * k]!));
          if (!(cr >= m * Math.hypot(eu, ev))) return false; // not inside by the margin
        }
      }
    }
    return true;
  }
}

/** Grow the extent [x0, y0, z0, x1, y1, z1] by points [from, to) of an xyz array. */
function extendExtent(ext: Float64Array, xyz: Float64Array, from: number, to: number): void {
  for (let i = from; i < to; i++) {
    for (let k = 0; k < 3; k++) {
      const v = xyz[3 * i + k]!;
      if (v < ext[k]!) ext[k] = v;
      if (v > ext[k + 3]!) ext[k + 3] = v;
    }
  }
}

/**
 * The beam through wall w from the image point I = (ix, iy, iz) (the source's side sign `s` of
 * w's plane): written to `beams` from float offset `dst` as [nx, ny, nz, d] half-spaces
 * n . x >= d, returns their count. The half-space beyond w (the source's side), the cone from I
 * through w (its own edges when convex, else its bounding rectangle; widened by `grow` metres),
 * then the `srcCount` parent half-spaces at offset `src` mirrored through w. Every point Q with a
 * point of w (within `grow`) on the segment from I to Q, beyond w, lies in the beam, so a box
 * wholly outside one half-space holds no such Q (the image method's beam test).
 * @example
 * const ps = prepareScene({ walls: [{ vertices: [[5, -1, -1], [5, 1, -1], [5, 1, 1], [5, -1, 1]] }] });
 * const beams = new Float64Array(4 * 5);
 * wallBeam(ps, beams, 0, 0, 0, 0, -1, 10, 0, 0, 1e-6) // 5: beyond the wall (x <= 5), then four cone planes through the image (10, 0, 0) of (0, 0, 0)
 */
export function wallBeam(
  ps: PreparedScene,
  beams: Float64Array,
  dst: number,
  src: number,
  srcCount: number,
  w: number,
  s: number,
  ix: number,
  iy: number,
  iz: number,
  grow: number,
): number {
  const pl = ps.planes,
    o = 4 * w,
    mx = pl[o]!,
    my = pl[o + 1]!,
    mz = pl[o + 2]!,
    e = pl[o + 3]!;
  let c = 0;
  let b = dst + 4 * c++; // beyond the wall: the source's side
  beams[b] = s * mx;
  beams[b + 1] = s * my;
  beams[b + 2] = s * mz;
  beams[b + 3] = s * e;
  const verts = ps.vertices,
    vStart = ps.vertexStart,
    fr = ps.frames,
    bd = ps.bounds,
    sg = ps.segments;
  if (ps.is2D) {
    const so = 5 * w,
      ax = sg[so]!,
      ay = sg[so + 1]!,
      ux = sg[so + 2]!,
      uy = sg[so + 3]!,
      len = sg[so + 4]!;
    const cx = ax + 0.5 * len * ux - ix,
      cy = ay + 0.5 * len * uy - iy;
    // vertical planes through I and each end (pushed out by grow along the wall)
    c += addPlane(beams, dst + 4 * c, ix, iy, iz, ax - grow * ux - ix, ay - grow * uy - iy, 0, ax - grow * ux - ix, ay - grow * uy - iy, 1, cx, cy, 0);
    c += addPlane(
      beams,
      dst + 4 * c,
      ix,
      iy,
      iz,
      ax + (len + grow) * ux - ix,
      ay + (len + grow) * uy - iy,
      0,
      ax + (len + grow) * ux - ix,
      ay + (len + grow) * uy - iy,
      1,
      cx,
      cy,
      0,
    );
  } else if (ps.convex[w] === 1) {
    const f9 = 9 * w,
      v0 = vStart[w]!,
      v1 = vStart[w + 1]!;
    const ox = fr[f9]!,
      oy = fr[f9 + 1]!,
      oz = fr[f9 + 2]!; // the vertices' centroid: inside a convex polygon
    const cx = ox - ix,
      cy = oy - iy,
      cz = oz - iz;
    for (let v = v0; v < v1; v++) {
      const u = v + 1 < v1 ? v + 1 : v0;
      const ax = verts[3 * v]!,
        ay = verts[3 * v + 1]!,
        az = verts[3 * v + 2]!;
      const ex = verts[3 * u]! - ax,
        ey = verts[3 * u + 1]! - ay,
        ez = verts[3 * u + 2]! - az;
      // in-plane outward normal of the edge, to push it out by grow
      let qx = ey * mz - ez * my,
        qy = ez * mx - ex * mz,
        qz = ex * my - ey * mx;
      const ql = Math.hypot(qx, qy, qz);
      if (!(ql > 0)) continue;
      const sgn = qx * (ox - ax) + qy * (oy - ay) + qz * (oz - az) > 0 ? -grow / ql : grow / ql;
      qx *= sgn;
      qy *= sgn;
      qz *= sgn;
      c += addPlane(
        beams,
        dst + 4 * c,
        ix,
        iy,
        iz,
        ax + qx - ix,
        ay + qy - iy,
        az + qz - iz,
        ax + ex + qx - ix,
        ay + ey + qy - iy,
        az + ez + qz - iz,
        cx,
        cy,
        cz,
      );
    }
  } else {
    const f9 = 9 * w,
      b4 = 4 * w;
    const u0 = bd[b4]! - grow,
      u1 = bd[b4 + 1]! + grow,
      v0 = bd[b4 + 2]! - grow,
      v1 = bd[b4 + 3]! + grow;
    const ox = fr[f9]!,
      oy = fr[f9 + 1]!,
      oz = fr[f9 + 2]!;
    const e1x = fr[f9 + 3]!,
      e1y = fr[f9 + 4]!,
      e1z = fr[f9 + 5]!,
      e2x = fr[f9 + 6]!,
      e2y = fr[f9 + 7]!,
      e2z = fr[f9 + 8]!;
    const um = 0.5 * (u0 + u1),
      vm = 0.5 * (v0 + v1);
    const cx = ox + um * e1x + vm * e2x - ix,
      cy = oy + um * e1y + vm * e2y - iy,
      cz = oz + um * e1z + vm * e2z - iz;
    for (let edge = 0; edge < 4; edge++) {
      const ua = edge === 0 || edge === 3 ? u0 : u1,
        va = edge < 2 ? v0 : v1;
      const ub = edge < 2 ? u1 : u0,
        vb = edge === 0 || edge === 3 ? v0 : v1;
      c += addPlane(
        beams,
        dst + 4 * c,
        ix,
        iy,
        iz,
        ox + ua * e1x + va * e2x - ix,
        oy + ua * e1y + va * e2y - iy,
        oz + ua * e1z + va * e2z - iz,
        ox + ub * e1x + vb * e2x - ix,
        oy + ub * e1y + vb * e2y - iy,
        oz + ub * e1z + vb * e2z - iz,
        cx,
        cy,
        cz,
      );
    }
  }
  for (let q = 0; q < srcCount; q++) {
    // the parent's half-spaces mirrored through w
    const a = src + 4 * q;
    const nx = beams[a]!,
      ny = beams[a + 1]!,
      nz = beams[a + 2]!,
      d = beams[a + 3]!;
    const nm = nx * mx + ny * my + nz * mz;
    b = dst + 4 * c++;
    beams[b] = nx - 2 * nm * mx;
    beams[b + 1] = ny - 2 * nm * my;
    beams[b + 2] = nz - 2 * nm * mz;
    beams[b + 3] = d - 2 * e * nm;
  }
  return c;
}

/** Write at beams[q..q + 3] the plane through I and the points a, b (relative to I), oriented to hold (cx, cy, cz); returns 1, or 0 when degenerate (no plane: still conservative). */
function addPlane(
  beams: Float64Array,
  q: number,
  ix: number,
  iy: number,
  iz: number,
  pxa: number,
  pya: number,
  pza: number,
  pxb: number,
  pyb: number,
  pzb: number,
  cx: number,
  cy: number,
  cz: number,
): number {
  let nx = pya * pzb - pza * pyb,
    ny = pza * pxb - pxa * pzb,
    nz = pxa * pyb - pya * pxb;
  const l = Math.hypot(nx, ny, nz);
  if (!(l > 1e-12 * Math.hypot(pxa, pya, pza) * Math.hypot(pxb, pyb, pzb))) return 0;
  nx /= l;
  ny /= l;
  nz /= l;
  if (nx * cx + ny * cy + nz * cz < 0) {
    nx = -nx;
    ny = -ny;
    nz = -nz;
  }
  beams[q] = nx;
  beams[q + 1] = ny;
  beams[q + 2] = nz;
  beams[q + 3] = nx * ix + ny * iy + nz * iz;
  return 1;
}
