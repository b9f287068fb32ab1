/**
 * Diffuse scattering (geometry diffuse.ts) against outside references: the directive model of
 * Degli-Esposti et al., IEEE Trans. Antennas Propag. 55(1), 2007 (pattern, its normalisation F and
 * the Lambertian case, M), with integrals computed independently by scipy/numpy quadrature (C):
 * - F(alphaR, theta_i), the paper's closed form, against scipy dblquad over the half-space;
 * - the total diffuse power of a wall cut into 1024 tiles against the surface integral of the model
 *   (scipy dblquad) and against numpy's midpoint sum over the same cells;
 * - energy: specular (1 - S^2) |Gamma|^2 plus the diffuse power integrated over the hemisphere
 *   (Gauss-Legendre in cos theta_s, numpy) is the |Gamma|^2 of the smooth wall;
 * - the Lambertian case, |E_s|^2 proportional to S^2 dS cos(theta_i) cos(theta_s) / pi (the paper's
 *   Lambertian model), evaluated in numpy for a tilted wall.
 */
import { describe, expect, it } from 'vitest';
import {
  SPEED_OF_LIGHT,
  diffuseTileFactor,
  directiveNormalization,
  prepareScene,
  sceneDiffuseTiles,
  traceScene,
  type Complex,
  type Scene,
  type TracedPath,
} from '@pathweave/geometry';
import { hasPython, pythonJson } from './support/python.js';

const py = hasPython('numpy', 'scipy');

const MODEL = String.raw`
import json, sys
import numpy as np
from math import comb, pi
from scipy import integrate
a = json.loads(sys.argv[1])

def F_closed(al, ti):
    s = 0.0
    for j in range(al + 1):
        I = 2 * pi / (j + 1)
        if j % 2 == 1:
            I *= np.cos(ti) * sum(comb(2 * w, w) * np.sin(ti) ** (2 * w) / 4 ** w for w in range((j - 1) // 2 + 1))
        s += comb(al, j) * I
    return s / 2 ** al

def F_quad(al, ti):
    r = (np.sin(ti), 0.0, np.cos(ti))
    f = lambda ph, th: ((1 + np.sin(th) * np.cos(ph) * r[0] + np.cos(th) * r[2]) / 2) ** al * np.sin(th)
    return integrate.dblquad(f, 0, pi / 2, 0, 2 * pi, epsabs=1e-13, epsrel=1e-12)[0]

def wall_power(x, z, g):
    # |amplitude|^2 density of the model over the wall y = g['y'] (metal: |Gamma| = 1)
    tx, rx = np.array(g['tx']), np.array(g['rx'])
    P = np.array([x, g['y'], z])
    ki = P - tx; ri = np.linalg.norm(ki); ki = ki / ri
    ks = rx - P; rs = np.linalg.norm(ks); ks = ks / rs
    n = np.array([0.0, -1.0, 0.0])  # towards the terminals
    ci = -ki @ n
    spec = ki - 2 * (ki @ n) * n
    D = ((1 + spec @ ks) / 2) ** g['alpha'] / F_closed(g['alpha'], np.arccos(ci))
    return (g['lam'] / (4 * pi * ri * rs)) ** 2 * g['S'] ** 2 * ci * D

out = {}
if 'F' in a:
    out['F'] = [F_quad(al, ti) for al, ti in a['F']]
if 'wall' in a:
    g = a['wall']
    out['integral'] = integrate.dblquad(lambda z, x: wall_power(x, z, g), g['x'][0], g['x'][1], g['z'][0], g['z'][1], epsabs=0, epsrel=1e-10)[0]
    h = g['h']
    xs = np.arange(g['x'][0] + h / 2, g['x'][1], h); zs = np.arange(g['z'][0] + h / 2, g['z'][1], h)
    out['midpoint'] = float(sum(wall_power(x, z, g) for x in xs for z in zs) * h * h)
if 'nodes' in a:
    mu, w = np.polynomial.legendre.leggauss(a['nodes'])
    out['mu'] = list((mu + 1) / 2); out['w'] = list(w / 2)
if 'lambert' in a:
    res = []
    for c in a['lambert']:
        P, tx, rx, n = (np.array(c[k]) for k in ('P', 'tx', 'rx', 'n'))
        ri = np.linalg.norm(P - tx); rs = np.linalg.norm(rx - P)
        ci = abs((tx - P) @ n) / ri; cs = abs((rx - P) @ n) / rs
        res.append(c['lam'] / (4 * pi * ri * rs) * c['S'] * np.sqrt(c['A'] * ci * cs / pi))
    out['lambert'] = res
print(json.dumps(out))
`;

const cabs = (c: Complex): number => Math.hypot(c[0], c[1]);
/** |amplitude| / |F|: the path's spreading and scattering factor without the terminals' polarisations. */
const spreading = (p: TracedPath): number => cabs(p.amplitude) / cabs(p.polarizationFactor);
const frobenius2 = (p: TracedPath): number => p.polarimetric.flat().reduce((s, c) => s + c[0] ** 2 + c[1] ** 2, 0);

describe.skipIf(!py)('diffuse scattering against the directive model and scipy/numpy quadrature', () => {
  it('the closed-form normalisation F(alphaR, theta_i) of Degli-Esposti et al. 2007 equals the scipy integral of the lobe over the half-space to 1e-10', () => {
    const cases: [number, number][] = [];
    for (const al of [1, 2, 3, 4, 7, 12, 20]) for (const ti of [0, 0.3, 0.9, 1.4, 1.55]) cases.push([al, ti]);
    const ref = pythonJson<{ F: number[] }>(MODEL, [JSON.stringify({ F: cases })]);
    cases.forEach(([al, ti], i) => expect(Math.abs(directiveNormalization(al, Math.cos(ti)) / ref.F[i]! - 1)).toBeLessThan(1e-10));
  });

  it('the diffuse power of a 8 m x 8 m metal wall in 1024 tiles equals numpy midpoint sum to 1e-9 and the scipy surface integral of the model within the midpoint error (0.1 %)', () => {
    const f = 28e9,
      lam = SPEED_OF_LIGHT / f,
      h = 0.25,
      S = 0.5,
      alpha = 4;
    const tx: [number, number, number] = [-2, 0, 1],
      rx: [number, number, number] = [2, 0, 1];
    const scene: Scene = {
      walls: [
        {
          vertices: [
            [-4, 5, -3],
            [4, 5, -3],
            [4, 5, 5],
            [-4, 5, 5],
          ],
          material: 'metal',
        },
      ],
      lineOfSight: false,
      maxReflectionOrder: 0,
      diffuse: { tileM: h, maxPathsPerWall: 5000, scatteringCoefficient: S, alphaR: alpha },
    };
    const paths = traceScene(scene, { position: tx }, { position: rx }, f).paths;
    expect(paths.length).toBe(1024);
    expect(paths.every((p) => p.kind === 'diffuse' && cabs(p.polarizationFactor) > 0.1)).toBe(true);
    // metal: |Gamma_TE| = |Gamma_TM| = 1, so the polarimetric transfer keeps the field's power
    expect(paths.every((p) => Math.abs(frobenius2(p) - 2) < 1e-12)).toBe(true);
    const total = paths.reduce((s, p) => s + spreading(p) ** 2, 0);
    const ref = pythonJson<{ integral: number; midpoint: number }>(MODEL, [
      JSON.stringify({ wall: { y: 5, x: [-4, 4], z: [-3, 5], tx, rx, lam, S, alpha, h } }),
    ]);
    expect(Math.abs(total / ref.midpoint - 1)).toBeLessThan(1e-9);
    // midpoint rule over 0.25 m cells: error O(h^2), 2.1e-4 here; the tolerance leaves a factor ~5
    expect(Math.abs(total / ref.integral - 1)).toBeLessThan(1e-3);
  });

  for (const [pattern, alphaR] of [
    ['lambertian', 1],
    ['directive', 1],
    ['directive', 4],
    ['directive', 12],
  ] as const) {
    it(`energy (${pattern}${pattern === 'directive' ? `, alphaR ${alphaR}` : ''}): specular (1 - S^2) |Gamma|^2 plus the diffuse power over the hemisphere (Gauss-Legendre, numpy) is |Gamma|^2 of the smooth concrete wall to 1e-6`, () => {
      const f = 28e9,
        S = 0.6,
        side = 0.2;
      const wall = {
        vertices: [
          [-side / 2, -side / 2, 0],
          [side / 2, -side / 2, 0],
          [side / 2, side / 2, 0],
          [-side / 2, side / 2, 0],
        ],
        material: 'concrete' as const,
      };
      const tx: [number, number, number] = [-3, 0, 2],
        rx: [number, number, number] = [3, 0, 2]; // specular point at the origin, the tile's centroid
      const smooth = traceScene({ walls: [wall], lineOfSight: false, maxReflectionOrder: 1 }, { position: tx }, { position: rx }, f).paths;
      const rough: Scene = { walls: [wall], lineOfSight: false, maxReflectionOrder: 1, diffuse: { tileM: 1, scatteringCoefficient: S, pattern, alphaR } };
      const paths = traceScene(rough, { position: tx }, { position: rx }, f).paths;
      const spec0 = smooth.find((p) => p.kind === 'reflection')!,
        spec = paths.find((p) => p.kind === 'reflection')!,
        diffuse = paths.find((p) => p.kind === 'diffuse')!;
      expect(diffuse.id).toBe('F:walls[0].tiles[0]');
      // specular power reduced by 1 - S^2 (the reflection reduction factor R = sqrt(1 - S^2))
      expect(Math.abs(cabs(spec.amplitude) ** 2 / cabs(spec0.amplitude) ** 2 - (1 - S * S))).toBeLessThan(1e-12);
      // the diffuse wave carries the wall's reflectivity |Gamma_TE|^2 + |Gamma_TM|^2 (per polarisation)
      const rho = frobenius2(spec0);
      expect(rho).toBeLessThan(1.5); // concrete: well below the 2 of a perfect reflector
      expect(Math.abs(frobenius2(diffuse) / rho - 1)).toBeLessThan(1e-12);
      // hemisphere integral of D (the tile factor squared over S^2 A cos theta_i)
      const { mu, w } = pythonJson<{ mu: number[]; w: number[] }>(MODEL, [JSON.stringify({ nodes: 400 })]);
      const ps = prepareScene(rough);
      const A = sceneDiffuseTiles(ps)!.area[0]!;
      const cosI = 2 / Math.hypot(3, 2);
      const M = 256,
        R = 100;
      let integral = 0;
      mu.forEach((m, i) => {
        const s = Math.sqrt(1 - m * m);
        for (let j = 0; j < M; j++) {
          const phi = (2 * Math.PI * j) / M; // periodic trapezoid: spectrally accurate in phi
          const to: [number, number, number] = [R * s * Math.cos(phi), R * s * Math.sin(phi), R * m];
          integral += ((w[i]! * (2 * Math.PI)) / M) * (diffuseTileFactor(ps, 0, 0, tx, to) ** 2 / (S * S * A * cosI));
        }
      });
      const balance = 1 - S * S + S * S * integral; // over the smooth wall's |Gamma|^2
      expect(Math.abs(balance - 1)).toBeLessThan(1e-6);
    });
  }

  it('Lambertian case: every tile path of a tilted wall has lambda / (4 pi r_i r_s) S sqrt(dS cos(theta_i) cos(theta_s) / pi) (numpy) to 1e-12', () => {
    const f = 60e9,
      lam = SPEED_OF_LIGHT / f,
      S = 0.35;
    // a 2 m x 1 m wall tilted about the x axis, cut into 0.5 m tiles (area 0.25 m^2 each)
    const c = Math.cos(0.4),
      s = Math.sin(0.4);
    const wall = {
      vertices: [
        [0, 6, 0],
        [2, 6, 0],
        [2, 6 + s, c],
        [0, 6 + s, c],
      ],
      material: 'glass' as const,
    };
    const n = [0, -c, s];
    const tx: [number, number, number] = [-1, 0, 1.5],
      rx: [number, number, number] = [3, 1, 0.5];
    const paths = traceScene(
      {
        walls: [wall],
        lineOfSight: false,
        maxReflectionOrder: 0,
        diffuse: { tileM: 0.5, maxPathsPerWall: 100, scatteringCoefficient: S, pattern: 'lambertian' },
      },
      { position: tx },
      { position: rx },
      f,
    ).paths;
    expect(paths.length).toBe(8);
    const ref = pythonJson<{ lambert: number[] }>(MODEL, [
      JSON.stringify({ lambert: paths.map((p) => ({ P: p.interactions[0]!.point, tx, rx, n, lam, S, A: 0.25 })) }),
    ]);
    paths.forEach((p, i) => {
      // the glass's Fresnel coefficients sit in the polarisation factor F, outside the spreading
      const magnitude = spreading(p);
      expect(Math.abs(magnitude / ref.lambert[i]! - 1)).toBeLessThan(1e-12);
    });
  });
});
