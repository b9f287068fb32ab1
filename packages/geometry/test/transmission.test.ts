import { describe, expect, it } from 'vitest';
import { p2040Permittivity, prepareScene, retracePaths, slabCoefficients, traceScene, validateScene, SPEED_OF_LIGHT, type Scene } from '../src/index.js';

const FC = 28e9,
  LAMBDA = SPEED_OF_LIGHT / FC;
const abs2 = (c: readonly number[]): number => c[0]! * c[0]! + c[1]! * c[1]!;

describe('ITU-R P.2040 slab coefficients', () => {
  it('conserve energy in a lossless slab, |R|^2 + |T|^2 = 1, for TE and TM at every angle', () => {
    // a lossless slab neither absorbs nor creates power (M)
    for (const deg of [0, 20, 45, 70, 85])
      for (const d of [0.003, 0.0117, 0.05]) {
        const c = slabCoefficients([4.5, 0], d, LAMBDA, Math.cos((deg * Math.PI) / 180));
        expect(abs2(c.reflection.te) + abs2(c.transmission.te)).toBeCloseTo(1, 12);
        expect(abs2(c.reflection.tm) + abs2(c.transmission.tm)).toBeCloseTo(1, 12);
      }
  });

  it('pass everything through a slab of zero thickness, and through a half-wave slab at normal incidence', () => {
    const zero = slabCoefficients([5.24, -0.4], 0, LAMBDA, 0.6);
    expect(zero.transmission.te[0]).toBeCloseTo(1, 14);
    expect(abs2(zero.reflection.tm)).toBeLessThan(1e-28);
    // d = lambda / (2 sqrt(eps)): the two interface reflections cancel (Fabry-Perot resonance, M)
    const half = slabCoefficients([4, 0], LAMBDA / 4, LAMBDA, 1);
    expect(abs2(half.transmission.te)).toBeCloseTo(1, 12);
    expect(abs2(half.reflection.te)).toBeLessThan(1e-24);
  });

  it('lose more through a thicker lossy wall, about in proportion to its thickness', () => {
    // concrete at 28 GHz: attenuation inside ~ 8.686 k0 |Im sqrt(eta)| dB/m at normal incidence (M)
    const eta = p2040Permittivity('concrete', FC).eta;
    const dbPerM = 8.686 * ((2 * Math.PI) / LAMBDA) * Math.abs(Math.sqrt(Math.hypot(eta[0], eta[1])) * Math.sin(Math.atan2(eta[1], eta[0]) / 2));
    const loss = (d: number): number => -10 * Math.log10(abs2(slabCoefficients(eta, d, LAMBDA, 1).transmission.te));
    expect(loss(0.2) - loss(0.1)).toBeCloseTo(0.1 * dbPerM, 0);
  });
});

describe('transmission in the tracer', () => {
  const wall = (extra: object): Scene => ({
    walls: [
      {
        vertices: [
          [5, -20],
          [5, 20],
        ],
        material: 'glass',
        ...extra,
      },
    ],
  });

  it("a direct path through a wall with thicknessM: kind transmission, id T:walls[0], the slab's TE coefficient (2-D, vertical field)", () => {
    expect(traceScene(wall({}), { position: [0, 0, 0] }, { position: [10, 3, 0] }, FC).paths).toEqual([]);
    const [p] = traceScene(wall({ thicknessM: 0.01 }), { position: [0, 0, 0] }, { position: [10, 3, 0] }, FC).paths;
    expect([p!.id, p!.kind]).toEqual(['T:walls[0]', 'transmission']);
    expect(p!.interactions[0]).toMatchObject({ type: 'transmission', object: { kind: 'wall', index: 0 } });
    expect(p!.interactions[0]!.point[0]).toBeCloseTo(5, 12);
    expect(p!.interactions[0]!.point[1]).toBeCloseTo(1.5, 12);
    const d = Math.hypot(10, 3),
      cosT = 10 / d;
    const T = slabCoefficients(p2040Permittivity('glass', FC).eta, 0.01, LAMBDA, cosT).transmission.te;
    expect(Math.hypot(...p!.amplitude)).toBeCloseTo((LAMBDA / (4 * Math.PI * d)) * Math.hypot(...T), 15);
  });

  it('outdoor to indoor: every path into a closed room crosses a wall, and retracing keeps the ids', () => {
    const room = (t: number): Scene => ({
      walls: [
        [
          [0, 0],
          [10, 0],
        ],
        [
          [10, 0],
          [10, 8],
        ],
        [
          [10, 8],
          [0, 8],
        ],
        [
          [0, 8],
          [0, 0],
        ],
      ].map((vertices) => ({ vertices, material: 'brick' as const, thicknessM: t })),
      maxReflectionOrder: 1,
    });
    const ps = prepareScene(room(0.1));
    const paths = traceScene(ps, { position: [-20, 4, 0] }, { position: [7, 3, 0] }, FC).paths;
    expect(paths.length).toBeGreaterThan(1);
    for (const p of paths) expect(p.interactions.some((i) => i.type === 'transmission')).toBe(true);
    expect(paths.map((p) => p.id)).toContain('T:walls[3]');
    const moved = retracePaths(ps, paths, { position: [-20, 4, 0] }, { position: [7.2, 3.1, 0] }, FC);
    const fresh = new Map(traceScene(ps, { position: [-20, 4, 0] }, { position: [7.2, 3.1, 0] }, FC).paths.map((p) => [p.id, p]));
    for (const p of moved) {
      expect(p.lengthM).toBeCloseTo(fresh.get(p.id)!.lengthM, 12);
      p.interactions.forEach((it, k) => it.point.forEach((v, i) => expect(v).toBeCloseTo(fresh.get(p.id)!.interactions[k]!.point[i]!, 9)));
    }
  });

  it('refuses thicknessM where nothing could pass', () => {
    const problems = validateScene({
      walls: [
        {
          vertices: [
            [0, 0],
            [1, 0],
          ],
          material: 'metal',
          thicknessM: 0.01,
        },
        {
          vertices: [
            [0, 1],
            [1, 1],
          ],
          reflectionLossDb: 6,
          thicknessM: 0.01,
        },
        {
          vertices: [
            [0, 2],
            [1, 2],
          ],
          thicknessM: -1,
        },
      ],
    }).map((p) => `${p.path}: ${p.message}`);
    expect(problems).toEqual([
      'scene.walls[0].thicknessM: a metal wall (a perfect conductor) transmits nothing; leave thicknessM out',
      'scene.walls[1].thicknessM: a wall with reflectionLossDb has no permittivity to transmit through; give a material instead',
      'scene.walls[2].thicknessM: must be a finite number > 0 (m), got -1',
    ]);
  });
});
