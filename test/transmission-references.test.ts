/**
 * Wall transmission against ITU-R P.2040's single-layer slab formulas evaluated independently in
 * numpy (C): R = R' (1 - e^{-2jq}) / (1 - R'^2 e^{-2jq}), T = (1 - R'^2) e^{-j(q - q0)} / (1 - R'^2 e^{-2jq}),
 * q = 2 pi d sqrt(eta - sin^2 t) / lambda, q0 = 2 pi d cos t / lambda (ITU-R P.2040, single-layer
 * slab, equation numbers M), with the P.2040-3 Table 3 material model (V).
 */
import { describe, expect, it } from 'vitest';
import { SPEED_OF_LIGHT, p2040Permittivity, slabCoefficients, traceScene } from '@pathweave/geometry';
import { hasPython, pythonJson } from './support/python.js';

const py = hasPython('numpy');

const SLAB = String.raw`
import json, sys
import numpy as np
a = json.loads(sys.argv[1])
out = []
for er, ei, d, lam, t in a['cases']:
    eta = er + 1j * ei
    c, s2 = np.cos(t), np.sin(t) ** 2
    root = np.sqrt(eta - s2)
    rte = (c - root) / (c + root)
    rtm = (eta * c - root) / (eta * c + root)
    q = 2 * np.pi * d * root / lam
    q0 = 2 * np.pi * d * c / lam
    e2 = np.exp(-2j * q)
    row = []
    for r in (rte, rtm):
        R = r * (1 - e2) / (1 - r * r * e2)
        T = (1 - r * r) * np.exp(-1j * (q - q0)) / (1 - r * r * e2)
        row += [R.real, R.imag, T.real, T.imag]
    out.append(row)
print(json.dumps(out))
`;

describe.skipIf(!py)('ITU-R P.2040 slab transmission against numpy', () => {
  it('slab coefficients of concrete, glass and plasterboard walls at 28 and 60 GHz agree to 1e-10', () => {
    const cases: number[][] = [];
    for (const [name, d] of [
      ['concrete', 0.15],
      ['glass', 0.006],
      ['plasterboard', 0.0125],
    ] as const) {
      for (const f of [28e9, 60e9]) {
        const eta = p2040Permittivity(name, f).eta;
        for (const deg of [0, 30, 60, 80]) cases.push([eta[0], eta[1], d, SPEED_OF_LIGHT / f, (deg * Math.PI) / 180]);
      }
    }
    const ref = pythonJson<number[][]>(SLAB, [JSON.stringify({ cases })]);
    cases.forEach(([er, ei, d, lam, t], i) => {
      const c = slabCoefficients([er!, ei!], d!, lam!, Math.cos(t!));
      const got = [...c.reflection.te, ...c.transmission.te, ...c.reflection.tm, ...c.transmission.tm];
      got.forEach((v, k) => expect(Math.abs(v - ref[i]![k]!)).toBeLessThan(1e-10));
    });
  });

  it("the tracer's path through a 6 mm glass pane carries the numpy slab coefficient (TE, 2-D)", () => {
    const f = 28e9,
      lam = SPEED_OF_LIGHT / f;
    const eta = p2040Permittivity('glass', f).eta,
      t = Math.atan2(3, 10);
    const [row] = pythonJson<number[][]>(SLAB, [JSON.stringify({ cases: [[eta[0], eta[1], 0.006, lam, t]] })]);
    const [p] = traceScene(
      {
        walls: [
          {
            vertices: [
              [5, -20],
              [5, 20],
            ],
            material: 'glass',
            thicknessM: 0.006,
          },
        ],
      },
      { position: [0, 0, 0] },
      { position: [10, 3, 0] },
      f,
    ).paths;
    const T = p!.interactions[0]!.coefficients!.te;
    expect(Math.abs(T[0] - row![2]!) + Math.abs(T[1] - row![3]!)).toBeLessThan(1e-12);
  });
});
