import { describe, expect, it } from 'vitest';
import { prepareScene, sceneIs2D, traceScene, validateScene, type Scene } from '../src/index.js';

const errors = (scene: Scene, ctx = {}): string[] =>
  validateScene(scene, ctx)
    .filter((p) => p.severity === 'error')
    .map((p) => `${p.path}: ${p.message}`);

describe('validateScene', () => {
  it('accepts a good 3-D scene and a good 2-D scene', () => {
    expect(
      validateScene({
        walls: [
          {
            vertices: [
              [0, 0, 0],
              [1, 0, 0],
              [1, 1, 0],
              [0, 1, 0],
            ],
          },
        ],
      }),
    ).toEqual([]);
    expect(
      validateScene({
        walls: [
          {
            vertices: [
              [0, 0],
              [4, 0],
            ],
          },
        ],
        scatterers: [{ position: [1, 2], rcsM2: 1 }],
      }),
    ).toEqual([]);
  });

  it('reports non-coplanar, degenerate and short walls with dotted paths', () => {
    const scene: Scene = {
      walls: [
        {
          vertices: [
            [0, 0, 0],
            [1, 0, 0],
            [1, 1, 0],
            [0, 1, 0],
          ],
        },
        {
          vertices: [
            [0, 0, 0],
            [1, 0, 0],
            [1, 1, 0],
            [0, 1, 0.01],
          ],
        },
        {
          vertices: [
            [0, 0, 0],
            [1, 1, 1],
            [2, 2, 2],
          ],
        },
        {
          vertices: [
            [0, 0, 0],
            [1, 0, 0],
          ],
        },
      ],
    };
    expect(errors(scene)).toEqual([
      'scene.walls[1].vertices: vertex 0 [0,0,0] is 0.00250 m off the mean plane of the wall: the vertices must be coplanar within 0.00000141 m',
      'scene.walls[2].vertices: the 3 vertices are collinear or coincide (area 0 m^2): a wall needs a polygon of non-zero area',
      'scene.walls[3].vertices: a 3-D wall is a polygon with at least 3 vertices [[x, y, z], ...], got 2',
    ]);
  });

  it('refuses mixed 2-D and 3-D coordinates', () => {
    // the scene above is 3-D (not every wall vertex has 2 coordinates): the 2-D wall is the odd one out
    expect(
      errors({
        walls: [
          {
            vertices: [
              [0, 0],
              [1, 0],
            ],
          },
          {
            vertices: [
              [0, 0, 0],
              [1, 0, 0],
              [1, 0, 1],
            ],
          },
        ],
      }),
    ).toEqual([
      'scene.walls[0].vertices[0]: has 2 coordinates in a 3-D scene: 2-D and 3-D coordinates cannot be mixed, every point needs 3',
      'scene.walls[0].vertices[1]: has 2 coordinates in a 3-D scene: 2-D and 3-D coordinates cannot be mixed, every point needs 3',
    ]);
    expect(
      errors({
        walls: [
          {
            vertices: [
              [0, 0],
              [1, 0],
            ],
          },
        ],
        scatterers: [{ position: [1, 1, 1], rcsM2: 1 }],
      }),
    ).toEqual([
      'scene.scatterers[0].position: has 3 coordinates in a 2-D scene (every wall vertex has 2 coordinates): 2-D and 3-D coordinates cannot be mixed, every point needs 2',
    ]);
    expect(
      errors({
        walls: [
          {
            vertices: [
              [2, 2],
              [2, 2],
            ],
          },
        ],
      }),
    ).toEqual(['scene.walls[0].vertices: the two ends coincide at [2,2]: a 2-D wall needs length > 0']);
  });

  it('checks materials, losses, scatterers, blockers and settings', () => {
    const scene = {
      walls: [
        {
          vertices: [
            [0, 0],
            [1, 0],
          ],
          material: 'steel',
        },
        {
          vertices: [
            [0, 1],
            [1, 1],
          ],
          material: { relativePermittivity: -2, conductivitySpm: 0 },
        },
        {
          vertices: [
            [0, 2],
            [1, 2],
          ],
          reflectionLossDb: -3,
        },
      ],
      scatterers: [{ position: [0, 5], rcsM2: 0 }],
      blockers: [
        { shape: 'box', min: [1, 1], max: [0, 2] },
        { shape: 'cylinder', base: [4, 4], radiusM: 0, heightM: 1 },
        { shape: 'cone', base: [0, 0] },
      ],
      maxReflectionOrder: 7,
    } as unknown as Scene;
    expect(errors(scene)).toEqual([
      'scene.walls[0].material: must be one of concrete, glass, wood, plasterboard, brick, metal or { relativePermittivity, conductivitySpm }, got "steel"',
      'scene.walls[1].material: relativePermittivity must be a finite number > 0, got -2',
      'scene.walls[2].reflectionLossDb: must be a finite number >= 0 (dB), got -3',
      'scene.scatterers[0].rcsM2: must be a finite number > 0 (m^2), got 0',
      'scene.blockers[0].max: must exceed min in every coordinate, got min [1,1] and max [0,2]',
      'scene.blockers[1].radiusM: must be a finite number > 0 (m), got 0',
      'scene.blockers[2].shape: must be "box" or "cylinder", got "cone"',
      'scene.maxReflectionOrder: must be an integer from 0 to 3, got 7',
    ]);
  });

  it('checks the terminals: inside a blocker, at the same point, z != 0 in 2-D', () => {
    const scene: Scene = { blockers: [{ shape: 'cylinder', base: [5, 0, 0], radiusM: 1, heightM: 2 }] };
    expect(errors(scene, { transmitter: [5.5, 0, 1], receiver: [5.5, 0, 1] })).toEqual([
      'transmitter.position: [5.5,0,1] is inside scene.blockers[0] (a cylinder); a terminal must be outside every blocker',
      'receiver.position: [5.5,0,1] is inside scene.blockers[0] (a cylinder); a terminal must be outside every blocker',
      'receiver.position: coincides with the transmitter at [5.5,0,1]; the two terminals must be apart',
    ]);
    expect(
      errors(
        {
          walls: [
            {
              vertices: [
                [0, 0],
                [1, 0],
              ],
            },
          ],
        },
        { transmitter: [0, 1, 1.5], receiver: [2, 1, 0] },
      ),
    ).toEqual(['transmitter.position: must have z = 0 in a 2-D scene, got z = 1.5']);
    expect(() => traceScene(scene, { position: [5, 0.2, 1] }, { position: [9, 0, 1] }, 28e9)).toThrow(
      'traceScene(): transmitter.position: [5,0.2,1] is inside scene.blockers[0] (a cylinder); a terminal must be outside every blocker',
    );
  });

  it('returns material range warnings with a carrier, and prepareScene throws on errors', () => {
    const w = validateScene(
      {
        walls: [
          {
            vertices: [
              [0, 0],
              [1, 0],
            ],
            material: 'glass',
          },
        ],
      },
      { carrierHz: 60e9 },
    );
    expect(w).toEqual([
      {
        path: 'scene.walls[0].material',
        severity: 'warning',
        message: 'material "glass" is validated for 1-40 GHz, got 60 GHz; the ITU-R P.2040 fit is used outside its range',
      },
    ]);
    // a wall without a material is concrete (the default) and is checked too
    expect(
      validateScene(
        {
          walls: [
            {
              vertices: [
                [0, 0],
                [1, 0],
              ],
            },
          ],
        },
        { carrierHz: 60e9 },
      ).map((p) => p.message),
    ).toEqual(['material "concrete" is validated for 1-40 GHz, got 60 GHz; the ITU-R P.2040 fit is used outside its range']);
    const r = traceScene(
      {
        walls: [
          {
            vertices: [
              [0, 0],
              [1, 0],
            ],
            material: 'glass',
          },
        ],
      },
      { position: [0, 1, 0] },
      { position: [1, 1, 0] },
      60e9,
    );
    expect(r.warnings.map((p) => p.path)).toEqual(['scene.walls[0].material']);
    expect(() =>
      prepareScene({
        walls: [
          {
            vertices: [
              [0, 0],
              [0, 0],
            ],
          },
        ],
      }),
    ).toThrow('prepareScene(): the scene has 1 problem:\nscene.walls[0].vertices: the two ends coincide at [0,0]: a 2-D wall needs length > 0');
  });

  it('decides 2-D from the walls, or from the other points when there are none', () => {
    expect(
      sceneIs2D({
        walls: [
          {
            vertices: [
              [0, 0],
              [1, 0],
            ],
          },
        ],
      }),
    ).toBe(true);
    expect(
      sceneIs2D({
        walls: [
          {
            vertices: [
              [0, 0, 0],
              [1, 0, 0],
              [1, 0, 1],
            ],
          },
        ],
      }),
    ).toBe(false);
    expect(sceneIs2D({ scatterers: [{ position: [1, 2], rcsM2: 1 }] })).toBe(true);
    expect(sceneIs2D({})).toBe(false);
  });
});
