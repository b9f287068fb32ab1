/**
 * Diffuse scattering (diffuse.ts) in the tracer: off by default, tiles, the strongest per wall,
 * visibility of both legs, the reflection reduction factor, ids, retracing and smoothness along a
 * walk, refusals. The model's references (scipy/numpy) are in test/diffuse-references.test.ts.
 */
import { describe, expect, it } from 'vitest';
import {
  diffusePattern,
  diffuseTileFactor,
  directiveNormalization,
  prepareScene,
  retracePaths,
  sceneDiffuseTiles,
  traceScene,
  validateScene,
  type Scene,
  type TracedPath,
  type Wall,
} from '../src/index.js';

const FC = 28e9;
const power = (paths: readonly TracedPath[]): number => paths.reduce((s, p) => s + 10 ** (p.powerDb / 10), 0);
const facade: Wall = {
  vertices: [
    [-5, 5, 0],
    [5, 5, 0],
    [5, 5, 4],
    [-5, 5, 4],
  ],
  material: 'brick',
};
const rough = (extra: Partial<Scene> = {}, diffuse: Scene['diffuse'] = { tileM: 1, maxPathsPerWall: 100 }): Scene => ({ walls: [facade], diffuse, ...extra });

describe('diffuse scattering in the tracer', () => {
  it('is off without scene.diffuse: the same paths, coefficients and powers as a scene with scatteringCoefficient keys only', () => {
    const tx = { position: [-2, 0, 1.5] as const },
      rx = { position: [2, 0, 1.5] as const };
    const plain = traceScene({ walls: [facade] }, tx, rx, FC).paths;
    const keyed = traceScene({ walls: [{ ...facade, scatteringCoefficient: 0.7 }] }, tx, rx, FC).paths;
    expect(keyed).toEqual(plain);
    expect(plain.map((p) => p.kind)).toEqual(['los', 'reflection']);
  });

  it('cuts a 10 m x 4 m facade into 40 tiles of 1 m^2 and emits one path per visible tile, named F:walls[0].tiles[j]', () => {
    const ps = prepareScene(rough());
    const t = sceneDiffuseTiles(ps)!;
    expect(t.start[1]).toBe(40);
    expect(Array.from(t.area).every((a) => Math.abs(a - 1) < 1e-12)).toBe(true);
    const paths = traceScene(ps, { position: [-2, 0, 1.5] }, { position: [2, 0, 1.5] }, FC).paths;
    const diffuse = paths.filter((p) => p.kind === 'diffuse');
    expect(diffuse.length).toBe(40);
    expect(new Set(diffuse.map((p) => p.id)).size).toBe(40);
    for (const p of diffuse) {
      expect(p.id).toMatch(/^F:walls\[0\]\.tiles\[\d+\]$/);
      expect(p.interactions).toHaveLength(1);
      expect(p.interactions[0]!.type).toBe('diffuse');
      expect(p.interactions[0]!.point[1]).toBeCloseTo(5, 12);
      // every tile path is longer than the specular one (the shortest tx -> wall -> rx route)
      expect(p.lengthM).toBeGreaterThan(paths.find((q) => q.kind === 'reflection')!.lengthM - 1e-9);
    }
  });

  it('clips tiles to the polygon: the areas of a triangle and of an L-shaped wall add up to theirs', () => {
    const tri: Wall = {
      vertices: [
        [0, 5, 0],
        [3, 5, 0],
        [0, 5, 3],
      ],
    };
    const ell: Wall = {
      vertices: [
        [0, 8, 0],
        [4, 8, 0],
        [4, 8, 1],
        [1, 8, 1],
        [1, 8, 3],
        [0, 8, 3],
      ],
    };
    const t = sceneDiffuseTiles(prepareScene({ walls: [tri, ell], diffuse: { tileM: 0.7 } }))!;
    const sum = (a: number, b: number): number => Array.from(t.area.subarray(a, b)).reduce((s, x) => s + x, 0);
    expect(sum(t.start[0]!, t.start[1]!)).toBeCloseTo(4.5, 10);
    expect(sum(t.start[1]!, t.start[2]!)).toBeCloseTo(6, 10);
  });

  it('keeps the maxPathsPerWall tiles of each wall strongest by the model (S sqrt(A cos theta_i D) / (r_i r_s), before the Fresnel and polarisation factors)', () => {
    const tx = [-2, 0, 1.5] as const,
      rx = [2, 0, 1.5] as const;
    const ps = prepareScene(rough({}, { tileM: 1, maxPathsPerWall: 5 }));
    const t = sceneDiffuseTiles(ps)!;
    const ranked = Array.from({ length: t.start[1]! }, (_, k) => {
      const c = t.center.subarray(3 * k, 3 * k + 3);
      const ri = Math.hypot(c[0]! - tx[0], c[1]! - tx[1], c[2]! - tx[2]),
        rs = Math.hypot(c[0]! - rx[0], c[1]! - rx[1], c[2]! - rx[2]);
      return { k, v: diffuseTileFactor(ps, 0, k, tx, rx) / (ri * rs) };
    }).sort((a, b) => b.v - a.v || a.k - b.k);
    const five = traceScene(ps, { position: tx }, { position: rx }, FC).paths.filter((p) => p.kind === 'diffuse');
    expect(five.map((p) => p.id).sort()).toEqual(
      ranked
        .slice(0, 5)
        .map((r) => `F:walls[0].tiles[${r.k}]`)
        .sort(),
    );
  });

  it('reduces the specular reflection by R = sqrt(1 - S^2) of its wall, with S by wall, by material or by default', () => {
    const tx = { position: [-2, 0, 1.5] as const },
      rx = { position: [2, 0, 1.5] as const };
    const spec = (s: Scene): TracedPath => traceScene(s, tx, rx, FC).paths.find((p) => p.kind === 'reflection')!;
    const smooth = spec({ walls: [facade] }).powerDb;
    expect(spec(rough({}, { tileM: 1 })).powerDb - smooth).toBeCloseTo(10 * Math.log10(1 - 0.4 ** 2), 10); // default S = 0.4
    expect(spec(rough({}, { tileM: 1, materials: { brick: 0.3 } })).powerDb - smooth).toBeCloseTo(10 * Math.log10(1 - 0.09), 10);
    expect(spec({ walls: [{ ...facade, scatteringCoefficient: 0.5 }], diffuse: { tileM: 1, materials: { brick: 0.3 } } }).powerDb - smooth).toBeCloseTo(
      10 * Math.log10(0.75),
      10,
    );
    // S = 0: a smooth wall, no tiles and no reduction
    const none = traceScene({ walls: [{ ...facade, scatteringCoefficient: 0 }], diffuse: { tileM: 1 } }, tx, rx, FC).paths;
    expect(none.map((p) => p.kind)).toEqual(['los', 'reflection']);
    expect(none[1]!.powerDb).toBe(smooth);
  });

  it('needs both legs clear: an opaque screen hides the tiles behind it, tiles on the far side of the wall scatter nothing', () => {
    const screen: Wall = {
      vertices: [
        [-6, 3, 0],
        [0, 3, 0],
        [0, 3, 5],
        [-6, 3, 5],
      ],
      scatteringCoefficient: 0,
    };
    const tx = { position: [-2, 0, 1.5] as const },
      rx = { position: [2, 0, 1.5] as const };
    const open = traceScene(rough(), tx, rx, FC).paths.filter((p) => p.kind === 'diffuse');
    const shaded = traceScene(rough({ walls: [facade, screen] }), tx, rx, FC).paths.filter((p) => p.kind === 'diffuse');
    expect(shaded.length).toBeGreaterThan(0);
    expect(shaded.length).toBeLessThan(open.length);
    for (const p of shaded) expect(p.interactions[0]!.point[0]).toBeGreaterThan(0); // tiles at x < 0 sit behind the screen as seen from tx at y = 0
    // terminals on opposite sides of the facade: no diffuse path (scattering into the half-space of incidence only)
    expect(traceScene(rough(), tx, { position: [2, 9, 1.5] }, FC).paths.filter((p) => p.kind === 'diffuse')).toEqual([]);
  });

  it('names walls crossed on a leg as transmissions (a thin glass pane in front of the facade)', () => {
    const pane: Wall = {
      vertices: [
        [-6, 2, 0],
        [6, 2, 0],
        [6, 2, 5],
        [-6, 2, 5],
      ],
      material: 'glass',
      thicknessM: 0.006,
      scatteringCoefficient: 0,
    };
    const paths = traceScene(rough({ walls: [facade, pane] }), { position: [-2, 0, 1.5] }, { position: [2, 0, 1.5] }, FC).paths.filter(
      (p) => p.kind === 'diffuse',
    );
    expect(paths.length).toBe(40);
    expect(paths[0]!.interactions.map((it) => it.type)).toEqual(['transmission', 'diffuse', 'transmission']);
    expect(paths[0]!.id).toMatch(/^T:walls\[1\]>F:walls\[0\]\.tiles\[\d+\]>T:walls\[1\]$/);
  });

  it('retraces each tile path to the fresh trace at the new position, and the total diffuse power changes smoothly along a 2 m walk', () => {
    const ps = prepareScene(rough());
    const tx = { position: [-2, 0, 1.5] as const };
    const at = (x: number): TracedPath[] => traceScene(ps, tx, { position: [x, 0, 1.5] }, FC).paths.filter((p) => p.kind === 'diffuse');
    const start = at(1);
    const moved = retracePaths(ps, start, tx, { position: [1.05, 0, 1.5] }, FC);
    const fresh = new Map(at(1.05).map((p) => [p.id, p]));
    expect(moved.length).toBe(fresh.size);
    const spreading = (p: TracedPath): number => Math.hypot(...p.amplitude) / Math.hypot(...p.polarizationFactor);
    for (const p of moved) {
      const q = fresh.get(p.id)!;
      // geometry and the model's factor follow the positions; the Fresnel and polarisation factor F stays as traced (as for reflections)
      expect(Math.abs(p.lengthM - q.lengthM)).toBeLessThan(1e-12);
      expect(Math.abs(spreading(p) / spreading(q) - 1)).toBeLessThan(1e-12);
      expect(Math.abs(p.powerDb - q.powerDb)).toBeLessThan(0.01); // F held over 5 cm: 1.6e-3 dB at most here
    }
    // 1 cm steps (a 28 GHz wavelength is 1.07 cm): the summed tile power moves by far less than 0.1 dB per step
    let prev = 10 * Math.log10(power(at(0))),
      worst = 0;
    for (let k = 1; k <= 200; k++) {
      const now = 10 * Math.log10(power(at(k * 0.01)));
      worst = Math.max(worst, Math.abs(now - prev));
      prev = now;
    }
    expect(worst).toBeLessThan(0.1);
  });

  it('directive pattern: the lobe peaks along the specular direction and narrows as alphaR grows; alphaR = 1 is not the Lambertian cos-law', () => {
    // normal incidence, scattering along the normal (= specular): ((1 + 1) / 2)^a / F(a, 0)
    const peak = (a: number): number => diffusePattern('directive', a, 1, 1, 1);
    expect(peak(1)).toBeCloseTo(1 / directiveNormalization(1, 1), 14);
    expect(peak(1)).toBeCloseTo(2 / (3 * Math.PI), 12); // F(1, 0) = 3 pi / 2
    expect(peak(4)).toBeGreaterThan(peak(1));
    expect(peak(12)).toBeGreaterThan(peak(4));
    expect(diffusePattern('lambertian', 1, 1, 1, 1)).toBeCloseTo(1 / Math.PI, 14);
    // grazing scattering: the cos-law vanishes, the alphaR = 1 lobe (1 + cos 90 deg) / 2 = 1/2 does not
    expect(diffusePattern('lambertian', 1, 1, 0, 0)).toBe(0);
    expect(diffusePattern('directive', 1, 1, 0, 0)).toBeCloseTo(0.5 / (1.5 * Math.PI), 12);
  });

  it('refuses bad settings, naming the key, the value and what is allowed', () => {
    const problems = (s: Scene): string[] => validateScene(s).map((p) => `${p.path}: ${p.message}`);
    expect(problems(rough({}, { tileM: 0 }))).toEqual(['scene.diffuse.tileM: must be a finite number > 0 (m), got 0']);
    expect(problems(rough({}, { tileM: 1, alphaR: 2.5 }))).toEqual(['scene.diffuse.alphaR: must be an integer from 1 to 20, got 2.5']);
    expect(problems(rough({}, { tileM: 1, scatteringCoefficient: 1.5 }))).toEqual([
      'scene.diffuse.scatteringCoefficient: must be a number from 0 to 1 (the scattering coefficient S), got 1.5',
    ]);
    expect(problems(rough({}, { tileM: 1, maxPathsPerWall: 0 }))).toEqual(['scene.diffuse.maxPathsPerWall: must be an integer >= 1, got 0']);
    expect(problems({ walls: [{ ...facade, scatteringCoefficient: -0.1 }] })).toEqual([
      'scene.walls[0].scatteringCoefficient: must be a number from 0 to 1 (the scattering coefficient S), got -0.1',
    ]);
    expect(
      problems({
        walls: [
          {
            vertices: [
              [0, 5],
              [10, 5],
            ],
          },
        ],
        diffuse: { tileM: 1 },
      }),
    ).toEqual([
      'scene.diffuse: diffuse scattering needs a 3-D scene (walls as polygons): the walls of a 2-D scene have unbounded height and cannot be cut into tiles',
    ]);
    expect(problems(rough({}, { tileM: 0.01 }))).toEqual([
      'scene.diffuse.tileM: cuts the walls into 400000 tiles, more than 200000; give a larger tileM (0.01 m now)',
    ]); // 1000 x 400 cells of the 10 m x 4 m facade
    expect(() => traceScene(rough({}, { tileM: -1 }), { position: [0, 0, 1] }, { position: [1, 0, 1] }, FC)).toThrow(/scene\.diffuse\.tileM/);
  });
});
