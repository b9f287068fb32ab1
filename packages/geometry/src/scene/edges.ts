/**
 * Diffracting edges of a scene: the wedges formed by its walls.
 *
 * 3-D scenes: every polygon edge of every wall is a candidate edge. The faces meeting along it
 * are found by testing, for each wall whose plane holds the edge, the two points just beside the
 * edge's midpoint (1e-6 m away, on either side within that plane): each one inside the wall adds
 * a half-plane leaving the edge in that direction. A wall sharing the edge adds one half-plane, a
 * wall the edge lies across (a facade standing on a ground polygon) adds two. 2-D scenes: the
 * edges are the vertical lines through the segment ends, and the half-planes are the directions
 * along each segment leaving that point (two for a segment passing through it).
 *
 * The half-planes are sorted by angle about the edge; a gap wider than pi between two neighbours
 * is the exterior of a wedge (at most one gap can be), with exterior angle n pi, n = gap / pi:
 * a free edge of a lone wall is a half-plane (n = 2), the corner of a box building n = 1.5.
 * Gaps of pi or less (flat continuations, concave corners) do not diffract. Edges are classified
 * at their midpoint (an edge only partly shared is treated as its midpoint sees it).
 *
 * Edge-fixed frame of wedge w: edge point A, unit edge direction e, face 0 leaving the edge along
 * the unit vector t0 (perpendicular to e), b0 = e x t0; the angle of a point about the edge is
 * phi = atan2(d . b0, d . t0), d its offset from the edge, measured from face 0 through the
 * exterior to face n at n pi. Layout of `data`, WEDGE_STRIDE values per wedge:
 *   [Ax, Ay, Az, ex, ey, ez, length, t0x, t0y, t0z, b0x, b0y, b0z, n]
 * (2-D: A at z = 0, e = +z, length Infinity.)
 */
import type { PreparedScene } from './scene.js';

/**
 * Values per wedge in `SceneWedges.data`.
 * @example WEDGE_STRIDE // 14
 */
export const WEDGE_STRIDE = 14;

/**
 * The diffracting wedges of a prepared scene.
 * @example sceneWedges(prepareScene({ walls: [{ vertices: [[0, 0], [10, 0]] }] })).names // ['walls[0].vertices[0]', 'walls[0].vertices[1]']: both ends of a lone wall are half-planes
 */
export interface SceneWedges {
  /** WEDGE_STRIDE values per wedge (module comment). */
  data: Float64Array;
  /** Wall index of face 0 and of face n per wedge (the same wall for a half-plane). */
  faces: Int32Array;
  /** The edge's name: "walls[i].vertices[j]" (2-D, the segment end) or "walls[i].edges[j]" (3-D, from vertex j to j + 1), the lowest wall index holding it. */
  names: string[];
  /** Per wedge, the wall i and the vertex or edge number j of its name. */
  wall: Int32Array;
  part: Int32Array;
  /** Wedge index by name. */
  index: Map<string, number>;
  count: number;
}

const cache = new WeakMap<PreparedScene, SceneWedges>();
const SIDE_OFFSET_M = 1e-6;

/**
 * The wedges of a prepared scene (computed once per scene, then cached).
 * @example
 * // A 10 m x 10 m box building in 2-D: four corners, each a right-angled wedge (n = 1.5)
 * const box = prepareScene({ walls: [{ vertices: [[0, 0], [10, 0]] }, { vertices: [[10, 0], [10, 10]] }, { vertices: [[10, 10], [0, 10]] }, { vertices: [[0, 10], [0, 0]] }] });
 * const w = sceneWedges(box); [w.count, w.data[13]] // [4, 1.5]
 */
export function sceneWedges(ps: PreparedScene): SceneWedges {
  let w = cache.get(ps);
  if (w === undefined) {
    w = ps.is2D ? wedges2D(ps) : wedges3D(ps);
    cache.set(ps, w);
  }
  return w;
}

interface HalfPlane {
  dx: number;
  dy: number;
  dz: number;
  wall: number;
}

class Builder {
  readonly data: number[] = [];
  readonly faces: number[] = [];
  readonly names: string[] = [];
  readonly wall: number[] = [];
  readonly part: number[] = [];

  /** Add the wedge of the widest gap (> pi) among the half-planes about edge e, if any. */
  add(
    wall: number,
    part: number,
    name: string,
    ax: number,
    ay: number,
    az: number,
    ex: number,
    ey: number,
    ez: number,
    length: number,
    planes: HalfPlane[],
  ): void {
    if (planes.length === 0) return;
    const r = planes[0]!;
    // q = e x r: the reference frame for the angles
    const qx = ey * r.dz - ez * r.dy,
      qy = ez * r.dx - ex * r.dz,
      qz = ex * r.dy - ey * r.dx;
    const angles = planes
      .map((p) => {
        let a = Math.atan2(p.dx * qx + p.dy * qy + p.dz * qz, p.dx * r.dx + p.dy * r.dy + p.dz * r.dz);
        if (a < 0) a += 2 * Math.PI;
        return { a, p };
      })
      .sort((u, v) => u.a - v.a);
    let best = -1,
      gap = 0;
    for (let i = 0; i < angles.length; i++) {
      const next = i + 1 < angles.length ? angles[i + 1]!.a : angles[0]!.a + 2 * Math.PI;
      const g = next - angles[i]!.a;
      if (g > gap) {
        gap = g;
        best = i;
      }
    }
    if (!(gap > Math.PI + 1e-9)) return;
    const f0 = angles[best]!.p,
      fn = angles[(best + 1) % angles.length]!.p;
    const bx = ey * f0.dz - ez * f0.dy,
      by = ez * f0.dx - ex * f0.dz,
      bz = ex * f0.dy - ey * f0.dx;
    this.data.push(ax, ay, az, ex, ey, ez, length, f0.dx, f0.dy, f0.dz, bx, by, bz, gap / Math.PI);
    this.faces.push(f0.wall, fn.wall);
    this.names.push(name);
    this.wall.push(wall);
    this.part.push(part);
  }

  done(): SceneWedges {
    return {
      data: Float64Array.from(this.data),
      faces: Int32Array.from(this.faces),
      names: this.names,
      wall: Int32Array.from(this.wall),
      part: Int32Array.from(this.part),
      index: new Map(this.names.map((n, i) => [n, i])),
      count: this.names.length,
    };
  }
}

function wedges2D(ps: PreparedScene): SceneWedges {
  const s = ps.segments,
    W = ps.wallCount,
    b = new Builder();
  const seen = new Set<string>();
  const tol = 1e-9;
  for (let i = 0; i < W; i++) {
    for (let j = 0; j < 2; j++) {
      const o = 5 * i;
      const px = s[o]! + j * s[o + 4]! * s[o + 2]!,
        py = s[o + 1]! + j * s[o + 4]! * s[o + 3]!;
      const key = `${Math.round(px * 1e6)},${Math.round(py * 1e6)}`;
      if (seen.has(key)) continue;
      seen.add(key);
      const planes: HalfPlane[] = [];
      for (let k = 0; k < W; k++) {
        const q = 5 * k;
        const rx = px - s[q]!,
          ry = py - s[q + 1]!;
        const along = rx * s[q + 2]! + ry * s[q + 3]!,
          across = -rx * s[q + 3]! + ry * s[q + 2]!;
        const len = s[q + 4]!,
          scale = Math.max(1, len);
        if (Math.abs(across) > tol * scale || along < -tol * scale || along > len + tol * scale) continue;
        if (along > tol * scale) planes.push({ dx: -s[q + 2]!, dy: -s[q + 3]!, dz: 0, wall: k });
        if (along < len - tol * scale) planes.push({ dx: s[q + 2]!, dy: s[q + 3]!, dz: 0, wall: k });
      }
      b.add(i, j, `walls[${i}].vertices[${j}]`, px, py, 0, 0, 0, 1, Infinity, planes);
    }
  }
  return b.done();
}

function wedges3D(ps: PreparedScene): SceneWedges {
  const walls = ps.scene.walls ?? [];
  const pl = ps.planes,
    W = ps.wallCount,
    b = new Builder();
  const seen = new Set<string>();
  const key = (p: readonly number[]): string => `${Math.round(p[0]! * 1e6)},${Math.round(p[1]! * 1e6)},${Math.round(p[2]! * 1e6)}`;
  for (let i = 0; i < W; i++) {
    const vs = walls[i]!.vertices;
    for (let j = 0; j < vs.length; j++) {
      const a = vs[j]!,
        c = vs[(j + 1) % vs.length]!;
      const ka = key(a),
        kc = key(c);
      if (ka === kc) continue;
      const k2 = ka < kc ? `${ka}|${kc}` : `${kc}|${ka}`;
      if (seen.has(k2)) continue;
      seen.add(k2);
      let ex = c[0]! - a[0]!,
        ey = c[1]! - a[1]!,
        ez = c[2]! - a[2]!;
      const length = Math.hypot(ex, ey, ez);
      ex /= length;
      ey /= length;
      ez /= length;
      const mx = (a[0]! + c[0]!) / 2,
        my = (a[1]! + c[1]!) / 2,
        mz = (a[2]! + c[2]!) / 2;
      const tol = 1e-6 * Math.max(1, length);
      const planes: HalfPlane[] = [];
      for (let k = 0; k < W; k++) {
        const o = 4 * k,
          nx = pl[o]!,
          ny = pl[o + 1]!,
          nz = pl[o + 2]!,
          d = pl[o + 3]!;
        if (Math.abs(nx * a[0]! + ny * a[1]! + nz * a[2]! - d) > tol || Math.abs(nx * c[0]! + ny * c[1]! + nz * c[2]! - d) > tol) continue;
        // in-plane direction perpendicular to the edge: n x e
        let ux = ny * ez - nz * ey,
          uy = nz * ex - nx * ez,
          uz = nx * ey - ny * ex;
        const un = Math.hypot(ux, uy, uz);
        ux /= un;
        uy /= un;
        uz /= un;
        for (const sgn of [1, -1]) {
          const h = SIDE_OFFSET_M * sgn;
          if (ps.insideWall(k, mx + h * ux, my + h * uy, mz + h * uz, 0)) planes.push({ dx: sgn * ux, dy: sgn * uy, dz: sgn * uz, wall: k });
        }
      }
      b.add(i, j, `walls[${i}].edges[${j}]`, a[0]!, a[1]!, a[2]!, ex, ey, ez, length, planes);
    }
  }
  return b.done();
}
