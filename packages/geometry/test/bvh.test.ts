import { describe, expect, it } from 'vitest';
import { Bvh, BVH_LEAF_SIZE } from '../src/scene/bvh.js';

// Reference for every query: exhaustive search over all boxes (the definition of the query), so
// the hierarchy must return exactly the same set. Fixed seeds.
function rng(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
}

function randomBoxes(n: number, seed: number, unboundedZ = false): Float64Array {
  const r = rng(seed);
  const b = new Float64Array(6 * n);
  for (let p = 0; p < n; p++) {
    const x = 100 * r(),
      y = 100 * r(),
      z = 20 * r();
    const sx = 5 * r(),
      sy = 5 * r() * (r() < 0.2 ? 0 : 1),
      sz = 3 * r();
    b.set([x, y, unboundedZ ? -Infinity : z, x + sx, y + sy, unboundedZ ? Infinity : z + sz], 6 * p);
  }
  return b;
}

function touches(b: Float64Array, p: number, a: number[], c: number[]): boolean {
  let t0 = 0,
    t1 = 1;
  for (let k = 0; k < 3; k++) {
    const lo = b[6 * p + k]! - 1e-9,
      hi = b[6 * p + 3 + k]! + 1e-9,
      d = c[k]! - a[k]!;
    if (d === 0) {
      if (a[k]! < lo || a[k]! > hi) return false;
      continue;
    }
    let u = (lo - a[k]!) / d,
      v = (hi - a[k]!) / d;
    if (u > v) [u, v] = [v, u];
    t0 = Math.max(t0, u);
    t1 = Math.min(t1, v);
    if (t0 > t1) return false;
  }
  return true;
}

describe('Bvh', () => {
  it('is a tree over every primitive once, leaves of at most BVH_LEAF_SIZE, each node box holding its children', () => {
    for (const n of [0, 1, 3, 4, 5, 17, 1000]) {
      const boxes = randomBoxes(n, 7 + n);
      const bvh = new Bvh(boxes);
      const seen = new Int32Array(n);
      const walk = (node: number, lo: number[], hi: number[]): void => {
        const b = bvh.nodeBounds;
        for (let k = 0; k < 3; k++) {
          expect(b[6 * node + k]).toBeGreaterThanOrEqual(lo[k]!);
          expect(b[6 * node + 3 + k]).toBeLessThanOrEqual(hi[k]!);
        }
        const nlo = [b[6 * node]!, b[6 * node + 1]!, b[6 * node + 2]!],
          nhi = [b[6 * node + 3]!, b[6 * node + 4]!, b[6 * node + 5]!];
        if (bvh.nodeFirst[node]! >= 0) {
          expect(bvh.nodeCount[node]).toBeLessThanOrEqual(BVH_LEAF_SIZE);
          for (let i = bvh.nodeFirst[node]!; i < bvh.nodeFirst[node]! + bvh.nodeCount[node]!; i++) {
            const p = bvh.order[i]!;
            seen[p]!++;
            for (let k = 0; k < 3; k++) {
              expect(boxes[6 * p + k]).toBeGreaterThanOrEqual(nlo[k]!);
              expect(boxes[6 * p + 3 + k]).toBeLessThanOrEqual(nhi[k]!);
            }
          }
        } else {
          walk(node + 1, nlo, nhi);
          walk(bvh.nodeCount[node]!, nlo, nhi);
        }
      };
      if (n > 0) walk(0, [-Infinity, -Infinity, -Infinity], [Infinity, Infinity, Infinity]);
      expect([...seen].every((c) => c === 1)).toBe(true);
      if (n > 0) expect(bvh.nodes).toBeLessThanOrEqual(2 * n - 1);
    }
  });

  it('forEachOnSegment visits exactly the boxes a segment touches (exhaustive search as reference)', () => {
    for (const unbounded of [false, true]) {
      const boxes = randomBoxes(500, unbounded ? 11 : 12, unbounded);
      const bvh = new Bvh(boxes);
      const r = rng(99);
      for (let q = 0; q < 300; q++) {
        const a = [110 * r() - 5, 110 * r() - 5, unbounded ? 0 : 25 * r()];
        const c = q % 10 === 0 ? [a[0]!, a[1]!, a[2]!] : [110 * r() - 5, 110 * r() - 5, unbounded ? 0 : 25 * r()];
        if (q % 7 === 0) c[0] = a[0]!; // axis-parallel segments
        const got: number[] = [];
        bvh.forEachOnSegment(a[0]!, a[1]!, a[2]!, c[0]!, c[1]!, c[2]!, (p) => {
          got.push(p);
          return false;
        });
        const want: number[] = [];
        for (let p = 0; p < 500; p++) if (touches(boxes, p, a, c)) want.push(p);
        expect(got.sort((x, y) => x - y)).toEqual(want);
        // early exit: stops at the first accepted primitive
        let calls = 0;
        const any = bvh.forEachOnSegment(a[0]!, a[1]!, a[2]!, c[0]!, c[1]!, c[2]!, () => {
          calls++;
          return true;
        });
        expect(any).toBe(want.length > 0);
        expect(calls).toBe(want.length > 0 ? 1 : 0);
      }
    }
  });

  it('raycast returns the nearest hit (exhaustive search as reference)', () => {
    // primitives: spheres inscribed in random boxes, intersected exactly
    const n = 3000;
    const boxes = randomBoxes(n, 21);
    const bvh = new Bvh(boxes);
    const sphereT = (p: number, o: number[], d: number[]): number => {
      const c = [0, 1, 2].map((k) => 0.5 * (boxes[6 * p + k]! + boxes[6 * p + 3 + k]!));
      const rad = 0.5 * Math.min(...[0, 1, 2].map((k) => boxes[6 * p + 3 + k]! - boxes[6 * p + k]!));
      const oc = [0, 1, 2].map((k) => o[k]! - c[k]!);
      const b = oc[0]! * d[0]! + oc[1]! * d[1]! + oc[2]! * d[2]!,
        cc = oc[0]! ** 2 + oc[1]! ** 2 + oc[2]! ** 2 - rad * rad;
      const disc = b * b - cc;
      if (disc < 0) return Infinity;
      const t = -b - Math.sqrt(disc);
      return t > 0 ? t : Infinity;
    };
    const r = rng(5);
    const out = new Float64Array(1);
    let hits = 0;
    for (let q = 0; q < 300; q++) {
      const o = [100 * r(), 100 * r(), 10 * r()];
      const th = 2 * Math.PI * r(),
        el = 0.3 * (r() - 0.5);
      const d = [Math.cos(th) * Math.cos(el), Math.sin(th) * Math.cos(el), Math.sin(el)];
      const got = bvh.raycast(o[0]!, o[1]!, o[2]!, d[0]!, d[1]!, d[2]!, 80, (p) => sphereT(p, o, d), out);
      let best = -1,
        tb = 80;
      for (let p = 0; p < n; p++) {
        const t = sphereT(p, o, d);
        if (t > 0 && t < tb) {
          tb = t;
          best = p;
        }
      }
      expect(got).toBe(best);
      expect(out[0]).toBe(tb);
      if (best >= 0) hits++;
    }
    expect(hits).toBeGreaterThan(30); // the check is not vacuous
  });

  it('collectInHalfSpaces keeps exactly the boxes not wholly outside a plane (exhaustive search as reference)', () => {
    const n = 600;
    const boxes = randomBoxes(n, 31);
    const bvh = new Bvh(boxes);
    const r = rng(8);
    const out = new Int32Array(n);
    for (let q = 0; q < 100; q++) {
      const m = 1 + (q % 5);
      const planes = new Float64Array(4 * m);
      for (let i = 0; i < m; i++) {
        const nx = r() - 0.5,
          ny = r() - 0.5,
          nz = q % 3 === 0 ? 0 : r() - 0.5,
          l = Math.hypot(nx, ny, nz);
        planes.set([nx / l, ny / l, nz / l, (nx * 50 + ny * 50 + nz * 10) / l - 10 * r()], 4 * i);
      }
      const count = bvh.collectInHalfSpaces(planes, m, 0, out);
      const want: number[] = [];
      for (let p = 0; p < n; p++) {
        let outside = false;
        for (let i = 0; i < m && !outside; i++) {
          let best = -Infinity;
          for (const cx of [0, 3])
            for (const cy of [1, 4])
              for (const cz of [2, 5]) {
                best = Math.max(best, planes[4 * i]! * boxes[6 * p + cx]! + planes[4 * i + 1]! * boxes[6 * p + cy]! + planes[4 * i + 2]! * boxes[6 * p + cz]!);
              }
          if (best < planes[4 * i + 3]! - 1e-12) outside = true;
        }
        if (!outside) want.push(p);
      }
      expect([...out.subarray(0, count)].sort((x, y) => x - y)).toEqual(want);
    }
  });

  it('refuses boxes of the wrong length or with min > max', () => {
    expect(() => new Bvh(new Float64Array(5))).toThrow('Bvh(): boxes must hold 6 values per primitive, got length 5');
    expect(() => new Bvh(Float64Array.of(0, 0, 0, -1, 1, 1))).toThrow('Bvh(): box 0 has min > max (or NaN) on axis 0: 0 > -1');
  });
});
