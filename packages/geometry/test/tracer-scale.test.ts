import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { Occlusion } from '../src/scene/occlusion.js';
import { prepareScene, type PreparedScene, type Wall } from '../src/scene/scene.js';
import { traceDiffractions } from '../src/scene/diffraction.js';
import { traceReflections, traceScene } from '../src/scene/tracer.js';
import type { Vec3 } from '../src/vec3.js';
import { streetGrid } from '../../../bench/scenes.mjs';

// Reference: the image method by exhaustive enumeration of every wall sequence (no wall twice in
// a row), each sequence tested wall by wall against every other wall: the textbook algorithm
// (Allen & Berkley 1979 for rooms; M: from memory), written here independently of the tracer's
// beam, occlusion and hierarchy pruning. The pruned tracer must return exactly the same
// sequences and bit-identical reflection points.
function exhaustive(ps: PreparedScene, tx: Vec3, rx: Vec3, maxOrder: number): string[] {
  const W = ps.wallCount,
    pl = ps.planes,
    out: string[] = [];
  const val = (w: number, p: Vec3): number => pl[4 * w]! * p[0] + pl[4 * w + 1]! * p[1] + pl[4 * w + 2]! * p[2] - pl[4 * w + 3]!;
  const blocked = (a: Vec3, b: Vec3, s1: number, s2: number): boolean => {
    for (let w = 0; w < W; w++) if (w !== s1 && w !== s2 && ps.segmentCrossesWall(w, a[0], a[1], a[2], b[0], b[1], b[2])) return true;
    return false;
  };
  const visit = (seq: number[], images: Vec3[]): void => {
    const K = seq.length;
    const pts: Vec3[] = new Array<Vec3>(K);
    let q: Vec3 = rx,
      ok = true;
    for (let k = K; k >= 1 && ok; k--) {
      const w = seq[k - 1]!,
        I = images[k]!;
      const fq = val(w, q),
        fi = val(w, I);
      if (!((fq > 0 && fi < 0) || (fq < 0 && fi > 0))) {
        ok = false;
        break;
      }
      const s = fq / (fq - fi);
      const p: Vec3 = [q[0] + s * (I[0] - q[0]), q[1] + s * (I[1] - q[1]), q[2] + s * (I[2] - q[2])];
      if (!ps.insideWall(w, p[0], p[1], p[2], 1e-9)) {
        ok = false;
        break;
      }
      pts[k - 1] = p;
      q = p;
    }
    if (ok) {
      const chain = [tx, ...pts, rx];
      for (let k = 0; k <= K && ok; k++) if (blocked(chain[k]!, chain[k + 1]!, k > 0 ? seq[k - 1]! : -1, k < K ? seq[k]! : -1)) ok = false;
      if (ok) out.push(JSON.stringify([seq, pts]));
    }
    if (K === maxOrder) return;
    const src = images[K]!;
    for (let w = 0; w < W; w++) {
      if (K > 0 && seq[K - 1] === w) continue;
      const f = val(w, src);
      if (f === 0) continue;
      const I: Vec3 = [src[0] - 2 * f * pl[4 * w]!, src[1] - 2 * f * pl[4 * w + 1]!, src[2] - 2 * f * pl[4 * w + 2]!];
      visit([...seq, w], [...images, I]);
    }
  };
  visit([], [tx]);
  return out.filter((s) => JSON.parse(s)[0].length > 0).sort();
}

function pruned(ps: PreparedScene, tx: Vec3, rx: Vec3, order: number): string[] {
  const out: string[] = [];
  traceReflections(ps, tx, rx, order, (w, p) => out.push(JSON.stringify([w, p])));
  return out.sort();
}

function rng(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
}

describe('pruned image method equals the exhaustive one', () => {
  it('on a 3 x 3 street grid (36 facades and a ground plane) at orders 1-3, terminals around a corner', () => {
    const g = streetGrid({ n: 3 }) as { scene: { walls: Wall[] } };
    const ps = prepareScene(g.scene);
    let total = 0;
    for (let q = 0; q < 3; q++) {
      const tx: Vec3 = [48 + 7 * q, 36, 6],
        rx: Vec3 = [36, 61 - 9 * q, 1.5];
      const want = exhaustive(ps, tx, rx, 3);
      expect(pruned(ps, tx, rx, 3)).toEqual(want);
      total += want.length;
    }
    expect(total).toBeGreaterThan(10); // not vacuous: 23 reflection paths over the three links
  });

  it('on random 3-D scenes of 40 walls (triangles and quadrilaterals, a floor) and 2-D scenes of 40 segments', () => {
    const r = rng(17);
    let total = 0;
    for (let q = 0; q < 4; q++) {
      const w2: Wall[] = [],
        w3: Wall[] = [];
      for (let i = 0; i < 40; i++) {
        const x = 40 * r() - 20,
          y = 40 * r() - 20,
          t = Math.PI * r(),
          L = 2 + 10 * r(),
          z = 3 * r(),
          h = 1 + 5 * r();
        const x2 = x + L * Math.cos(t),
          y2 = y + L * Math.sin(t);
        w2.push({
          vertices: [
            [x, y],
            [x2, y2],
          ],
        });
        w3.push({
          vertices:
            i % 2
              ? [
                  [x, y, z],
                  [x2, y2, z],
                  [x2, y2, z + h],
                  [x, y, z + h],
                ]
              : [
                  [x, y, z],
                  [x2, y2, z],
                  [x2, y2, z + h],
                ],
        });
      }
      w3.push({
        vertices: [
          [-30, -30, 0],
          [30, -30, 0],
          [30, 30, 0],
          [-30, 30, 0],
        ],
      });
      for (const [walls, z] of [
        [w2, 0],
        [w3, 1.5],
      ] as const) {
        const ps = prepareScene({ walls });
        const tx: Vec3 = [10 * r(), 10 * r(), z],
          rx: Vec3 = [10 * r() - 10, 10 * r(), z === 0 ? 0 : 1 + r()];
        const want = exhaustive(ps, tx, rx, 3);
        expect(pruned(ps, tx, rx, 3)).toEqual(want);
        total += want.length;
      }
    }
    expect(total).toBeGreaterThan(20);
  });

  it('on the 20-wall room (exhaustive below 32 walls) the traced paths are those of the exhaustive search', () => {
    const room = JSON.parse(readFileSync(new URL('../../../test/fixtures/twenty-wall-room.json', import.meta.url), 'utf8')) as { scene: { walls: Wall[] } };
    const ps = prepareScene({ walls: room.scene.walls, maxReflectionOrder: 2 });
    const want = exhaustive(ps, [2, 5, 2.5], [17, 7, 1.5], 2);
    expect(pruned(ps, [2, 5, 2.5], [17, 7, 1.5], 2)).toEqual(want);
    const ids = traceScene(ps, { position: [2, 5, 2.5] }, { position: [17, 7, 1.5] }, 28e9)
      .paths.filter((p) => p.kind === 'reflection')
      .map((p) => p.interactions.map((i) => i.object.index));
    expect(ids.map((s) => JSON.stringify(s)).sort()).toEqual(want.map((s) => JSON.stringify(JSON.parse(s)[0])).sort());
  });
});

describe('Occlusion', () => {
  const screen: Wall[] = [
    {
      vertices: [
        [0, -1, -1],
        [0, 1, -1],
        [0, 1, 1],
        [0, -1, 1],
      ],
    },
    {
      vertices: [
        [5, -9, -9],
        [5, 9, -9],
        [5, 9, 9],
        [5, -9, 9],
      ],
    },
    {
      vertices: [
        [10, -1, -1],
        [10, 1, -1],
        [10, 1, 1],
        [10, -1, 1],
      ],
    },
  ];
  it('a large screen hides a small wall from a point and from another wall behind it, not from the front', () => {
    const occ = new Occlusion(prepareScene({ walls: screen }));
    expect(occ.wallHiddenFromPoint(0, 10, 0, 0)).toBe(true);
    expect(occ.wallHiddenFromPoint(0, -10, 0, 0)).toBe(false);
    expect(occ.wallHiddenFromWall(2, 0)).toBe(true);
    expect(occ.wallHiddenFromWall(0, 2)).toBe(true);
    expect(occ.wallHiddenFromWall(1, 0)).toBe(false);
  });
  it('a transmissive screen (thicknessM: the tracer passes through it) hides nothing', () => {
    const glass = screen.map((w, i): Wall => (i === 1 ? { ...w, material: 'glass', thicknessM: 0.01 } : w));
    const occ = new Occlusion(prepareScene({ walls: glass }));
    expect(occ.wallHiddenFromPoint(0, 10, 0, 0)).toBe(false);
    expect(occ.wallHiddenFromWall(2, 0)).toBe(false);
  });
  it('a point whose rays pass beside the screen, or a screen not convex, hides nothing', () => {
    const occ = new Occlusion(prepareScene({ walls: screen }));
    expect(occ.wallHiddenFromPoint(0, 10, 40, 0)).toBe(false); // from far aside the rays pass the screen's edge
    const notch: Wall = {
      vertices: [
        [5, -9, -9],
        [5, 9, -9],
        [5, 9, 9],
        [5, 0, 0.5],
        [5, -9, 9],
      ],
    }; // a concave outline
    const occ2 = new Occlusion(prepareScene({ walls: [screen[0]!, notch, screen[2]!] }));
    expect(occ2.wallHiddenFromPoint(0, 10, 0, 0)).toBe(false);
  });
});

/** Random scenes of 40 walls: 2-D segments and 3-D triangles and quadrilaterals on a floor (as above). */
function randomScenes(seed: number, count: number): { walls: Wall[]; tx: Vec3; rxs: Vec3[] }[] {
  const r = rng(seed),
    out: { walls: Wall[]; tx: Vec3; rxs: Vec3[] }[] = [];
  for (let q = 0; q < count; q++) {
    const w2: Wall[] = [],
      w3: Wall[] = [];
    for (let i = 0; i < 40; i++) {
      const x = 40 * r() - 20,
        y = 40 * r() - 20,
        t = Math.PI * r(),
        L = 2 + 10 * r(),
        z = 3 * r(),
        h = 1 + 5 * r();
      const x2 = x + L * Math.cos(t),
        y2 = y + L * Math.sin(t);
      w2.push({
        vertices: [
          [x, y],
          [x2, y2],
        ],
      });
      w3.push({
        vertices:
          i % 2
            ? [
                [x, y, z],
                [x2, y2, z],
                [x2, y2, z + h],
                [x, y, z + h],
              ]
            : [
                [x, y, z],
                [x2, y2, z],
                [x2, y2, z + h],
              ],
      });
    }
    w3.push({
      vertices: [
        [-30, -30, 0],
        [30, -30, 0],
        [30, 30, 0],
        [-30, 30, 0],
      ],
    });
    out.push({ walls: w2, tx: [10 * r(), 10 * r(), 0], rxs: [0, 1, 2].map((): Vec3 => [10 * r() - 10, 10 * r(), 0]) });
    out.push({ walls: w3, tx: [10 * r(), 10 * r(), 1.5], rxs: [0, 1, 2].map((): Vec3 => [10 * r() - 10, 10 * r(), 1 + r()]) });
  }
  return out;
}

describe('the image tree kept for a static transmitter', () => {
  // traceReflections records the transmitter's image tree on the first trace and replays it
  // while the transmitter stays put: every replayed trace must still equal the exhaustive search.
  it('gives the exhaustive paths for receivers moving about one transmitter, and after the order or the transmitter changes', () => {
    const g = streetGrid({ n: 3 }) as { scene: { walls: Wall[] } };
    const ps = prepareScene(g.scene);
    let total = 0;
    const tx: Vec3 = [55, 36, 6];
    for (const [rx, order] of [
      [[36, 61, 1.5], 3],
      [[36, 52, 1.5], 3],
      [[36.01, 52, 1.5], 2],
      [[40, 45, 2], 2],
      [[40, 45, 2], 3],
    ] as [Vec3, number][]) {
      const want = exhaustive(ps, tx, rx, order);
      expect(pruned(ps, tx, rx, order)).toEqual(want);
      total += want.length;
    }
    const tx2: Vec3 = [48, 36, 6];
    expect(pruned(ps, tx2, [36, 52, 1.5], 3)).toEqual(exhaustive(ps, tx2, [36, 52, 1.5], 3));
    for (const { walls, tx: t, rxs } of randomScenes(29, 2)) {
      const rps = prepareScene({ walls });
      for (const rx of rxs) {
        const want = exhaustive(rps, t, rx, 3);
        expect(pruned(rps, t, rx, 3)).toEqual(want);
        total += want.length;
      }
    }
    expect(total).toBeGreaterThan(30); // not vacuous
  });

  it('traceScene: a prepared scene traced along a walk equals fresh scenes traced point by point (bit-identical paths)', () => {
    const g = streetGrid({ n: 3 }) as { scene: { walls: Wall[] } };
    const scene = { ...g.scene, diffraction: true };
    const kept = prepareScene(scene);
    for (let k = 0; k < 4; k++) {
      const rx = { position: [36, 50 + 1.7 * k, 1.5] as Vec3 };
      const a = traceScene(kept, { position: [55, 36, 6] }, rx, 28e9);
      const b = traceScene(prepareScene(scene), { position: [55, 36, 6] }, rx, 28e9);
      expect(a).toEqual(b);
      expect(a.paths.length).toBeGreaterThan(3);
    }
  });
});

describe('pruned diffraction equals the exhaustive enumeration', () => {
  // Reference: traceDiffractions with prune = false tries every wedge alone and with every wall
  // before and after it; the beam and occlusion pruning must emit the same paths, bit for bit and
  // in the same order.
  const both = (ps: PreparedScene, tx: Vec3, rx: Vec3): [string[], string[]] => {
    const all: string[] = [],
      fast: string[] = [];
    traceDiffractions(ps, tx, rx, true, (s, p) => all.push(JSON.stringify([s, p])), false);
    traceDiffractions(ps, tx, rx, true, (s, p) => fast.push(JSON.stringify([s, p])));
    return [fast, all];
  };
  const withReflection = (list: string[]): number => list.filter((s) => (JSON.parse(s) as unknown[][])[0]!.length === 2).length;

  it('on the 10 x 10 street grid (400 facades and a ground plane), receivers around the corner and along the street', () => {
    const g = streetGrid() as { scene: { walls: Wall[] }; transmitter: Vec3; receiver: Vec3 };
    const ps = prepareScene(g.scene);
    const rx = g.receiver,
      tx = g.transmitter;
    let total = 0,
      reflected = 0;
    for (const r of [rx, [rx[0], rx[1] + 0.37, rx[2]], [tx[0] + 20, tx[1] + 1, 1.5], [rx[0] + 3, rx[1] - 18, 2]] as Vec3[]) {
      const [fast, all] = both(ps, tx, r);
      expect(fast).toEqual(all);
      total += all.length;
      reflected += withReflection(all);
    }
    expect(reflected).toBeGreaterThan(10); // not vacuous: paths with a reflection before or after the edge
    expect(total).toBeGreaterThan(reflected);
  });

  it('on a 3 x 3 street grid and on random 3-D and 2-D scenes of 40 walls', () => {
    const g = streetGrid({ n: 3 }) as { scene: { walls: Wall[] }; transmitter: Vec3; receiver: Vec3 };
    const cases = [{ walls: g.scene.walls, tx: g.transmitter, rxs: [g.receiver, [30, 40, 2], [70, 75, 1.5]] as Vec3[] }, ...randomScenes(41, 3)];
    let reflected = 0;
    for (const { walls, tx, rxs } of cases) {
      const ps = prepareScene({ walls });
      for (const rx of rxs) {
        const [fast, all] = both(ps, tx, rx);
        expect(fast).toEqual(all);
        reflected += withReflection(all);
      }
    }
    expect(reflected).toBeGreaterThan(20);
  });
});
