import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import {
  interactionLabel,
  pathIdOf,
  prepareScene,
  retracePaths,
  rotationFromOrientation,
  sceneObjectLabel,
  traceScene,
  SPEED_OF_LIGHT,
  type Scene,
  type TerminalState,
  type TracedPath,
  type Vec3,
  type Wall,
} from '../src/index.js';

const FC = 28e9;
const LAMBDA = SPEED_OF_LIGHT / FC;
const term = (position: Vec3, extra: Partial<TerminalState> = {}): TerminalState => ({ position, ...extra });

/** A 2-D rectangular room [0, lx] x [0, ly]: walls x=0, x=lx, y=0, y=ly. */
function room2d(lx: number, ly: number, extra: Partial<Scene> = {}): Scene {
  return {
    walls: [
      {
        vertices: [
          [0, 0],
          [0, ly],
        ],
        material: 'concrete',
      },
      {
        vertices: [
          [lx, 0],
          [lx, ly],
        ],
        material: 'glass',
      },
      {
        vertices: [
          [0, 0],
          [lx, 0],
        ],
        material: 'wood',
      },
      {
        vertices: [
          [0, ly],
          [lx, ly],
        ],
        material: 'metal',
      },
    ],
    ...extra,
  };
}

/** The same room with 3-D walls of height 2 H centred on z = 0. */
function room3dTall(lx: number, ly: number, H: number, extra: Partial<Scene> = {}): Scene {
  const wall = (a: [number, number], b: [number, number], material: Wall['material']): Wall => ({
    vertices: [
      [a[0], a[1], -H],
      [b[0], b[1], -H],
      [b[0], b[1], H],
      [a[0], a[1], H],
    ],
    material,
  });
  return {
    walls: [wall([0, 0], [0, ly], 'concrete'), wall([lx, 0], [lx, ly], 'glass'), wall([0, 0], [lx, 0], 'wood'), wall([0, ly], [lx, ly], 'metal')],
    ...extra,
  };
}

/** Image coordinates along one axis of a box [0, L] with k reflections (textbook image lattice). */
function imageCoordinates(a: number, L: number, k: number): number[] {
  if (k === 0) return [a];
  const out: number[] = [];
  // X = 2 m L + a needs |2m| reflections, X = 2 m L - a needs |2m - 1|
  for (let m = -k; m <= k; m++) {
    if (Math.abs(2 * m) === k) out.push(2 * m * L + a);
    if (Math.abs(2 * m - 1) === k) out.push(2 * m * L - a);
  }
  return out;
}

describe('image method in a rectangular room', () => {
  it('finds every image of order 1..3 at the hand-computed distances (2-D)', () => {
    const lx = 7,
      ly = 4,
      tx: Vec3 = [1.5, 1, 0],
      rx: Vec3 = [5.2, 2.7, 0];
    const res = traceScene(room2d(lx, ly, { maxReflectionOrder: 3 }), term(tx), term(rx), FC);
    const expected: number[] = [];
    for (let K = 1; K <= 3; K++) {
      for (let kx = 0; kx <= K; kx++) {
        for (const X of imageCoordinates(tx[0], lx, kx)) for (const Y of imageCoordinates(tx[1], ly, K - kx)) expected.push(Math.hypot(X - rx[0], Y - rx[1]));
      }
    }
    expect(expected.length).toBe(4 + 8 + 12);
    const got = res.paths
      .filter((p) => p.kind === 'reflection')
      .map((p) => p.lengthM)
      .sort((a, b) => a - b);
    expected.sort((a, b) => a - b);
    expect(got.length).toBe(expected.length);
    got.forEach((g, i) => expect(Math.abs(g - expected[i]!)).toBeLessThan(1e-9));
    // and the orders: 4 first-, 8 second-, 12 third-order paths
    const orders = res.paths.map((p) => p.interactions.length);
    expect([1, 2, 3].map((k) => orders.filter((o) => o === k).length)).toEqual([4, 8, 12]);
  });

  it('gives the hand-computed second- and third-order lengths in a 3-D corridor with floor and ceiling', () => {
    // corridor along x: side walls y = 0 and y = 3, floor z = 0, ceiling z = 2.8, 100 m long
    const w = 3,
      h = 2.8;
    const scene: Scene = {
      walls: [
        {
          vertices: [
            [-50, 0, 0],
            [50, 0, 0],
            [50, 0, h],
            [-50, 0, h],
          ],
        },
        {
          vertices: [
            [-50, w, 0],
            [50, w, 0],
            [50, w, h],
            [-50, w, h],
          ],
        },
        {
          vertices: [
            [-50, 0, 0],
            [50, 0, 0],
            [50, w, 0],
            [-50, w, 0],
          ],
        },
        {
          vertices: [
            [-50, 0, h],
            [50, 0, h],
            [50, w, h],
            [-50, w, h],
          ],
        },
      ],
      maxReflectionOrder: 3,
    };
    const tx: Vec3 = [0, 1, 2],
      rx: Vec3 = [20, 2.2, 1.2];
    const paths = traceScene(scene, term(tx), term(rx), FC).paths;
    const byId = new Map(paths.map((p) => [p.id, p]));
    // y = 0 then y = 3: image y = 2 w + 1 = 7 (hand-computed)
    expect(byId.get('R:walls[0]>R:walls[1]')!.lengthM).toBeCloseTo(Math.hypot(20, 7 - 2.2, 2 - 1.2), 10);
    // floor then ceiling: z image = 2 h + 2 = 7.6
    expect(byId.get('R:walls[2]>R:walls[3]')!.lengthM).toBeCloseTo(Math.hypot(20, 1.2, 7.6 - 1.2), 10);
    // y = 3, y = 0, y = 3: image y = 2 w - (2 w - ... ) = 4 w - 1 = 11? y=3: 5; y=0: -5; y=3: 11
    expect(byId.get('R:walls[1]>R:walls[0]>R:walls[1]')!.lengthM).toBeCloseTo(Math.hypot(20, 11 - 2.2, 0.8), 10);
    // floor, side y=0, ceiling: z: 2 -> -2 -> -2 -> 7.6; y: 1 -> 1 -> -1 -> -1
    expect(byId.get('R:walls[2]>R:walls[0]>R:walls[3]')!.lengthM).toBeCloseTo(Math.hypot(20, -1 - 2.2, 7.6 - 1.2), 10);
    // every reflection point lies on its wall
    for (const p of paths)
      for (const it of p.interactions) {
        expect(it.object.kind).toBe('wall');
        const wi = it.object.index;
        const coord = wi < 2 ? it.point[1] : it.point[2];
        expect(coord).toBeCloseTo([0, w, 0, h][wi]!, 9);
      }
  });
});

describe('2-D scenes', () => {
  it('equal their 3-D equivalent of tall walls (ids, lengths, amplitudes)', () => {
    const tx: Vec3 = [1.2, 0.7, 0],
      rx: Vec3 = [6.1, 3.3, 0];
    const t = term(tx, { rotation: rotationFromOrientation({ yawDeg: 20 }), polarization: { slantDeg: 30 } });
    const r = term(rx, { rotation: rotationFromOrientation({ yawDeg: -150 }), polarization: 'vertical' });
    const a = traceScene(room2d(7, 4, { maxReflectionOrder: 3 }), t, r, FC).paths;
    const b = traceScene(room3dTall(7, 4, 1e4, { maxReflectionOrder: 3 }), t, r, FC).paths;
    expect(a.map((p) => p.id)).toEqual(b.map((p) => p.id));
    for (let i = 0; i < a.length; i++) {
      expect(Math.abs(a[i]!.lengthM - b[i]!.lengthM)).toBeLessThan(1e-9);
      const da = Math.hypot(a[i]!.amplitude[0] - b[i]!.amplitude[0], a[i]!.amplitude[1] - b[i]!.amplitude[1]);
      expect(da).toBeLessThan(1e-9 * Math.hypot(...a[i]!.amplitude));
    }
  });
});

describe('validity', () => {
  const floorAt = (x0: number, x1: number): Scene => ({
    walls: [
      {
        vertices: [
          [x0, -1, 0],
          [x1, -1, 0],
          [x1, 1, 0],
          [x0, 1, 0],
        ],
      },
    ],
  });
  const tx: Vec3 = [0, 0, 2],
    rx: Vec3 = [10, 0, 2]; // specular point at x = 5

  it('rejects a reflection point outside a finite wall', () => {
    expect(traceScene(floorAt(4, 6), term(tx), term(rx), FC).paths.map((p) => p.id)).toEqual(['los', 'R:walls[0]']);
    expect(traceScene(floorAt(5.5, 8), term(tx), term(rx), FC).paths.map((p) => p.id)).toEqual(['los']);
    expect(traceScene(floorAt(0, 4.99), term(tx), term(rx), FC).paths.map((p) => p.id)).toEqual(['los']);
  });

  it('removes a path crossed by another wall', () => {
    const screen: Wall = {
      vertices: [
        [3, -5, 1.5],
        [3, 5, 1.5],
        [3, 5, 10],
        [3, -5, 10],
      ],
    }; // blocks LOS at z = 2, not the floor bounce
    const s: Scene = { walls: [...floorAt(-10, 20).walls!, screen] };
    const ids = traceScene(s, term(tx), term(rx), FC).paths.map((p) => p.id);
    expect(ids).toContain('R:walls[0]');
    expect(ids).not.toContain('los');
    // lower the screen to the floor: the ground path (at z = 0.8 when crossing x = 3) is blocked too
    const low: Wall = {
      vertices: [
        [3, -5, 0.5],
        [3, 5, 0.5],
        [3, 5, 10],
        [3, -5, 10],
      ],
    };
    const ids2 = traceScene({ walls: [...floorAt(-10, 20).walls!, low] }, term(tx), term(rx), FC).paths.map((p) => p.id);
    expect(ids2).not.toContain('R:walls[0]');
  });

  it('honours lineOfSight: false and maxReflectionOrder 0', () => {
    expect(traceScene({ ...floorAt(-10, 20), lineOfSight: false }, term(tx), term(rx), FC).paths.map((p) => p.id)).toEqual(['R:walls[0]']);
    expect(traceScene({ ...floorAt(-10, 20), maxReflectionOrder: 0 }, term(tx), term(rx), FC).paths.map((p) => p.id)).toEqual(['los']);
  });
});

function reverseId(id: string): string {
  if (!id.startsWith('R:')) return id;
  return id.split('>').reverse().join('>');
}

describe('reciprocity', () => {
  it('swapping the ends gives the same lengths, delays, amplitudes (with polarisation) and swapped angles', () => {
    const scene: Scene = {
      walls: [
        {
          vertices: [
            [-20, -20, 0],
            [20, -20, 0],
            [20, 20, 0],
            [-20, 20, 0],
          ],
          material: 'concrete',
        },
        {
          vertices: [
            [-20, 6, 0],
            [20, 6, 0],
            [20, 6, 8],
            [-20, 6, 8],
          ],
          material: 'glass',
        },
        {
          vertices: [
            [12, -20, 0],
            [12, 20, 0],
            [12, 20, 8],
            [12, -20, 8],
          ],
          material: { relativePermittivity: 3, conductivitySpm: 0.2 },
        },
        {
          vertices: [
            [-20, -4, 0],
            [20, -4, 0],
            [20, -4, 8],
            [-20, -4, 8],
          ],
          reflectionLossDb: 7,
        },
      ],
      scatterers: [{ position: [5, -2, 3], rcsM2: 2 }],
      blockers: [{ shape: 'cylinder', base: [4, 0.9, 0], radiusM: 0.4, heightM: 1.7 }],
      maxReflectionOrder: 3,
    };
    const A = term([0, 0, 2.5], {
      velocity: [1, 2, 0],
      rotation: rotationFromOrientation({ yawDeg: 30, pitchDeg: 10, rollDeg: 5 }),
      polarization: { slantDeg: 45 },
    });
    const B = term([9, 2, 1.5], { velocity: [-3, 0, 0.5], rotation: rotationFromOrientation({ yawDeg: 190, pitchDeg: -5 }), polarization: 'horizontal' });
    const fwd = traceScene(scene, A, B, FC).paths;
    const rev = new Map(traceScene(scene, B, A, FC).paths.map((p) => [p.id, p]));
    expect(fwd.length).toBeGreaterThan(10);
    expect(rev.size).toBe(fwd.length);
    for (const p of fwd) {
      const q = rev.get(reverseId(p.id))!;
      expect(q, p.id).toBeDefined();
      expect(Math.abs(p.lengthM - q.lengthM)).toBeLessThan(1e-9);
      expect(Math.abs(p.delayS - q.delayS)).toBeLessThan(1e-17);
      expect(Math.hypot(p.amplitude[0] - q.amplitude[0], p.amplitude[1] - q.amplitude[1])).toBeLessThan(1e-9 * Math.hypot(...p.amplitude));
      expect(p.blockageDb).toBeCloseTo(q.blockageDb, 9);
      for (let k = 0; k < 2; k++) {
        expect(p.aodDeg[k]).toBeCloseTo(q.aoaDeg[k]!, 8);
        expect(p.aoaDeg[k]).toBeCloseTo(q.aodDeg[k]!, 8);
        expect(p.aodLocalDeg[k]).toBeCloseTo(q.aoaLocalDeg[k]!, 8);
      }
      expect(p.dopplerHz).toBeCloseTo(q.dopplerHz, 8);
      // the polarimetric matrix is transposed
      for (let i = 0; i < 2; i++)
        for (let j = 0; j < 2; j++) for (let c = 0; c < 2; c++) expect(p.polarimetric[i]![j]![c]).toBeCloseTo(q.polarimetric[j]![i]![c]!, 12);
    }
  });
});

describe('path fields', () => {
  it('gives the LOS polarimetric matrix [[1, 0], [0, -1]], cross-polar nulls and slant factors', () => {
    const los = (pt: TerminalState['polarization'], pr: TerminalState['polarization']): TracedPath =>
      traceScene({}, term([0, 0, 0], { polarization: pt }), term([10, 0, 0], { polarization: pr }), FC, { keepNullPaths: true }).paths[0]!;
    const p = los('vertical', 'vertical');
    expect(p.polarimetric).toEqual([
      [
        [1, 0],
        [0, 0],
      ],
      [
        [0, 0],
        [-1, 0],
      ],
    ]);
    expect(p.polarizationFactor).toEqual([1, 0]);
    expect(Math.hypot(...los('vertical', 'horizontal').polarizationFactor)).toBeLessThan(1e-15);
    expect(los('vertical', { slantDeg: 45 }).polarizationFactor[0]).toBeCloseTo(Math.SQRT1_2, 14);
    expect(los('horizontal', 'horizontal').polarizationFactor[0]).toBeCloseTo(1, 14);
    // by default a path of zero amplitude is dropped
    expect(traceScene({}, term([0, 0, 0]), term([10, 0, 0], { polarization: 'horizontal' }), FC).paths).toEqual([]);
  });

  it('reports delay, angles, local angles, Doppler and virtual ends', () => {
    const scene: Scene = {
      walls: [
        {
          vertices: [
            [-50, -50, 0],
            [50, -50, 0],
            [50, 50, 0],
            [-50, 50, 0],
          ],
        },
      ],
    };
    const tx = term([0, 0, 3], { velocity: [0, 0, 0] }),
      v = 5;
    const rx = term([8, 6, 1], { velocity: [-0.8 * v, -0.6 * v, 0], rotation: rotationFromOrientation({ yawDeg: 90 }) });
    const { paths } = traceScene(scene, tx, rx, FC);
    const los = paths.find((p) => p.id === 'los')!;
    expect(los.lengthM).toBeCloseTo(Math.hypot(8, 6, 2), 12);
    expect(los.delayS).toBeCloseTo(los.lengthM / SPEED_OF_LIGHT, 20);
    expect(los.aoaDeg[0]).toBeCloseTo((Math.atan2(-6, -8) * 180) / Math.PI, 10);
    expect(los.aoaLocalDeg[0]).toBeCloseTo((Math.atan2(-6, -8) * 180) / Math.PI - 90 + 360, 10);
    // moving towards the transmitter horizontally: f = v cos(el) / lambda
    const el = Math.atan2(2, 10);
    expect(los.dopplerHz).toBeCloseTo((v * Math.cos(el)) / LAMBDA, 6);
    const g = paths.find((p) => p.id === 'R:walls[0]')!;
    expect(g.virtualSource).toEqual([0, 0, -3]);
    expect(g.virtualSink).toEqual([8, 6, -1]);
    expect(g.lengthM).toBeCloseTo(Math.hypot(8, 6, 4), 12);
    expect(g.powerDb).toBeCloseTo(20 * Math.log10(Math.hypot(...g.amplitude)), 12);
    expect(g.phaseDeg).toBeCloseTo((Math.atan2(g.amplitude[1], g.amplitude[0]) * 180) / Math.PI, 12);
    expect(paths[0]!.powerDb).toBeGreaterThanOrEqual(paths[1]!.powerDb);
  });

  it('prunes by maxPaths and dynamicRangeDb', () => {
    const s = room2d(7, 4, { maxReflectionOrder: 3 });
    const all = traceScene(s, term([1, 1, 0]), term([5, 3, 0]), FC).paths;
    const top = traceScene(s, term([1, 1, 0]), term([5, 3, 0]), FC, { maxPaths: 5 }).paths;
    expect(top.map((p) => p.id)).toEqual(all.slice(0, 5).map((p) => p.id));
    const dr = traceScene(s, term([1, 1, 0]), term([5, 3, 0]), FC, { dynamicRangeDb: 10 }).paths;
    expect(dr.length).toBe(all.filter((p) => p.powerDb >= all[0]!.powerDb - 10).length);
    expect(dr.length).toBeLessThan(all.length);
  });

  it('applies a given gas attenuation over the unfolded length', () => {
    const a = traceScene({}, term([0, 0, 0]), term([200, 0, 0]), 60e9).paths[0]!;
    const b = traceScene({ gasAttenuationDbPerKm: 15 }, term([0, 0, 0]), term([200, 0, 0]), 60e9).paths[0]!;
    expect(a.powerDb - b.powerDb).toBeCloseTo(3, 10);
  });
});

describe('blockers', () => {
  it('a cylinder moving across the LOS makes the loss rise and fall smoothly', () => {
    // d = 20 m, d1 = d2 = 10 m, lambda = 1.07 cm: dv/dh = sqrt(2 d / (lambda d1 d2)) = 6.1 /m and
    // |dJ/dv| <= 8.7 dB (P.526 formula near v = 0), so a 1 cm step moves J by at most 0.53 dB: bound 0.6 dB.
    const tx = term([0, 0, 1.5]),
      rx = term([20, 0, 1.5]);
    const losses: number[] = [];
    for (let k = -150; k <= 150; k++) {
      const y = k * 0.01;
      const scene: Scene = { blockers: [{ shape: 'cylinder', base: [10, y, 0], radiusM: 0.3, heightM: 3 }] };
      losses.push(traceScene(scene, tx, rx, FC).paths[0]!.blockageDb);
    }
    let maxJump = 0;
    for (let i = 1; i < losses.length; i++) maxJump = Math.max(maxJump, Math.abs(losses[i]! - losses[i - 1]!));
    expect(maxJump).toBeLessThan(0.6);
    expect(losses[0]).toBe(0); // 1.5 m aside: v < -0.78
    // centred: each side h = 0.3 m (v = 1.834, J = 18.35 dB), top and bottom h = 1.5 m (v = 9.17,
    // J = 32.1 dB), combined as P.526's finite-width screen, the edges' fields in phase (M):
    // -20 log10(2 * 10^(-18.35 / 20) + 2 * 10^(-32.1 / 20)) = 10.7 dB
    const J = (v: number): number => 6.9 + 20 * Math.log10(Math.sqrt((v - 0.1) ** 2 + 1) + v - 0.1); // P.526 (V formula)
    const kappa = Math.sqrt((2 * 20) / ((SPEED_OF_LIGHT / FC) * 10 * 10));
    expect(losses[150]).toBeCloseTo(-20 * Math.log10(2 * 10 ** (-J(0.3 * kappa) / 20) + 2 * 10 ** (-J(1.5 * kappa) / 20)), 6);
    // rises to the middle, falls after it
    for (let i = 1; i <= 150; i++) expect(losses[i]!).toBeGreaterThanOrEqual(losses[i - 1]! - 1e-9);
    for (let i = 151; i < losses.length; i++) expect(losses[i]!).toBeLessThanOrEqual(losses[i - 1]! + 1e-9);
  });

  it('a cylinder passes the wave on both sides: centred in 2-D, 6.02 dB less than one edge alone', () => {
    // two equal knife edges whose fields add in phase: J(v) - 20 log10(2) (P.526 finite-width screen, M)
    const tx = term([0, 0, 0]),
      rx = term([20, 0, 0]);
    const lambda = SPEED_OF_LIGHT / FC,
      kappa = Math.sqrt((2 * 20) / (lambda * 10 * 10));
    const J = (v: number): number => 6.9 + 20 * Math.log10(Math.sqrt((v - 0.1) ** 2 + 1) + v - 0.1); // P.526 (V formula)
    const centred = traceScene({ blockers: [{ shape: 'cylinder', base: [10, 0], radiusM: 0.25, heightM: 2 }] }, tx, rx, FC).paths[0]!.blockageDb;
    expect(centred).toBeCloseTo(J(0.25 * kappa) - 20 * Math.log10(2), 9);
    // off-centre by 0.2 m: the near side (h = 0.05 m) dominates, the far side (h = 0.45 m) still adds its field
    const off = traceScene({ blockers: [{ shape: 'cylinder', base: [10, 0.2], radiusM: 0.25, heightM: 2 }] }, tx, rx, FC).paths[0]!.blockageDb;
    expect(off).toBeCloseTo(-20 * Math.log10(10 ** (-J(0.05 * kappa) / 20) + 10 ** (-J(0.45 * kappa) / 20)), 9);
    expect(off).toBeLessThan(J(0.05 * kappa));
  });

  it('a blocker with lossDb adds that loss only when crossed', () => {
    const tx = term([0, 0, 1.5]),
      rx = term([20, 0, 1.5]);
    const box = (y: number): Scene => ({ blockers: [{ shape: 'box', min: [9, y - 0.5, 0], max: [11, y + 0.5, 2], lossDb: 15 }] });
    expect(traceScene(box(0), tx, rx, FC).paths[0]!.blockageDb).toBe(15);
    expect(traceScene(box(0.6), tx, rx, FC).paths[0]!.blockageDb).toBe(0);
    const low: Scene = { blockers: [{ shape: 'box', min: [9, -0.5, 0], max: [11, 0.5, 1.4], lossDb: 15 }] };
    expect(traceScene(low, tx, rx, FC).paths[0]!.blockageDb).toBe(0);
  });
});

describe('retracePaths', () => {
  it('recomputes lengths, angles and Doppler from the fixed interaction lists', () => {
    const s = room3dTall(7, 4, 3, { maxReflectionOrder: 2 });
    s.walls = [
      ...s.walls!,
      {
        vertices: [
          [0, 0, -3],
          [7, 0, -3],
          [7, 4, -3],
          [0, 4, -3],
        ],
      },
    ];
    const ps = prepareScene(s);
    const tx = term([1, 1, 1], { velocity: [0.5, 0, 0] });
    const rx0 = term([5, 3, 0.5], { velocity: [0, -1, 0] });
    const rx1 = term([5.03, 2.98, 0.52], { velocity: [0, -1, 0] });
    const traced = traceScene(ps, tx, rx0, FC).paths;
    const moved = retracePaths(ps, traced, tx, rx1, FC);
    const fresh = new Map(traceScene(ps, tx, rx1, FC).paths.map((p) => [p.id, p]));
    expect(moved.map((p) => p.id)).toEqual(traced.map((p) => p.id));
    for (const p of moved) {
      const f = fresh.get(p.id)!;
      expect(f, p.id).toBeDefined();
      expect(Math.abs(p.lengthM - f.lengthM)).toBeLessThan(1e-9);
      expect(p.aoaDeg[0]).toBeCloseTo(f.aoaDeg[0], 9);
      expect(p.aodDeg[1]).toBeCloseTo(f.aodDeg[1], 9);
      expect(p.dopplerHz).toBeCloseTo(f.dopplerHz, 6);
      expect(p.virtualSource).toEqual(f.virtualSource);
      // the amplitude keeps the traced interaction factor: |rho| * 4 pi d / lambda = |F| 10^(-blockage/20)
      const spreadOld = (Math.hypot(...p.amplitude) * (4 * Math.PI * p.lengthM)) / LAMBDA;
      expect(spreadOld).toBeCloseTo(Math.hypot(...p.polarizationFactor) * 10 ** (-p.blockageDb / 20), 10);
    }
  });
});

describe('interaction records', () => {
  // Path ids and labels follow the naming of docs/conventions.md ("Path ids"): the scene's list
  // and index, R for a reflection, S for scattering, ">" between interactions in order from Tx.
  it('stores the kind and index of each object and renders ids from them', () => {
    const s = room2d(7, 4, {
      maxReflectionOrder: 2,
      scatterers: [
        { position: [3, 2], rcsM2: 1 },
        { position: [6, 1], rcsM2: 0.5 },
      ],
    });
    const { paths } = traceScene(s, term([1, 1, 0]), term([5, 3, 0]), FC);
    const kinds = new Set(paths.map((p) => p.kind));
    expect([...kinds].sort()).toEqual(['los', 'reflection', 'scatter']);
    for (const p of paths) {
      expect(p.id).toBe(pathIdOf(p.interactions));
      for (const it of p.interactions) {
        expect(it.object.kind).toBe(it.type === 'reflection' ? 'wall' : 'scatterer');
        expect(Number.isInteger(it.object.index)).toBe(true);
      }
    }
    const second = paths.find((p) => p.interactions.length === 2)!;
    expect(second.id).toBe(`R:walls[${second.interactions[0]!.object.index}]>R:walls[${second.interactions[1]!.object.index}]`);
    const scatter = paths.filter((p) => p.kind === 'scatter').map((p) => [p.id, p.interactions[0]!.object]);
    expect(scatter.sort()).toEqual([
      ['S:scatterers[0]', { kind: 'scatterer', index: 0 }],
      ['S:scatterers[1]', { kind: 'scatterer', index: 1 }],
    ]);
  });

  it('labels every kind of object and interaction', () => {
    expect(sceneObjectLabel({ kind: 'wall', index: 12 })).toBe('walls[12]');
    expect(sceneObjectLabel({ kind: 'scatterer', index: 0 })).toBe('scatterers[0]');
    expect(sceneObjectLabel({ kind: 'blocker', index: 3 })).toBe('blockers[3]');
    expect(interactionLabel({ type: 'scatter', object: { kind: 'scatterer', index: 4 } })).toBe('S:scatterers[4]');
    expect(pathIdOf([])).toBe('los');
  });

  it('refuses to retrace a reflection whose interaction names no wall', () => {
    const ps = prepareScene({
      walls: [
        {
          vertices: [
            [0, 5],
            [20, 5],
          ],
        },
      ],
      lineOfSight: false,
    });
    const [r] = traceScene(ps, term([0, 0, 0]), term([10, 0, 0]), FC).paths;
    const bad: TracedPath = { ...r!, interactions: [{ ...r!.interactions[0]!, object: { kind: 'scatterer', index: 0 } }] };
    expect(() => retracePaths(ps, [bad], term([0, 0, 0]), term([10, 0, 0]), FC)).toThrow(
      new RangeError('retracePaths(): interaction object must be a wall, got {"kind":"scatterer","index":0}'),
    );
  });
});

// The tracer's rate on this room (asked: >= 1000 traces/s) is measured by the benchmark,
// `node bench/run.mjs --only tracer`, never by a unit test (DEVELOPERS.md: no timed unit tests).
describe('the 20-wall room shared with bench/', () => {
  it('traces at order 2 with every wall in play and the same paths for the same geometry', () => {
    // a 20 x 12 x 4 m room (6 surfaces) with 14 metal panels near the side walls
    const room = JSON.parse(readFileSync(new URL('../../../test/fixtures/twenty-wall-room.json', import.meta.url), 'utf8')) as { scene: { walls: Wall[] } };
    const walls = room.scene.walls;
    expect(walls.length).toBe(20);
    const ps = prepareScene({ walls, maxReflectionOrder: 2 });
    const tx = term([2, 5, 2.5]),
      rx = term([17, 7, 1.5]);
    const first = traceScene(ps, tx, rx, FC).paths;
    expect(first.length).toBeGreaterThan(10);
    expect(first.some((p) => p.kind === 'los')).toBe(true);
    // a prepared scene keeps no state between traces: a second trace gives the same paths
    expect(traceScene(ps, tx, rx, FC).paths.map((p) => [p.id, p.lengthM])).toEqual(first.map((p) => [p.id, p.lengthM]));
  });
});

// Speed is measured in bench/tracer-scale.mjs (no timed unit tests); the 20-wall room's paths
// against the exhaustive search are checked in tracer-scale.test.ts.
