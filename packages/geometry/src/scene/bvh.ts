/**
 * A bounding volume hierarchy over axis-aligned boxes (one box per scene face), in flat typed
 * arrays, for the tracer's visibility and intersection queries. Queries allocate nothing: the
 * traversal stack is owned by the hierarchy and callers pass long-lived callbacks.
 *
 * Layouts (P primitives, N nodes, N <= 2 P - 1):
 * - input boxes Float64Array(6 P): [minX, minY, minZ, maxX, maxY, maxZ] per primitive; a bound may
 *   be -Infinity / Infinity (2-D walls are unbounded in z);
 * - `nodeBounds` Float64Array(6 N), same order per node;
 * - `nodeFirst` Int32Array(N): a leaf's first slot in `order`, or for an inner node -1;
 * - `nodeCount` Int32Array(N): a leaf's primitive count, or for an inner node the index of its
 *   second child (the first child is the next node, depth-first layout);
 * - `order` Int32Array(P): primitive indices, leaves' slots contiguous.
 *
 * Built top-down, splitting the longest axis of the box centres at the median (a balanced tree:
 * depth about log2(P / LEAF_SIZE)); centres of unbounded extents count as 0 on that axis.
 */

/**
 * Most primitives in one leaf.
 * @example BVH_LEAF_SIZE // 4
 */
export const BVH_LEAF_SIZE = 4;

/**
 * The hierarchy. Build it once per scene with `new Bvh(boxes)`; queries are re-entrant only in
 * the sense that a callback must not start another query on the same hierarchy (one stack).
 * @example
 * const bvh = new Bvh(Float64Array.of(0, 0, 0, 1, 1, 1, 5, 5, 5, 6, 6, 6)); // two unit cubes
 * const hits: number[] = [];
 * bvh.forEachOnSegment(0.5, 0.5, -1, 0.5, 0.5, 2, (p) => { hits.push(p); return false; });
 * hits // [0]: the segment passes through the first cube only
 */
export class Bvh {
  /** Number of primitives. */
  readonly size: number;
  /** Number of nodes. */
  readonly nodes: number;
  /** Node boxes, 6 values per node (module comment). */
  readonly nodeBounds: Float64Array;
  /** A leaf's first slot in `order`, -1 for an inner node. */
  readonly nodeFirst: Int32Array;
  /** A leaf's primitive count, or an inner node's second child. */
  readonly nodeCount: Int32Array;
  /** Primitive indices, each leaf's contiguous. */
  readonly order: Int32Array;
  /** The primitives' boxes as given (6 per primitive). */
  readonly boxes: Float64Array;
  private readonly stack: Int32Array;
  private readonly stackT: Float64Array;
  private planeScratch = new Float64Array(7 * 16);
  private pick = new Int32Array(3 * 16);

  /** Build over `boxes` (6 values per primitive, see the module comment). */
  constructor(boxes: Float64Array) {
    if (boxes.length % 6 !== 0) throw new RangeError(`Bvh(): boxes must hold 6 values per primitive, got length ${boxes.length}`);
    const P = boxes.length / 6;
    this.size = P;
    this.boxes = boxes;
    const maxNodes = Math.max(1, 2 * P - 1);
    const bounds = new Float64Array(6 * maxNodes);
    const first = new Int32Array(maxNodes);
    const count = new Int32Array(maxNodes);
    const order = new Int32Array(P);
    const centre = new Float64Array(3 * P);
    for (let p = 0; p < P; p++) {
      order[p] = p;
      for (let k = 0; k < 3; k++) {
        const lo = boxes[6 * p + k]!,
          hi = boxes[6 * p + 3 + k]!;
        if (!(lo <= hi)) throw new RangeError(`Bvh(): box ${p} has min > max (or NaN) on axis ${k}: ${lo} > ${hi}`);
        centre[3 * p + k] = Number.isFinite(lo) && Number.isFinite(hi) ? 0.5 * (lo + hi) : 0;
      }
    }
    let nodes = 0;
    // Explicit work stack of [node, start, end) to build depth-first without recursion.
    const work: number[] = [];
    const newNode = (start: number, end: number): number => {
      const n = nodes++;
      let x0 = Infinity,
        y0 = Infinity,
        z0 = Infinity,
        x1 = -Infinity,
        y1 = -Infinity,
        z1 = -Infinity;
      for (let i = start; i < end; i++) {
        const o = 6 * order[i]!;
        if (boxes[o]! < x0) x0 = boxes[o]!;
        if (boxes[o + 1]! < y0) y0 = boxes[o + 1]!;
        if (boxes[o + 2]! < z0) z0 = boxes[o + 2]!;
        if (boxes[o + 3]! > x1) x1 = boxes[o + 3]!;
        if (boxes[o + 4]! > y1) y1 = boxes[o + 4]!;
        if (boxes[o + 5]! > z1) z1 = boxes[o + 5]!;
      }
      bounds[6 * n] = x0;
      bounds[6 * n + 1] = y0;
      bounds[6 * n + 2] = z0;
      bounds[6 * n + 3] = x1;
      bounds[6 * n + 4] = y1;
      bounds[6 * n + 5] = z1;
      return n;
    };
    if (P === 0) {
      bounds.fill(0, 0, 6); // an empty leaf that nothing reaches (its box is never entered: count 0)
      first[0] = 0;
      count[0] = 0;
      nodes = 1;
    } else {
      work.push(newNode(0, P), 0, P);
    }
    while (work.length > 0) {
      const end = work.pop()!,
        start = work.pop()!,
        n = work.pop()!;
      if (n < 0) {
        // marker: the second child of inner node -n - 1 starts here
        count[-n - 1] = nodes;
        work.push(newNode(start, end), start, end);
        continue;
      }
      const m = end - start;
      if (m <= BVH_LEAF_SIZE) {
        first[n] = start;
        count[n] = m;
        continue;
      }
      let c0 = Infinity,
        c1 = -Infinity,
        axis = 0,
        spread = -1;
      for (let k = 0; k < 3; k++) {
        c0 = Infinity;
        c1 = -Infinity;
        for (let i = start; i < end; i++) {
          const c = centre[3 * order[i]! + k]!;
          if (c < c0) c0 = c;
          if (c > c1) c1 = c;
        }
        if (c1 - c0 > spread) {
          spread = c1 - c0;
          axis = k;
        }
      }
      const mid = start + (m >> 1);
      selectNth(order, centre, axis, start, end, mid);
      first[n] = -1;
      // depth-first: the first child is node n + 1; push the second child's marker below it
      work.push(-n - 1, mid, end);
      work.push(newNode(start, mid), start, mid);
    }
    this.nodes = nodes;
    this.nodeBounds = bounds.subarray(0, 6 * nodes);
    this.nodeFirst = first.subarray(0, nodes);
    this.nodeCount = count.subarray(0, nodes);
    this.order = order;
    this.stack = new Int32Array(Math.max(64, 2 * Math.ceil(Math.log2(P + 2)) + 8));
    this.stackT = new Float64Array(this.stack.length);
  }

  /**
   * Call `visit(p)` for every primitive whose box the closed segment a -> b touches (boxes
   * widened by `pad` metres, default 1e-9, so that touching counts); stops and returns true as
   * soon as `visit` returns true, else returns false. The order of visits is the tree's.
   * @example
   * const bvh = new Bvh(Float64Array.of(0, 0, 0, 1, 1, 1, 5, 5, 5, 6, 6, 6));
   * bvh.forEachOnSegment(-1, -1, -1, 7, 7, 7, (p) => p === 1) // true: the diagonal reaches the second cube
   */
  forEachOnSegment(ax: number, ay: number, az: number, bx: number, by: number, bz: number, visit: (primitive: number) => boolean, pad = 1e-9): boolean {
    if (this.size === 0) return false;
    const dx = bx - ax,
      dy = by - ay,
      dz = bz - az;
    const b = this.nodeBounds,
      first = this.nodeFirst,
      count = this.nodeCount,
      order = this.order,
      stack = this.stack;
    let top = 0;
    stack[top++] = 0;
    while (top > 0) {
      const n = stack[--top]!;
      if (!segmentTouchesBox(b, 6 * n, ax, ay, az, dx, dy, dz, pad)) continue;
      const f = first[n]!;
      if (f >= 0) {
        const boxes = this.boxes;
        for (let i = f, e = f + count[n]!; i < e; i++) {
          const p = order[i]!;
          if (segmentTouchesBox(boxes, 6 * p, ax, ay, az, dx, dy, dz, pad) && visit(p)) return true;
        }
      } else {
        stack[top++] = count[n]!;
        stack[top++] = n + 1;
      }
    }
    return false;
  }

  /**
   * Nearest hit along the ray o + t d, 0 < t < tMax: `intersect(p, tBest)` returns the ray
   * parameter of its hit with primitive p, or Infinity for none (it may skip hits beyond tBest).
   * Returns the nearest primitive and writes its t to `out[0]`, or returns -1 (out[0] = tMax).
   * Nodes are visited near-first and skipped once they lie beyond the best hit.
   * @example
   * const bvh = new Bvh(Float64Array.of(2, -1, -1, 2, 1, 1, 5, -1, -1, 5, 1, 1)); // two plates at x = 2 and x = 5
   * const t = new Float64Array(1);
   * [bvh.raycast(0, 0, 0, 1, 0, 0, 10, (p) => (p === 0 ? 2 : 5), t), t[0]] // [0, 2]: the plate at x = 2 is hit first
   */
  raycast(
    ox: number,
    oy: number,
    oz: number,
    dx: number,
    dy: number,
    dz: number,
    tMax: number,
    intersect: (primitive: number, tBest: number) => number,
    out: Float64Array,
  ): number {
    out[0] = tMax;
    if (this.size === 0) return -1;
    const b = this.nodeBounds,
      first = this.nodeFirst,
      count = this.nodeCount,
      order = this.order,
      stack = this.stack,
      st = this.stackT;
    let best = -1,
      tBest = tMax,
      top = 0;
    const t0 = boxEntry(b, 0, ox, oy, oz, dx, dy, dz, tBest);
    if (t0 === Infinity) return -1;
    stack[top] = 0;
    st[top++] = t0;
    while (top > 0) {
      top--;
      const n = stack[top]!;
      if (st[top]! > tBest) continue;
      const f = first[n]!;
      if (f >= 0) {
        for (let i = f, e = f + count[n]!; i < e; i++) {
          const p = order[i]!;
          const t = intersect(p, tBest);
          if (t > 0 && t < tBest) {
            tBest = t;
            best = p;
          }
        }
      } else {
        const c1 = n + 1,
          c2 = count[n]!;
        const e1 = boxEntry(b, 6 * c1, ox, oy, oz, dx, dy, dz, tBest),
          e2 = boxEntry(b, 6 * c2, ox, oy, oz, dx, dy, dz, tBest);
        // push the farther first so the nearer is popped first
        if (e1 <= e2) {
          if (e2 !== Infinity) {
            stack[top] = c2;
            st[top++] = e2;
          }
          if (e1 !== Infinity) {
            stack[top] = c1;
            st[top++] = e1;
          }
        } else {
          if (e1 !== Infinity) {
            stack[top] = c1;
            st[top++] = e1;
          }
          if (e2 !== Infinity) {
            stack[top] = c2;
            st[top++] = e2;
          }
        }
      }
    }
    out[0] = tBest;
    return best;
  }

  /**
   * Write into `out` (from slot `offset`, default 0) every primitive whose box is not wholly outside one of the
   * `planeCount` half-spaces n . x >= d (planes as [nx, ny, nz, d], unit normals, from plane
   * `planeStart`, default 0) by more than
   * `margin` metres; returns the count. A superset of the primitives meeting the intersection
   * of the half-spaces (a beam or frustum), in the tree's order.
   * @example
   * const bvh = new Bvh(Float64Array.of(0, 0, 0, 1, 1, 1, 5, 5, 5, 6, 6, 6));
   * const out = new Int32Array(2);
   * bvh.collectInHalfSpaces(Float64Array.of(1, 0, 0, 3), 1, 0, out) // 1 (out[0] = 1): only the second cube has x >= 3
   */
  collectInHalfSpaces(planes: Float64Array, planeCount: number, margin: number, out: Int32Array, offset = 0, planeStart = 0): number {
    if (this.size === 0) return 0;
    // Per plane, once: which bound of each axis is the far corner along n (a zero component reads
    // the lower bound with weight 0, and an infinite bound there is replaced by 0 via `use`).
    if (this.planeScratch.length < 7 * planeCount) {
      this.planeScratch = new Float64Array(7 * planeCount);
      this.pick = new Int32Array(3 * planeCount);
    }
    const P = this.planeScratch,
      pick = this.pick;
    for (let q = 0; q < planeCount; q++) {
      const src = 4 * (planeStart + q);
      const nx = planes[src]!,
        ny = planes[src + 1]!,
        nz = planes[src + 2]!;
      P[7 * q] = nx;
      P[7 * q + 1] = ny;
      P[7 * q + 2] = nz;
      P[7 * q + 3] = planes[src + 3]! - margin;
      P[7 * q + 4] = nx === 0 ? 0 : 1;
      P[7 * q + 5] = ny === 0 ? 0 : 1;
      P[7 * q + 6] = nz === 0 ? 0 : 1;
      pick[3 * q] = nx > 0 ? 3 : 0;
      pick[3 * q + 1] = ny > 0 ? 4 : 1;
      pick[3 * q + 2] = nz > 0 ? 5 : 2;
    }
    const b = this.nodeBounds,
      first = this.nodeFirst,
      count = this.nodeCount,
      order = this.order,
      stack = this.stack,
      boxes = this.boxes;
    let top = 0,
      found = offset;
    stack[top++] = 0;
    while (top > 0) {
      const n = stack[--top]!;
      if (outsidePicked(b, 6 * n, P, pick, planeCount)) continue;
      const f = first[n]!;
      if (f >= 0) {
        for (let i = f, e = f + count[n]!; i < e; i++) {
          const p = order[i]!;
          if (!outsidePicked(boxes, 6 * p, P, pick, planeCount)) out[found++] = p;
        }
      } else {
        stack[top++] = count[n]!;
        stack[top++] = n + 1;
      }
    }
    return found - offset;
  }
}

/** True when the box at offset o lies wholly outside one of the prepared planes (see collectInHalfSpaces). */
function outsidePicked(b: Float64Array, o: number, P: Float64Array, pick: Int32Array, planeCount: number): boolean {
  for (let q = 0, r = 0, t = 0; q < planeCount; q++, r += 7, t += 3) {
    const x = b[o + pick[t]!]!,
      y = b[o + pick[t + 1]!]!,
      z = b[o + pick[t + 2]!]!;
    const best = (P[r + 4] === 0 ? 0 : P[r]! * x) + (P[r + 5] === 0 ? 0 : P[r + 1]! * y) + (P[r + 6] === 0 ? 0 : P[r + 2]! * z);
    if (best < P[r + 3]!) return true;
  }
  return false;
}

/** Partial sort of order[start, end) so that order[nth] has the nth centre on `axis` (quickselect). */
function selectNth(order: Int32Array, centre: Float64Array, axis: number, start: number, end: number, nth: number): void {
  let lo = start,
    hi = end - 1;
  while (hi > lo) {
    const pivot = centre[3 * order[(lo + hi) >> 1]! + axis]!;
    let i = lo,
      j = hi;
    while (i <= j) {
      while (centre[3 * order[i]! + axis]! < pivot) i++;
      while (centre[3 * order[j]! + axis]! > pivot) j--;
      if (i <= j) {
        const t = order[i]!;
        order[i] = order[j]!;
        order[j] = t;
        i++;
        j--;
      }
    }
    if (nth <= j) hi = j;
    else if (nth >= i) lo = i;
    else return;
  }
}

/**
 * Slab test of the closed segment a + t d, t in [0, 1], against box at offset o widened by pad.
 * The three axes are written out: a per-axis helper would have to hand back two numbers (the
 * clipped t0, t1) per call in the hottest loop of the tracer.
 */
function segmentTouchesBox(b: Float64Array, o: number, ax: number, ay: number, az: number, dx: number, dy: number, dz: number, pad: number): boolean {
  let t0 = 0,
    t1 = 1;
  // x
  let lo = b[o]! - pad,
    hi = b[o + 3]! + pad;
  if (dx === 0) {
    if (ax < lo || ax > hi) return false;
  } else {
    let u = (lo - ax) / dx,
      v = (hi - ax) / dx;
    if (u > v) {
      const w = u;
      u = v;
      v = w;
    }
    if (u > t0) t0 = u;
    if (v < t1) t1 = v;
    if (t0 > t1) return false;
  }
  lo = b[o + 1]! - pad;
  hi = b[o + 4]! + pad;
  if (dy === 0) {
    if (ay < lo || ay > hi) return false;
  } else {
    let u = (lo - ay) / dy,
      v = (hi - ay) / dy;
    if (u > v) {
      const w = u;
      u = v;
      v = w;
    }
    if (u > t0) t0 = u;
    if (v < t1) t1 = v;
    if (t0 > t1) return false;
  }
  lo = b[o + 2]! - pad;
  hi = b[o + 5]! + pad;
  if (dz === 0) {
    if (az < lo || az > hi) return false;
  } else {
    let u = (lo - az) / dz,
      v = (hi - az) / dz;
    if (u > v) {
      const w = u;
      u = v;
      v = w;
    }
    if (u > t0) t0 = u;
    if (v < t1) t1 = v;
    if (t0 > t1) return false;
  }
  return true;
}

/** Ray parameter where o + t d enters the box (0 if inside), Infinity when it misses within [0, tMax]. */
function boxEntry(b: Float64Array, o: number, ox: number, oy: number, oz: number, dx: number, dy: number, dz: number, tMax: number): number {
  let t0 = 0,
    t1 = tMax;
  const pad = 1e-9;
  for (let k = 0; k < 3; k++) {
    const p = k === 0 ? ox : k === 1 ? oy : oz,
      d = k === 0 ? dx : k === 1 ? dy : dz;
    const lo = b[o + k]! - pad,
      hi = b[o + 3 + k]! + pad;
    if (d === 0) {
      if (p < lo || p > hi) return Infinity;
      continue;
    }
    let u = (lo - p) / d,
      v = (hi - p) / d;
    if (u > v) {
      const w = u;
      u = v;
      v = w;
    }
    if (u > t0) t0 = u;
    if (v < t1) t1 = v;
    if (t0 > t1) return Infinity;
  }
  return t0;
}
