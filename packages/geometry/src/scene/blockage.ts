/**
 * Loss of a path segment caused by the scene's blockers.
 *
 * A blocker with `lossDb` adds that fixed loss when the segment passes through it.
 * A blocker without `lossDb` adds the single knife-edge loss J(v) of ITU-R P.526 for its least
 * obstruction, so that the loss rises and falls continuously as the blocker moves across a path:
 * - look along the segment a -> b (length d, unit t) and project the blocker's silhouette on the
 *   plane perpendicular to t (3-D: the convex hull of the box corners or of two 32-point rings
 *   of the cylinder; 2-D: the footprint's interval across the segment, the blocker being
 *   unbounded in height);
 * - h is the signed distance from the segment's line to the silhouette's boundary: positive
 *   inside (how far the line must move to clear the nearest silhouette edge), negative outside
 *   (the clearance past the nearest edge); this is the obstruction of the least obstructed edge;
 * - the edge sits at d1 from a, the middle of the blocker's extent along t (clamped to
 *   [0.001 d, 0.999 d]), d2 = d - d1, and v = h sqrt(2 d / (lambda d1 d2));
 * - a blocker entirely behind either end of the segment (its extent along t outside [0, d])
 *   adds nothing. Several blockers add their losses in dB (no multiple-edge method).
 *
 * A cylinder (a person, a pole) is not one edge: the wave passes it on both sides (and over the
 * top in 3-D). Its silhouette is taken as the rectangle spanned by its extent across the segment
 * (2-D: [x - r, x + r]; 3-D: the extent along e1 and e2 below), each side of it a knife edge with
 * its own obstruction h_i and loss J(v_i), combined as ITU-R P.526's finite-width screen (the
 * minimum-loss form, the edges' fields in phase, M):
 *   L = max(0, -20 log10(sum_i 10^(-J(v_i) / 20))),
 * so a receiver right behind a slim person gets both sides' fields (J - 6 dB for a centred one),
 * and where one side dominates L tends to that side's J(v).
 */
import type { PreparedScene } from './scene.js';
import { knifeEdgeLossDb } from './knife-edge.js';

const MAX_POINTS = 128;
const xs = new Float64Array(MAX_POINTS);
const ys = new Float64Array(MAX_POINTS);
const order = new Int32Array(MAX_POINTS);
const hull = new Int32Array(2 * MAX_POINTS);

/**
 * Total blocker loss in dB of the segment a -> b at wavelength `lambda`.
 * @example segmentBlockageDb(prepareScene({ blockers: [{ shape: 'box', min: [4, -1, 0], max: [6, 1, 5], lossDb: 20 }] }), 0, 0, 1, 10, 0, 1, 0.01) // 20
 */
export function segmentBlockageDb(ps: PreparedScene, ax: number, ay: number, az: number, bx: number, by: number, bz: number, lambda: number): number {
  const blockers = ps.scene.blockers;
  if (blockers === undefined || blockers.length === 0) return 0;
  const dx = bx - ax,
    dy = by - ay,
    dz = ps.is2D ? 0 : bz - az;
  const d = Math.hypot(dx, dy, dz);
  if (!(d > 0)) return 0;
  const tx = dx / d,
    ty = dy / d,
    tz = dz / d;
  const sph = ps.blockerSpheres;
  const reject = 0.78 / Math.sqrt(8 / (lambda * d)); // clearance beyond which v <= -0.78 for any d1
  let total = 0;
  for (let i = 0; i < blockers.length; i++) {
    const b = blockers[i]!;
    if (b.lossDb !== undefined) {
      if (segmentCrosses(ps, i, ax, ay, az, dx, dy, dz)) total += b.lossDb;
      continue;
    }
    const cx = sph[4 * i]! - ax,
      cy = sph[4 * i + 1]! - ay,
      cz = ps.is2D ? 0 : sph[4 * i + 2]! - az,
      r = sph[4 * i + 3]!;
    const sc = cx * tx + cy * ty + cz * tz;
    if (sc + r <= 0 || sc - r >= d) continue;
    const px = cx - sc * tx,
      py = cy - sc * ty,
      pz = cz - sc * tz;
    if (Math.hypot(px, py, pz) - r >= reject) continue;
    total += knifeEdgeOfBlocker(ps, i, ax, ay, az, tx, ty, tz, d, lambda);
  }
  return total;
}

function knifeEdgeOfBlocker(
  ps: PreparedScene,
  i: number,
  ax: number,
  ay: number,
  az: number,
  tx: number,
  ty: number,
  tz: number,
  d: number,
  lambda: number,
): number {
  const b = ps.scene.blockers![i]!;
  let h: number, sMin: number, sMax: number;
  // cylinders: obstruction of each side of the silhouette rectangle (right, left, top, bottom)
  let hR = Infinity,
    hL = Infinity,
    hT = Infinity,
    hB = Infinity;
  if (ps.is2D) {
    // Horizontal segment; across-track unit e = (-ty, tx).
    const ex = -ty,
      ey = tx;
    if (b.shape === 'cylinder') {
      const cx = b.base[0]! - ax,
        cy = b.base[1]! - ay;
      const s = cx * tx + cy * ty,
        x = cx * ex + cy * ey;
      sMin = s - b.radiusM;
      sMax = s + b.radiusM;
      hR = x + b.radiusM;
      hL = b.radiusM - x;
      h = Math.min(hR, hL);
    } else {
      const p = ps.blockerPoints[i]!;
      let lo = Infinity,
        hi = -Infinity;
      sMin = Infinity;
      sMax = -Infinity;
      for (let k = 0; k < p.length; k += 3) {
        const cx = p[k]! - ax,
          cy = p[k + 1]! - ay;
        const s = cx * tx + cy * ty,
          x = cx * ex + cy * ey;
        if (s < sMin) sMin = s;
        if (s > sMax) sMax = s;
        if (x < lo) lo = x;
        if (x > hi) hi = x;
      }
      h = Math.min(hi, -lo);
    }
  } else {
    // Perpendicular basis: e1 = normalize(t x z) (or t x x for a vertical segment), e2 = t x e1.
    let e1x = ty,
      e1y = -tx,
      e1z = 0;
    let n1 = Math.hypot(e1x, e1y);
    if (n1 < 1e-9) {
      e1x = 0;
      e1y = tz;
      e1z = -ty;
      n1 = Math.hypot(e1y, e1z);
    }
    e1x /= n1;
    e1y /= n1;
    e1z /= n1;
    const e2x = ty * e1z - tz * e1y,
      e2y = tz * e1x - tx * e1z,
      e2z = tx * e1y - ty * e1x;
    const p = ps.blockerPoints[i]!;
    const m = p.length / 3;
    sMin = Infinity;
    sMax = -Infinity;
    for (let k = 0; k < m; k++) {
      const cx = p[3 * k]! - ax,
        cy = p[3 * k + 1]! - ay,
        cz = p[3 * k + 2]! - az;
      const s = cx * tx + cy * ty + cz * tz;
      if (s < sMin) sMin = s;
      if (s > sMax) sMax = s;
      xs[k] = cx * e1x + cy * e1y + cz * e1z;
      ys[k] = cx * e2x + cy * e2y + cz * e2z;
    }
    h = signedDepthInHull(m);
    if (b.shape === 'cylinder') {
      let u0 = Infinity,
        u1 = -Infinity,
        w0 = Infinity,
        w1 = -Infinity;
      for (let k = 0; k < m; k++) {
        if (xs[k]! < u0) u0 = xs[k]!;
        if (xs[k]! > u1) u1 = xs[k]!;
        if (ys[k]! < w0) w0 = ys[k]!;
        if (ys[k]! > w1) w1 = ys[k]!;
      }
      hR = u1;
      hL = -u0;
      hT = w1;
      hB = -w0;
    }
  }
  if (sMax <= 0 || sMin >= d) return 0;
  let d1 = (Math.max(sMin, 0) + Math.min(sMax, d)) / 2;
  d1 = Math.min(Math.max(d1, 1e-3 * d), (1 - 1e-3) * d);
  const kappa = Math.sqrt((2 * d) / (lambda * d1 * (d - d1)));
  if (b.shape !== 'cylinder') return knifeEdgeLossDb(h * kappa);
  let sum = 0;
  for (const hi of [hR, hL, hT, hB]) if (hi !== Infinity) sum += 10 ** (-knifeEdgeLossDb(hi * kappa) / 20);
  return Math.max(0, -20 * Math.log10(sum));
}

/**
 * Signed distance of the origin to the convex hull of (xs[k], ys[k]), k < m: positive inside
 * (distance to the nearest edge), negative outside (minus the distance to the hull).
 */
function signedDepthInHull(m: number): number {
  for (let k = 0; k < m; k++) order[k] = k;
  for (let k = 1; k < m; k++) {
    // insertion sort by (x, y)
    const o = order[k]!,
      ox = xs[o]!,
      oy = ys[o]!;
    let j = k - 1;
    while (j >= 0 && (xs[order[j]!]! > ox || (xs[order[j]!]! === ox && ys[order[j]!]! > oy))) {
      order[j + 1] = order[j]!;
      j--;
    }
    order[j + 1] = o;
  }
  // Andrew's monotone chain, counter-clockwise, last point not repeated.
  let n = 0;
  const cross = (a: number, b: number, c: number): number => (xs[b]! - xs[a]!) * (ys[c]! - ys[a]!) - (ys[b]! - ys[a]!) * (xs[c]! - xs[a]!);
  for (let k = 0; k < m; k++) {
    const c = order[k]!;
    while (n >= 2 && cross(hull[n - 2]!, hull[n - 1]!, c) <= 0) n--;
    hull[n++] = c;
  }
  const lower = n + 1;
  for (let k = m - 2; k >= 0; k--) {
    const c = order[k]!;
    while (n >= lower && cross(hull[n - 2]!, hull[n - 1]!, c) <= 0) n--;
    hull[n++] = c;
  }
  n--; // the first point closes the loop
  if (n < 3) return -Math.hypot(xs[order[0]!]!, ys[order[0]!]!); // degenerate silhouette
  let inside = true,
    minInside = Infinity,
    minOutside = Infinity;
  for (let k = 0; k < n; k++) {
    const a = hull[k]!,
      b = hull[(k + 1) % n]!;
    const ex = xs[b]! - xs[a]!,
      ey = ys[b]! - ys[a]!;
    const len = Math.hypot(ex, ey);
    const c = (ex * -ys[a]! - ey * -xs[a]!) / len; // signed distance, > 0 on the inner side
    if (c < 0) inside = false;
    if (c < minInside) minInside = c;
    let t = -(xs[a]! * ex + ys[a]! * ey) / (len * len);
    t = t < 0 ? 0 : t > 1 ? 1 : t;
    const dist = Math.hypot(xs[a]! + t * ex, ys[a]! + t * ey);
    if (dist < minOutside) minOutside = dist;
  }
  return inside ? minInside : -minOutside;
}

/** True when the segment a -> a + (dx, dy, dz) passes through blocker i (2-D: unbounded in z). */
function segmentCrosses(ps: PreparedScene, i: number, ax: number, ay: number, az: number, dx: number, dy: number, dz: number): boolean {
  const b = ps.scene.blockers![i]!;
  let t0 = 0,
    t1 = 1;
  if (b.shape === 'box') {
    const dims = ps.is2D ? 2 : 3;
    const a = [ax, ay, az],
      dd = [dx, dy, dz];
    for (let k = 0; k < dims; k++) {
      const lo = b.min[k]!,
        hi = b.max[k]!;
      if (Math.abs(dd[k]!) < 1e-300) {
        if (a[k]! < lo || a[k]! > hi) return false;
        continue;
      }
      let u0 = (lo - a[k]!) / dd[k]!,
        u1 = (hi - a[k]!) / dd[k]!;
      if (u0 > u1) {
        const s = u0;
        u0 = u1;
        u1 = s;
      }
      if (u0 > t0) t0 = u0;
      if (u1 < t1) t1 = u1;
      if (t0 >= t1) return false;
    }
    return true;
  }
  if (!ps.is2D) {
    const z0 = b.base[2]!,
      z1 = z0 + b.heightM;
    if (Math.abs(dz) < 1e-300) {
      if (az < z0 || az > z1) return false;
    } else {
      let u0 = (z0 - az) / dz,
        u1 = (z1 - az) / dz;
      if (u0 > u1) {
        const s = u0;
        u0 = u1;
        u1 = s;
      }
      t0 = Math.max(t0, u0);
      t1 = Math.min(t1, u1);
      if (t0 >= t1) return false;
    }
  }
  // |(a - c) + t d|^2 <= r^2 in the horizontal plane
  const px = ax - b.base[0]!,
    py = ay - b.base[1]!;
  const qa = dx * dx + dy * dy,
    qb = 2 * (px * dx + py * dy),
    qc = px * px + py * py - b.radiusM * b.radiusM;
  if (qa < 1e-300) return qc < 0;
  const disc = qb * qb - 4 * qa * qc;
  if (disc <= 0) return false;
  const sq = Math.sqrt(disc);
  const u0 = (-qb - sq) / (2 * qa),
    u1 = (-qb + sq) / (2 * qa);
  return Math.max(t0, u0) < Math.min(t1, u1);
}
