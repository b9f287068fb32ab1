/**
 * Edge diffraction against exact solutions computed independently with scipy:
 * - Sommerfeld's half-plane solution in Fresnel integrals for a thin perfectly conducting
 *   screen, plane-wave incidence, both polarisations (Sommerfeld 1896; Born & Wolf, Principles
 *   of Optics, section 11.5 (M)), against the tracer's paths (direct, reflected, diffracted)
 *   and against the UTD coefficients directly;
 * - the eigenfunction (Bessel series) solution of a perfectly conducting right-angled wedge
 *   (exterior 270 degrees), plane-wave incidence (Bowman, Senior & Uslenghi, Electromagnetic and
 *   Acoustic Scattering by Simple Shapes, ch. 6 (M)), against the UTD coefficients;
 * - an independent scipy implementation of the Kouyoumjian-Pathak wedge coefficient (C).
 * Convention exp(+j omega t): a plane wave arriving from the direction phi' about the edge is
 * u_i = exp(j k rho cos(phi - phi')).
 */
import { describe, expect, it } from 'vitest';
import { SPEED_OF_LIGHT, traceScene, utdWedgeCoefficients, type Scene } from '@pathweave/geometry';
import { hasPython, pythonJson } from './support/python.js';

const py = hasPython('numpy', 'scipy');

// Exact half-plane (screen on phi = 0, edge at the origin), u = e^{jkr cos(p - p')} K(-sqrt(2kr) cos((p - p')/2))
// -+ e^{jkr cos(p + p')} K(-sqrt(2kr) cos((p + p')/2)), K(a) = e^{j pi/4} / sqrt(pi) int_a^inf e^{-j t^2} dt;
// minus for E parallel to the edge (soft, Dirichlet), plus for H parallel to it (hard, Neumann).
const HALF_PLANE = String.raw`
import json, sys
import numpy as np
from scipy.special import fresnel
a = json.loads(sys.argv[1])
k = a['k']
def K(x):
    S, C = fresnel(x * np.sqrt(2 / np.pi))
    return np.exp(1j * np.pi / 4) / np.sqrt(np.pi) * np.sqrt(np.pi / 2) * ((0.5 - C) - 1j * (0.5 - S))
out = []
for r, p, pp in a['points']:
    i = np.exp(1j * k * r * np.cos(p - pp)) * K(-np.sqrt(2 * k * r) * np.cos((p - pp) / 2))
    g = np.exp(1j * k * r * np.cos(p + pp)) * K(-np.sqrt(2 * k * r) * np.cos((p + pp) / 2))
    out.append([(i - g).real, (i - g).imag, (i + g).real, (i + g).imag])
print(json.dumps(out))
`;

// Exact wedge of exterior angle n pi (faces phi = 0 and phi = n pi), nu = 1 / n:
// soft u = (4/n) sum_{m>=1} e^{j m nu pi/2} J_{m nu}(kr) sin(m nu p) sin(m nu p'),
// hard u = (2/n) sum_{m>=0} eps_m e^{j m nu pi/2} J_{m nu}(kr) cos(m nu p) cos(m nu p'), eps_0 = 1, else 2.
const WEDGE = String.raw`
import json, sys
import numpy as np
from scipy.special import jv
a = json.loads(sys.argv[1])
k, n = a['k'], a['n']
nu = 1 / n
out = []
for r, p, pp in a['points']:
    m = np.arange(0, int(n * (k * r + 60)) + 1)
    J = jv(m * nu, k * r) * np.exp(1j * m * nu * np.pi / 2)
    soft = 4 / n * np.sum((J * np.sin(m * nu * p) * np.sin(m * nu * pp))[1:])
    eps = np.where(m == 0, 1, 2)
    hard = 2 / n * np.sum(eps * J * np.cos(m * nu * p) * np.cos(m * nu * pp))
    out.append([soft.real, soft.imag, hard.real, hard.imag])
print(json.dumps(out))
`;

// Kouyoumjian-Pathak 1974 (M), written afresh from the paper's formulas with scipy's Fresnel integrals.
const KP = String.raw`
import json, sys
import numpy as np
from scipy.special import fresnel
a = json.loads(sys.argv[1])
def F(X):
    u = np.sqrt(2 * X / np.pi); S, C = fresnel(u)
    return 2j * np.sqrt(X) * np.exp(1j * X) * np.sqrt(np.pi / 2) * ((0.5 - C) - 1j * (0.5 - S))
def apm(b, n, s):
    N = np.round((b + s * np.pi) / (2 * np.pi * n))
    return 2 * np.cos((2 * n * np.pi * N - b) / 2) ** 2
out = []
for k, n, pp, p, b0, L in a['cases']:
    def t(s, b):
        return 1 / np.tan((np.pi + s * b) / (2 * n)) * F(k * L * apm(b, n, s))
    pre = -np.exp(-1j * np.pi / 4) / (2 * n * np.sqrt(2 * np.pi * k) * np.sin(b0))
    i = t(1, p - pp) + t(-1, p - pp); r = t(1, p + pp) + t(-1, p + pp)
    ds, dh = pre * (i - r), pre * (i + r)
    out.append([ds.real, ds.imag, dh.real, dh.imag])
print(json.dumps(out))
`;

const db = (re: number, im: number): number => 10 * Math.log10(re * re + im * im);

/** Geometric optics plus UTD for a plane wave on a perfectly conducting wedge (n pi exterior), soft and hard. */
function utdPlaneWave(k: number, n: number, r: number, p: number, pp: number): [number, number, number, number] {
  const D = utdWedgeCoefficients(k, { n, phiPrimeRad: pp, phiRad: p, beta0Rad: Math.PI / 2, distanceParameterM: r });
  const wave = (c: number): [number, number] => [Math.cos(k * r * c), Math.sin(k * r * c)];
  let sRe = 0,
    sIm = 0,
    hRe = 0,
    hIm = 0;
  // exactly on a boundary: the direct wave counts as shadowed and the reflection as present, as in the tracer (utd.ts)
  if (Math.abs(p - pp) < Math.PI) {
    const [a, b] = wave(Math.cos(p - pp));
    sRe += a;
    sIm += b;
    hRe += a;
    hIm += b;
  }
  if (p + pp < Math.PI + 1e-9) {
    const [a, b] = wave(Math.cos(p + pp));
    sRe -= a;
    sIm -= b;
    hRe += a;
    hIm += b;
  }
  if (p + pp > (2 * n - 1) * Math.PI - 1e-9) {
    const [a, b] = wave(Math.cos(p + pp - 2 * n * Math.PI));
    sRe -= a;
    sIm -= b;
    hRe += a;
    hIm += b;
  }
  // diffracted: +D exp(-j k r) / sqrt(r) for the field component along the edge (diffraction.ts)
  const e: [number, number] = [Math.cos(k * r) / Math.sqrt(r), -Math.sin(k * r) / Math.sqrt(r)];
  sRe += D.soft[0] * e[0] - D.soft[1] * e[1];
  sIm += D.soft[0] * e[1] + D.soft[1] * e[0];
  hRe += D.hard[0] * e[0] - D.hard[1] * e[1];
  hIm += D.hard[0] * e[1] + D.hard[1] * e[0];
  return [sRe, sIm, hRe, hIm];
}

/** Observation angles from 10 degrees off face 0 to 10 degrees off face n (away from grazing). */
function angles(n: number, stepDeg: number): number[] {
  const out: number[] = [];
  for (let d = 10; d <= n * 180 - 10 + 1e-9; d += stepDeg) out.push((d * Math.PI) / 180);
  return out;
}

describe.skipIf(!py)('edge diffraction against exact solutions (scipy)', () => {
  it("the tracer's paths past a thin conducting screen agree with Sommerfeld's half-plane solution within 1 dB", () => {
    // 2-D scene: a metal screen along +x from the edge at the origin (3 km long: its far end is
    // negligible); tx 1000 km away at angle phi' (a plane wave at the receivers to 0.003 rad of
    // phase), vertical polarisation = E along the edge (soft). The field is normalised by the free-space field.
    const fc = 28e9,
      lambda = SPEED_OF_LIGHT / fc,
      k = (2 * Math.PI) / lambda;
    const scene: Scene = {
      walls: [
        {
          vertices: [
            [0, 0],
            [3000, 0],
          ],
          material: 'metal',
        },
      ],
      diffraction: true,
      maxReflectionOrder: 1,
    };
    const points: [number, number, number][] = [];
    for (const ppDeg of [30, 60, 120]) for (const r of [0.3, 1, 3]) for (const p of angles(2, 20)) points.push([r, p, (ppDeg * Math.PI) / 180]);
    const exact = pythonJson<number[][]>(HALF_PLANE, [JSON.stringify({ k, points })]);
    let worst = 0;
    points.forEach(([r, p, pp], i) => {
      const tx: [number, number, number] = [1e6 * Math.cos(pp), 1e6 * Math.sin(pp), 0],
        rx: [number, number, number] = [r * Math.cos(p), r * Math.sin(p), 0];
      const paths = traceScene(scene, { position: tx }, { position: rx }, fc).paths;
      let re = 0,
        im = 0;
      for (const q of paths) {
        re += q.amplitude[0];
        im += q.amplitude[1];
      }
      const free = lambda / (4 * Math.PI * Math.hypot(rx[0] - tx[0], rx[1] - tx[1]));
      const err = Math.abs(db(re / free, im / free) - db(exact[i]![0]!, exact[i]![1]!));
      worst = Math.max(worst, err);
      expect(err).toBeLessThan(1);
    });
    expect(points.length).toBe(3 * 3 * 18);
    expect(worst).toBeGreaterThan(0); // an honest comparison: UTD is asymptotic, not exact
  });

  it('UTD coefficients with geometric optics agree with the exact half-plane solution within 1 dB, soft and hard', () => {
    const k = 2 * Math.PI; // lambda = 1 m
    const points: [number, number, number][] = [];
    for (const ppDeg of [20, 45, 90, 150]) for (const r of [2, 5, 20]) for (const p of angles(2, 10)) points.push([r, p, (ppDeg * Math.PI) / 180]);
    const exact = pythonJson<number[][]>(HALF_PLANE, [JSON.stringify({ k, points })]);
    points.forEach(([r, p, pp], i) => {
      const u = utdPlaneWave(k, 2, r, p, pp),
        e = exact[i]!;
      expect(Math.abs(db(u[0], u[1]) - db(e[0]!, e[1]!))).toBeLessThan(1);
      expect(Math.abs(db(u[2], u[3]) - db(e[2]!, e[3]!))).toBeLessThan(1);
    });
  });

  it('UTD coefficients with geometric optics agree with the exact right-angled wedge (Bessel series) within 1 dB, soft and hard', () => {
    const k = 2 * Math.PI,
      n = 1.5;
    const points: [number, number, number][] = [];
    for (const ppDeg of [30, 80, 135]) for (const r of [3, 10]) for (const p of angles(n, 10)) points.push([r, p, (ppDeg * Math.PI) / 180]);
    const exact = pythonJson<number[][]>(WEDGE, [JSON.stringify({ k, n, points })]);
    points.forEach(([r, p, pp], i) => {
      const u = utdPlaneWave(k, n, r, p, pp),
        e = exact[i]!;
      expect(Math.abs(db(u[0], u[1]) - db(e[0]!, e[1]!))).toBeLessThan(1);
      expect(Math.abs(db(u[2], u[3]) - db(e[2]!, e[3]!))).toBeLessThan(1);
    });
  });

  it('the wedge coefficients equal an independent scipy implementation of Kouyoumjian-Pathak to 1e-9', () => {
    const cases: number[][] = [];
    for (const n of [2, 1.75, 1.5, 1.2])
      for (const [pp, p] of [
        [0.3, 2.0],
        [1.1, 4.0],
        [0.7, 3.0],
        [2.0, 0.5],
      ] as [number, number][]) {
        if (p <= n * Math.PI && pp <= n * Math.PI) cases.push([586.8, n, pp, p, 1.2, 3.7]);
      }
    const ref = pythonJson<number[][]>(KP, [JSON.stringify({ cases })]);
    cases.forEach(([k, n, pp, p, b0, L], i) => {
      const D = utdWedgeCoefficients(k!, { n: n!, phiPrimeRad: pp!, phiRad: p!, beta0Rad: b0!, distanceParameterM: L! });
      const r = ref[i]!,
        m = Math.hypot(r[0]!, r[1]!) + Math.hypot(r[2]!, r[3]!);
      expect(Math.hypot(D.soft[0] - r[0]!, D.soft[1] - r[1]!)).toBeLessThan(1e-9 * m);
      expect(Math.hypot(D.hard[0] - r[2]!, D.hard[1] - r[3]!)).toBeLessThan(1e-9 * m);
    });
    expect(cases.length).toBeGreaterThan(12);
  });
});
