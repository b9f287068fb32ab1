import { describe, expect, it } from 'vitest';
import {
  fresnelComplement,
  fresnelIntegrals,
  prepareScene,
  retracePaths,
  sceneWedges,
  traceScene,
  utdTransition,
  utdWedgeCoefficients,
  validateScene,
  SPEED_OF_LIGHT,
  type Scene,
  type TracedPath,
  type Vec3,
  type Wall,
} from '../src/index.js';

const FC = 28e9;
const K0 = (2 * Math.PI * FC) / SPEED_OF_LIGHT;

/** The four walls of a 2-D box building [x0, x1] x [y0, y1]. */
function box(x0: number, y0: number, x1: number, y1: number, material: Wall['material'] = 'concrete'): Wall[] {
  return [
    [
      [x0, y0],
      [x1, y0],
    ],
    [
      [x1, y0],
      [x1, y1],
    ],
    [
      [x1, y1],
      [x0, y1],
    ],
    [
      [x0, y1],
      [x0, y0],
    ],
  ].map((vertices) => ({ vertices, material }));
}

/** Coherent sum of every path's amplitude (the narrowband field, free-space normalised), in dB. */
function totalDb(paths: readonly TracedPath[]): number {
  let re = 0,
    im = 0;
  for (const p of paths) {
    re += p.amplitude[0];
    im += p.amplitude[1];
  }
  return 10 * Math.log10(re * re + im * im);
}

const goKey = (paths: readonly TracedPath[]): string =>
  paths
    .filter((p) => p.kind !== 'diffraction')
    .map((p) => p.id)
    .sort()
    .join(',');

describe('Fresnel integrals and the UTD transition function', () => {
  it('match A&S Table 7.7 and scipy.special.fresnel', () => {
    // C(1) = 0.7798934004, S(1) = 0.4382591474 (A&S Table 7.7) (M); C(5), S(5) from scipy.special.fresnel (C)
    expect(fresnelIntegrals(1)[0]).toBeCloseTo(0.779893400376823, 13);
    expect(fresnelIntegrals(1)[1]).toBeCloseTo(0.4382591473903547, 13);
    expect(fresnelIntegrals(5)[0]).toBeCloseTo(0.5636311887040122, 13);
    expect(fresnelIntegrals(-5)[1]).toBeCloseTo(-0.4991913819171169, 13);
    // the complement keeps its relative accuracy far out: 1/2 - C(30) = 3.752629390896267e-6 (scipy, C)
    expect(fresnelComplement(30)[0] / 3.752629390896267e-6).toBeCloseTo(1, 9);
    // both branches meet at x = 1.5 (series below, continued fraction above)
    const below = fresnelIntegrals(1.5),
      above = fresnelIntegrals(1.5 + 1e-12);
    expect(Math.abs(below[0] - above[0]) + Math.abs(below[1] - above[1])).toBeLessThan(1e-11);
  });

  it('F(X) has the limits of Kouyoumjian and Pathak: sqrt(pi X) exp(j (pi/4 + X)) for small X, 1 + j/(2X) for large X', () => {
    // K-P 1974, the small- and large-argument forms of the transition function (M)
    for (const X of [1e-6, 1e-4]) {
      const F = utdTransition(X),
        m = Math.sqrt(Math.PI * X),
        a = Math.PI / 4 + X;
      expect(Math.hypot(F[0] - m * Math.cos(a), F[1] - m * Math.sin(a))).toBeLessThan(3 * X);
    }
    for (const X of [50, 500]) {
      const F = utdTransition(X);
      expect(Math.hypot(F[0] - 1, F[1] - 1 / (2 * X))).toBeLessThan(1 / X ** 2);
    }
  });
});

describe('UTD wedge coefficients', () => {
  const half = (phiPrimeRad: number, phiRad: number, L = 1e5) =>
    utdWedgeCoefficients(K0, { n: 2, phiPrimeRad, phiRad, beta0Rad: Math.PI / 2, distanceParameterM: L });

  it("reduce to Keller's half-plane coefficient away from the boundaries", () => {
    // GTD: D = -exp(-j pi/4) / (2 sqrt(2 pi k)) [sec((phi - phi')/2) -+ sec((phi + phi')/2)] (Keller 1962; K-P 1974) (M)
    const pp = Math.PI / 3;
    for (const deg of [20, 100, 250, 330]) {
      const p = (deg * Math.PI) / 180,
        D = half(pp, p, 1e6);
      const c = -1 / (2 * Math.sqrt(2 * Math.PI * K0));
      const s = c * (1 / Math.cos((p - pp) / 2) - 1 / Math.cos((p + pp) / 2)),
        h = c * (1 / Math.cos((p - pp) / 2) + 1 / Math.cos((p + pp) / 2));
      // times exp(-j pi/4) = (1 - j) / sqrt 2
      expect(Math.hypot(D.soft[0] - s * Math.SQRT1_2, D.soft[1] + s * Math.SQRT1_2)).toBeLessThan(2e-3 * Math.abs(s));
      expect(Math.hypot(D.hard[0] - h * Math.SQRT1_2, D.hard[1] + h * Math.SQRT1_2)).toBeLessThan(2e-3 * Math.abs(h));
    }
  });

  it("are reciprocal, D(phi, phi') = D(phi', phi)", () => {
    // reciprocity of the wedge coefficients (K-P 1974) (M)
    for (const n of [2, 1.5, 1.2]) {
      const a = utdWedgeCoefficients(K0, { n, phiPrimeRad: 0.4, phiRad: 3.1, beta0Rad: 1.1, distanceParameterM: 3 });
      const b = utdWedgeCoefficients(K0, { n, phiPrimeRad: 3.1, phiRad: 0.4, beta0Rad: 1.1, distanceParameterM: 3 });
      expect(Math.hypot(a.soft[0] - b.soft[0], a.soft[1] - b.soft[1])).toBeLessThan(1e-12 * Math.hypot(...a.soft));
      expect(Math.hypot(a.hard[0] - b.hard[0], a.hard[1] - b.hard[1])).toBeLessThan(1e-12 * Math.hypot(...a.hard));
    }
  });

  it('jump by exactly the incident field across the shadow boundary, and by R times it across a reflection boundary', () => {
    // UTD: the diffracted field jumps by E_i at the incident shadow boundary and by the reflected
    // field at a reflection boundary, cancelling the jumps of geometric optics (K-P 1974; Luebbers 1984) (M).
    // With plane-wave incidence the diffracted field is D exp(-j k s) / sqrt(s) (for E_z, diffraction.ts),
    // so (D(shadow side) - D(lit side)) / sqrt(s) is 1 at the shadow boundary phi = phi' + pi.
    const pp = Math.PI / 4,
      s = 5,
      R: [number, number] = [-0.4, 0.1];
    const at = (phiRad: number) =>
      utdWedgeCoefficients(K0, { n: 1.5, phiPrimeRad: pp, phiRad, beta0Rad: Math.PI / 2, distanceParameterM: s }, { te: R, tm: [-R[0], -R[1]] });
    const isbShadow = at(pp + Math.PI + 1e-9),
      isbLit = at(pp + Math.PI - 1e-9);
    for (const key of ['soft', 'hard'] as const) {
      expect((isbShadow[key][0] - isbLit[key][0]) / Math.sqrt(s)).toBeCloseTo(1, 6);
      expect((isbShadow[key][1] - isbLit[key][1]) / Math.sqrt(s)).toBeCloseTo(0, 6);
    }
    // face-0 reflection boundary phi = pi - phi': the jump is R0 (soft: R0 = R; hard: -R here)
    const rsbShadow = at(Math.PI - pp + 1e-9),
      rsbLit = at(Math.PI - pp - 1e-9);
    expect((rsbShadow.soft[0] - rsbLit.soft[0]) / Math.sqrt(s)).toBeCloseTo(R[0], 6);
    expect((rsbShadow.soft[1] - rsbLit.soft[1]) / Math.sqrt(s)).toBeCloseTo(R[1], 6);
    expect((rsbShadow.hard[0] - rsbLit.hard[0]) / Math.sqrt(s)).toBeCloseTo(-R[0], 6);
  });

  it("with perfectly conducting faces, Luebbers' heuristic is the Kouyoumjian-Pathak form; lossy faces weaken the reflection terms", () => {
    const g = { n: 1.5, phiPrimeRad: 0.5, phiRad: 2.5, beta0Rad: 1.2, distanceParameterM: 4 };
    const kp = utdWedgeCoefficients(K0, g);
    const lu = utdWedgeCoefficients(K0, g, { te: [-1, 0], tm: [1, 0] }, { te: [-1, 0], tm: [1, 0] });
    expect(lu).toEqual(kp);
    // near the face-0 reflection boundary (phi = pi - phi') a face with |R| = 0.3 scales that term
    const near = { ...g, phiRad: Math.PI - 0.5 + 1e-3 };
    const pec = utdWedgeCoefficients(K0, near),
      soft = utdWedgeCoefficients(K0, near, { te: [-0.3, 0], tm: [0.3, 0] }, { te: [-1, 0], tm: [1, 0] });
    expect(Math.hypot(...soft.soft)).toBeLessThan(0.6 * Math.hypot(...pec.soft));
  });

  it('refuse angles outside the wedge and impossible wedges', () => {
    expect(() => utdWedgeCoefficients(K0, { n: 1.5, phiPrimeRad: 0.2, phiRad: 5, beta0Rad: 1, distanceParameterM: 1 })).toThrow(
      'utdWedgeCoefficients(): phiRad must be in [0, n pi] = [0, 4.71238898038469], got 5',
    );
    expect(() => utdWedgeCoefficients(K0, { n: 2.5, phiPrimeRad: 0.2, phiRad: 1, beta0Rad: 1, distanceParameterM: 1 })).toThrow(
      'utdWedgeCoefficients(): n must be in (0, 2], got 2.5',
    );
  });
});

describe('wedges of a scene', () => {
  it('finds the corners of a box building (n = 1.5), the free ends of a lone wall (n = 2), and no wedge where a facade stands on the ground', () => {
    const w2 = sceneWedges(
      prepareScene({
        walls: [
          ...box(0, 0, 10, 10),
          {
            vertices: [
              [20, 0],
              [30, 0],
            ],
          },
        ],
      }),
    );
    expect(w2.names).toEqual([
      'walls[0].vertices[0]',
      'walls[0].vertices[1]',
      'walls[1].vertices[1]',
      'walls[2].vertices[1]',
      'walls[4].vertices[0]',
      'walls[4].vertices[1]',
    ]);
    expect(Array.from({ length: w2.count }, (_, i) => w2.data[14 * i + 13])).toEqual([1.5, 1.5, 1.5, 1.5, 2, 2]);
    // 3-D: a facade standing on a ground polygon: its bottom edge is a concave T (no wedge),
    // its two vertical edges and its top edge are free (half-planes); the ground's outer edges too
    const ground: Wall = {
      vertices: [
        [-50, -50, 0],
        [50, -50, 0],
        [50, 50, 0],
        [-50, 50, 0],
      ],
    };
    const facade: Wall = {
      vertices: [
        [0, 10, 0],
        [20, 10, 0],
        [20, 10, 15],
        [0, 10, 15],
      ],
    };
    const w3 = sceneWedges(prepareScene({ walls: [ground, facade] }));
    expect(w3.names).toEqual([
      'walls[0].edges[0]',
      'walls[0].edges[1]',
      'walls[0].edges[2]',
      'walls[0].edges[3]',
      'walls[1].edges[1]',
      'walls[1].edges[2]',
      'walls[1].edges[3]',
    ]);
    // two facades meeting at a right angle share their vertical edge: one wedge, n = 1.5
    const side: Wall = {
      vertices: [
        [20, 10, 0],
        [20, 30, 0],
        [20, 30, 15],
        [20, 10, 15],
      ],
    };
    const w4 = sceneWedges(prepareScene({ walls: [facade, side] }));
    const corner = w4.names.indexOf('walls[0].edges[1]');
    expect(w4.data[14 * corner + 13]).toBeCloseTo(1.5, 12);
    expect(Array.from(w4.faces.slice(2 * corner, 2 * corner + 2)).sort()).toEqual([0, 1]);
  });
});

describe('diffracted paths', () => {
  // A building [-20, 0] x [-20, 0] with its corner at the origin; tx in the street above it.
  const corner = (material: Wall['material'], diffraction = true): Scene => ({ walls: box(-20, -20, 0, 0, material), diffraction, maxReflectionOrder: 1 });
  const tx: Vec3 = [-10, 5, 0];

  it('are off by default and named by their edge when on', () => {
    const rx: Vec3 = [10, -8, 0];
    expect(traceScene(corner('concrete', false), { position: tx }, { position: rx }, FC).paths).toEqual([]);
    const on = traceScene(corner('concrete'), { position: tx }, { position: rx }, FC).paths;
    expect(on.map((p) => p.id)).toContain('D:walls[1].vertices[1]');
    const d = on.find((p) => p.id === 'D:walls[1].vertices[1]')!;
    expect(d.kind).toBe('diffraction');
    expect(d.interactions[0]).toMatchObject({
      type: 'diffraction',
      object: { kind: 'edge', index: 1, vertex: 1 },
      faces: [
        { kind: 'wall', index: 1 },
        { kind: 'wall', index: 2 },
      ],
      exteriorAngleDeg: 270,
    });
    expect(d.interactions[0]!.point).toEqual([0, 0, 0]);
    expect(d.lengthM).toBeCloseTo(Math.hypot(10, 5) + Math.hypot(10, 8), 12);
    // spreading lambda / (4 pi sqrt(s' s (s + s'))) times |D| (2-D: vertical polarisation = soft, |E . beta| = 1)
    const s1 = Math.hypot(10, 5),
      s2 = Math.hypot(10, 8);
    const D = d.interactions[0]!.diffraction!.soft;
    expect(Math.hypot(...d.amplitude)).toBeCloseTo((SPEED_OF_LIGHT / FC / (4 * Math.PI * Math.sqrt(s1 * s2 * (s1 + s2)))) * Math.hypot(...D), 15);
    expect(validateScene({ diffraction: 'yes' as unknown as boolean })).toEqual([
      { path: 'scene.diffraction', message: 'must be true or false, got "yes"', severity: 'error' },
    ]);
  });

  it('keep the field continuous where a receiver crosses the shadow and reflection boundaries (along a line, concrete and metal wedges)', () => {
    // rx on x = 10 from y = 10 down to y = -15: the face y = 0 reflection boundary is at y = 5,
    // the corner's shadow boundary at y = -5. Each crossing is found by bisection on the set of
    // geometric-optics paths and the field compared 1e-7 m either side; a continuous field
    // changes there by much less than the 0.5 dB allowed, and without diffraction it jumps.
    for (const material of ['concrete', 'metal'] as const) {
      const ps = prepareScene(corner(material)),
        off = prepareScene(corner(material, false));
      const at = (y: number, s = ps) => traceScene(s, { position: tx }, { position: [10, y, 0] }, FC).paths;
      const crossings: number[] = [];
      let prev = goKey(at(10));
      for (let i = 1; i <= 2500; i++) {
        const y = 10 - i * 0.01,
          key = goKey(at(y));
        if (key !== prev) {
          let hi = y + 0.01,
            lo = y;
          for (let it = 0; it < 40; it++) {
            const mid = (hi + lo) / 2;
            if (goKey(at(mid)) === prev) hi = mid;
            else lo = mid;
          }
          crossings.push((hi + lo) / 2);
        }
        prev = key;
      }
      expect(crossings.map((c) => Math.round(c * 1e6) / 1e6)).toEqual([5, -5]);
      for (const c of crossings) {
        expect(Math.abs(totalDb(at(c + 1e-7)) - totalDb(at(c - 1e-7)))).toBeLessThan(0.5);
        expect(Math.abs(totalDb(at(c + 1e-7, off)) - totalDb(at(c - 1e-7, off)))).toBeGreaterThan(3);
      }
      // exactly on the boundaries (the sweep's own grid points) the field takes the limit as well
      expect(Math.abs(totalDb(at(-5)) - totalDb(at(-5 + 1e-7)))).toBeLessThan(0.5);
      expect(Math.abs(totalDb(at(5)) - totalDb(at(5 + 1e-7)))).toBeLessThan(0.5);
    }
  });

  it('combine with one reflection before or after the edge (image lengths, Keller points)', () => {
    // A wall across the street at y = 12 reflects tx's wave down to the corner, and the corner's
    // diffracted wave up to a receiver around the corner.
    const scene: Scene = {
      walls: [
        ...box(-20, -20, 0, 0),
        {
          vertices: [
            [-40, 12],
            [40, 12],
          ],
          material: 'glass',
        },
      ],
      diffraction: true,
      maxReflectionOrder: 1,
    };
    const rx: Vec3 = [6, -9, 0];
    const byId = new Map(traceScene(scene, { position: tx }, { position: rx }, FC).paths.map((p) => [p.id, p]));
    const rd = byId.get('R:walls[4]>D:walls[1].vertices[1]')!;
    // image of tx in y = 12: (-10, 19); unfolded length |image - Q| + |Q - rx| with Q the corner
    expect(rd.lengthM).toBeCloseTo(Math.hypot(10, 19) + Math.hypot(6, 9), 12);
    expect(rd.interactions.map((i) => i.type)).toEqual(['reflection', 'diffraction']);
    expect(rd.interactions[0]!.point[1]).toBeCloseTo(12, 12);
    // rx sees the corner only from below (y < 0) so the diffraction-then-reflection path needs a receiver above
    // tx below and right of the corner: corner -> (3, 12) on the wall -> rx (image of rx: (5, 20))
    const up = new Map(traceScene(scene, { position: [10, -25, 0] }, { position: [5, 4, 0] }, FC).paths.map((p) => [p.id, p]));
    const dr = up.get('D:walls[1].vertices[1]>R:walls[4]')!;
    expect(dr.lengthM).toBeCloseTo(Math.hypot(10, 25) + Math.hypot(5, 20), 12);
    expect(dr.interactions[1]!.point[0]).toBeCloseTo(3, 12);
  });

  it('are reciprocal for conducting wedges: swapping the ends gives the same amplitude (polarisation included)', () => {
    // Kouyoumjian-Pathak coefficients are reciprocal (M). Luebbers' heuristic is not: it takes R0
    // at the incident ray's angle and Rn at the diffracted ray's (Luebbers 1984), and no symmetric
    // choice can match both reflection boundaries, so dielectric wedges are not tested for it.
    for (const [material, tol] of [['metal', 1e-9]] as const) {
      const scene: Scene = {
        walls: [
          ...box(-20, -20, 0, 0, material),
          {
            vertices: [
              [-40, 12],
              [40, 12],
            ],
            material,
          },
        ],
        diffraction: true,
        maxReflectionOrder: 1,
      };
      const a: Vec3 = [-10, 5, 0],
        b: Vec3 = [6, -9, 0];
      const ab = traceScene(scene, { position: a, polarization: { slantDeg: 30 } }, { position: b }, FC).paths;
      const ba = new Map(
        traceScene(scene, { position: b }, { position: a, polarization: { slantDeg: 30 } }, FC).paths.map((p) => [p.id.split('>').reverse().join('>'), p]),
      );
      const diffracted = ab.filter((p) => p.kind === 'diffraction');
      expect(diffracted.length).toBeGreaterThanOrEqual(3);
      for (const p of diffracted) {
        const q = ba.get(p.id)!;
        expect(Math.hypot(p.amplitude[0] - q.amplitude[0], p.amplitude[1] - q.amplitude[1])).toBeLessThan(tol * Math.hypot(...p.amplitude));
      }
    }
  });

  it("in 3-D, a tall wall's vertical edge gives the 2-D path, and an oblique edge obeys Keller's equal-angle law", () => {
    const H = 1e4;
    const tall = (a: [number, number], b: [number, number]): Wall => ({
      vertices: [
        [a[0], a[1], -H],
        [b[0], b[1], -H],
        [b[0], b[1], H],
        [a[0], a[1], H],
      ],
      material: 'metal',
    });
    const rx: Vec3 = [3, -4, 0];
    const p2 = traceScene(
      {
        walls: [
          {
            vertices: [
              [0, 0],
              [50, 0],
            ],
            material: 'metal',
          },
        ],
        diffraction: true,
      },
      { position: tx },
      { position: rx },
      FC,
    ).paths;
    const p3 = traceScene({ walls: [tall([0, 0], [50, 0])], diffraction: true }, { position: tx }, { position: rx }, FC).paths;
    const d2 = p2.find((p) => p.id === 'D:walls[0].vertices[0]')!,
      d3 = p3.find((p) => p.id === 'D:walls[0].edges[3]')!;
    expect(d3.lengthM).toBeCloseTo(d2.lengthM, 9);
    expect(Math.hypot(d3.amplitude[0] - d2.amplitude[0], d3.amplitude[1] - d2.amplitude[1])).toBeLessThan(1e-9 * Math.hypot(...d2.amplitude));
    // terminals at different heights: the diffraction point makes equal angles with the edge
    const t: Vec3 = [-10, 5, 1],
      r: Vec3 = [3, -4, 7];
    const q = traceScene({ walls: [tall([0, 0], [50, 0])], diffraction: true }, { position: t }, { position: r }, FC).paths.find(
      (p) => p.id === 'D:walls[0].edges[3]',
    )!.interactions[0]!.point;
    const cosIn = (q[2] - t[2]) / Math.hypot(q[0] - t[0], q[1] - t[1], q[2] - t[2]);
    const cosOut = (r[2] - q[2]) / Math.hypot(r[0] - q[0], r[1] - q[1], r[2] - q[2]);
    expect(cosOut).toBeCloseTo(cosIn, 12);
  });

  it('give a receiver around a street corner a path where reflections alone give none', () => {
    // Two box buildings at a crossing; tx in the east-west street, rx in the north-south one, out of sight.
    const scene: Scene = {
      walls: [...box(-60, -60, -6, -6, 'brick'), ...box(6, -60, 60, -6, 'brick'), ...box(-60, 6, -6, 60, 'brick')],
      maxReflectionOrder: 2,
    };
    const t: Vec3 = [-40, 0, 0],
      r: Vec3 = [0, -40, 0];
    expect(traceScene(scene, { position: t }, { position: r }, FC).paths).toEqual([]);
    const on = traceScene({ ...scene, diffraction: true }, { position: t }, { position: r }, FC).paths;
    const d = on.filter((p) => p.kind === 'diffraction');
    expect(d.length).toBeGreaterThan(0);
    // the strongest path turns at the corner of the first building, (-6, -6): 34.53 m + 34.53 m
    const best = d[0]!;
    expect(best.id).toBe('D:walls[1].vertices[1]');
    expect(best.interactions[0]!.point).toEqual([-6, -6, 0]);
    expect(best.lengthM).toBeCloseTo(2 * Math.hypot(34, 6), 12);
  });

  it('retrace to the same amplitude as a fresh trace at the new positions', () => {
    const ps = prepareScene({
      walls: [
        ...box(-20, -20, 0, 0),
        {
          vertices: [
            [-40, 12],
            [40, 12],
          ],
          material: 'glass',
        },
      ],
      diffraction: true,
      maxReflectionOrder: 1,
    });
    const traced = traceScene(ps, { position: tx }, { position: [6, -9, 0] }, FC).paths.filter((p) => p.kind === 'diffraction');
    const moved = retracePaths(ps, traced, { position: tx }, { position: [6.3, -9.2, 0] }, FC);
    const fresh = new Map(traceScene(ps, { position: tx }, { position: [6.3, -9.2, 0] }, FC).paths.map((p) => [p.id, p]));
    for (const p of moved) {
      const f = fresh.get(p.id)!;
      expect(p.lengthM).toBeCloseTo(f.lengthM, 12);
      expect(Math.hypot(p.amplitude[0] - f.amplitude[0], p.amplitude[1] - f.amplitude[1])).toBeLessThan(1e-12 * Math.hypot(...f.amplitude));
    }
  });
});
