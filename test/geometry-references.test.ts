/**
 * The scene tracer against references outside the project: the closed-form two-ray ground
 * reflection model (evaluated independently in numpy), ITU-R P.525 free-space loss, the Fresnel
 * equations with the ITU-R P.2040 material model (numpy), the bistatic radar equation and the
 * ITU-R P.526 knife-edge loss for a blocker edge placed at a known height.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { SPEED_OF_LIGHT, rotationFromOrientation, traceScene, type Scene, type TerminalState, type Vec3 } from '@pathweave/geometry';
import { hasPython, pythonJson } from './support/python.js';

const py = hasPython('numpy');
const term = (position: Vec3, extra: Partial<TerminalState> = {}): TerminalState => ({ position, ...extra });

// Two-ray model (Rappaport, Wireless Communications, 2nd ed., section 4.6 (M); Goldsmith,
// Wireless Communications, section 2.4 (M)): E = lambda/(4 pi) [exp(-j k d1)/d1 + Gamma exp(-j k d2)/d2],
// d2 = sqrt(D^2 + (h1 + h2)^2), grazing angle psi = atan((h1 + h2) / D), Gamma_V / Gamma_H of the
// ground for vertical / horizontal polarisation. Material: ITU-R P.2040-3 Table 3 concrete (V).
const TWO_RAY = String.raw`
import json, sys
import numpy as np
a = json.loads(sys.argv[1])
c = 299792458.0; eps0 = 8.8541878128e-12
f = a['f']; lam = c / f; k = 2 * np.pi / lam
h1, h2, D = a['h1'], a['h2'], a['D']
fg = f / 1e9
eta = 5.24 * fg**0 - 1j * (0.0462 * fg**0.7822) / (2 * np.pi * f * eps0)
d1 = np.hypot(D, h1 - h2); d2 = np.hypot(D, h1 + h2)
psi = np.arctan2(h1 + h2, D)
root = np.sqrt(eta - np.cos(psi)**2)
gv = (eta * np.sin(psi) - root) / (eta * np.sin(psi) + root)
gh = (np.sin(psi) - root) / (np.sin(psi) + root)
def field(g):
    e = lam / (4 * np.pi) * (np.exp(-1j * k * d1) / d1 + g * np.exp(-1j * k * d2) / d2)
    return [e.real, e.imag]
print(json.dumps({
  'd2': d2, 'tau2': d2 / c, 'elevDeg': -np.degrees(psi), 'xSpec': D * h1 / (h1 + h2),
  'gv': [gv.real, gv.imag], 'gh': [gh.real, gh.imag], 'ev': field(gv), 'eh': field(gh),
}))
`;

describe.skipIf(!py)('two-ray ground reflection against the closed form (numpy)', () => {
  const f = 28e9,
    h1 = 6,
    h2 = 1.5,
    D = 40;
  type TwoRay = {
    d2: number;
    tau2: number;
    elevDeg: number;
    xSpec: number;
    gv: [number, number];
    gh: [number, number];
    ev: [number, number];
    eh: [number, number];
  };
  // Evaluated in beforeAll, not while collecting: a skipped suite is still collected, and numpy may be absent.
  let ref!: TwoRay;
  beforeAll(() => {
    ref = pythonJson<TwoRay>(TWO_RAY, [JSON.stringify({ f, h1, h2, D })]);
  });
  const ground: Scene = {
    walls: [
      {
        vertices: [
          [-100, -100, 0],
          [200, -100, 0],
          [200, 100, 0],
          [-100, 100, 0],
        ],
        material: 'concrete',
      },
    ],
  };
  // receiver faces the transmitter (yaw 180), both boresights horizontal
  const tx = (pol: 'vertical' | 'horizontal'): TerminalState => term([0, 0, h1], { polarization: pol });
  const rx = (pol: 'vertical' | 'horizontal'): TerminalState => term([D, 0, h2], { polarization: pol, rotation: rotationFromOrientation({ yawDeg: 180 }) });

  it('gives the reflected delay, angles and specular point', () => {
    const g = traceScene(ground, tx('vertical'), rx('vertical'), f).paths.find((p) => p.id === 'R:walls[0]')!;
    expect(Math.abs(g.lengthM - ref.d2)).toBeLessThan(1e-9); // numpy closed form (C)
    expect(Math.abs(g.delayS - ref.tau2)).toBeLessThan(1e-18);
    expect(g.aodDeg[1]).toBeCloseTo(ref.elevDeg, 10);
    expect(g.aoaDeg[1]).toBeCloseTo(ref.elevDeg, 10);
    expect(g.aodDeg[0]).toBeCloseTo(0, 10);
    expect(g.aoaDeg[0]).toBeCloseTo(180, 10);
    expect(g.aoaLocalDeg[0]).toBeCloseTo(0, 8); // the receiver looks back along its boresight
    expect(g.interactions[0]!.point[0]).toBeCloseTo(ref.xSpec, 10);
  });

  it('gives the two-ray field for vertical (Gamma_V) and horizontal (Gamma_H) polarisation', () => {
    for (const [pol, gamma, e] of [
      ['vertical', ref.gv, ref.ev],
      ['horizontal', ref.gh, ref.eh],
    ] as const) {
      const paths = traceScene(ground, tx(pol), rx(pol), f).paths;
      const g = paths.find((p) => p.id === 'R:walls[0]')!;
      // polarisation factor = ground reflection coefficient (the horizontal receiver faces back, so its +y is global -y: sign -1 for both rays)
      const sign = pol === 'horizontal' ? -1 : 1;
      expect(Math.hypot(sign * g.polarizationFactor[0] - gamma[0], sign * g.polarizationFactor[1] - gamma[1])).toBeLessThan(1e-12);
      const sum = paths.reduce<[number, number]>((s, p) => [s[0] + p.amplitude[0], s[1] + p.amplitude[1]], [0, 0]);
      expect(Math.hypot(sign * sum[0] - e[0], sign * sum[1] - e[1])).toBeLessThan(1e-9 * Math.hypot(e[0], e[1]));
    }
  });
});

describe('two-ray far field over a perfect conductor', () => {
  it('tends to (h1 h2 / d^2)^2 for horizontal polarisation (Rappaport eq. 4.52, M)', () => {
    // Gamma_TE = -1 exactly for metal; the approximation holds to O((k h1 h2 / d)^2) = 0.7 % here
    const f = 1e9,
      h1 = 10,
      h2 = 2,
      D = 10_000;
    const metal: Scene = {
      walls: [
        {
          vertices: [
            [-1e5, -1e5, 0],
            [1e5, -1e5, 0],
            [1e5, 1e5, 0],
            [-1e5, 1e5, 0],
          ],
          material: 'metal',
        },
      ],
    };
    const paths = traceScene(metal, term([0, 0, h1], { polarization: 'horizontal' }), term([D, 0, h2], { polarization: 'horizontal' }), f).paths;
    expect(paths.map((p) => p.id).sort()).toEqual(['R:walls[0]', 'los']);
    const sum = paths.reduce<[number, number]>((s, p) => [s[0] + p.amplitude[0], s[1] + p.amplitude[1]], [0, 0]);
    const power = sum[0] ** 2 + sum[1] ** 2;
    const approx = ((h1 * h2) / (D * D)) ** 2;
    expect(Math.abs(power / approx - 1)).toBeLessThan(0.01);
  });
});

describe('free-space loss against ITU-R P.525', () => {
  it('matches 20 log10(4 pi d / lambda) exactly and the rounded 32.4 dB form to 0.05 dB', () => {
    // check-values.md (C): 101.391 / 88.011 / 92.448 dB; rounded-form values 101.343 / 87.963 / 92.400 (V secondary)
    const cases: [number, number, number, number][] = [
      [28e9, 100, 101.391, 101.343],
      [60e9, 10, 88.011, 87.963],
      [1e9, 1000, 92.448, 92.4],
    ];
    for (const [f, d, exact3, rounded] of cases) {
      const p = traceScene({}, term([0, 0, 0]), term([d, 0, 0]), f).paths[0]!;
      const exact = 20 * Math.log10((4 * Math.PI * d * f) / SPEED_OF_LIGHT); // ITU-R P.525 eq. (exact form) (V)
      expect(Math.abs(-p.powerDb - exact)).toBeLessThan(1e-9);
      expect(Math.abs(-p.powerDb - exact3)).toBeLessThan(5e-4);
      const p525 = 32.4 + 20 * Math.log10(f / 1e6) + 20 * Math.log10(d / 1000); // ITU-R P.525 rounded form (V)
      expect(Math.abs(p525 - rounded)).toBeLessThan(5e-4);
      expect(Math.abs(-p.powerDb - p525)).toBeLessThan(0.05);
    }
  });
});

describe.skipIf(!py)('Fresnel with the P.2040 model against numpy', () => {
  it('agrees on complex Gamma_TE and Gamma_TM of a traced reflection at several angles', () => {
    // numpy evaluation of the Fresnel equations (check-values.md V form) with P.2040-3 Table 3 (V) coefficients
    const heights = [0.3, 1, 3, 10];
    const ref = pythonJson<[number, number, number, number][]>(
      String.raw`
import json, sys
import numpy as np
f = 60e9; eps0 = 8.8541878128e-12; fg = f / 1e9
eta = 6.31 - 1j * 0.0036 * fg**1.3394 / (2 * np.pi * f * eps0)
out = []
for h in json.loads(sys.argv[1]):
    t = np.arctan2(10.0, 2 * h)  # incidence from the normal: tx and rx h above the wall, 10 m apart
    r = np.sqrt(eta - np.sin(t)**2)
    te = (np.cos(t) - r) / (np.cos(t) + r); tm = (eta * np.cos(t) - r) / (eta * np.cos(t) + r)
    out.append([te.real, te.imag, tm.real, tm.imag])
print(json.dumps(out))`,
      [JSON.stringify(heights)],
    );
    const glass: Scene = {
      walls: [
        {
          vertices: [
            [-50, 0, -50],
            [50, 0, -50],
            [50, 0, 50],
            [-50, 0, 50],
          ],
          material: 'glass',
        },
      ],
    };
    heights.forEach((h, i) => {
      const g = traceScene(glass, term([0, h, 0]), term([10, h, 0]), 60e9).paths.find((p) => p.kind === 'reflection')!;
      const c = g.interactions[0]!.coefficients!;
      const [teRe, teIm, tmRe, tmIm] = ref[i]!;
      expect(Math.hypot(c.te[0] - teRe, c.te[1] - teIm)).toBeLessThan(1e-12);
      expect(Math.hypot(c.tm[0] - tmRe, c.tm[1] - tmIm)).toBeLessThan(1e-12);
      // vertical polarisation on a vertical wall with horizontal propagation is TE (perpendicular to the plane of incidence)
      expect(Math.hypot(g.polarizationFactor[0] - teRe, g.polarizationFactor[1] - teIm)).toBeLessThan(1e-12);
    });
  });
});

describe('bistatic radar equation', () => {
  it('gives power lambda^2 sigma / ((4 pi)^3 d1^2 d2^2) for a point scatterer', () => {
    // Skolnik, Introduction to Radar Systems, bistatic radar equation (M); docs/conventions.md formula
    const f = 28e9,
      lambda = SPEED_OF_LIGHT / f,
      sigma = 3.5;
    const tx: Vec3 = [0, 0, 1],
      rx: Vec3 = [30, 5, 1],
      s: Vec3 = [12, 20, 1];
    const p = traceScene({ scatterers: [{ position: s, rcsM2: sigma }], lineOfSight: false }, term(tx), term(rx), f).paths[0]!;
    const d1 = Math.hypot(12, 20),
      d2 = Math.hypot(18, 15);
    const expected = (lambda ** 2 * sigma) / ((4 * Math.PI) ** 3 * d1 ** 2 * d2 ** 2);
    expect(p.id).toBe('S:scatterers[0]');
    expect(Math.abs(10 ** (p.powerDb / 10) / expected - 1)).toBeLessThan(1e-12);
    expect(p.lengthM).toBeCloseTo(d1 + d2, 12);
  });
});

describe('knife-edge loss of a blocker edge (ITU-R P.526)', () => {
  it('gives J(0) ~ 6 dB when the edge touches the line and J(v) for an edge at height h', () => {
    // P.526 section 4.1 (V formula): v = h sqrt(2 d / (lambda d1 d2)); J(0) = 6.03 dB, J(1) = 13.93 dB (C)
    const f = 28e9,
      lambda = SPEED_OF_LIGHT / f,
      d = 40;
    const tx = term([0, 0, 2]),
      rx = term([d, 0, 2]);
    const wall = (top: number): Scene => ({ blockers: [{ shape: 'box', min: [19.95, -30, 0], max: [20.05, 30, top] }] });
    expect(traceScene(wall(2), tx, rx, f).paths[0]!.blockageDb).toBeCloseTo(6.0328522086, 8);
    const h = 1 / Math.sqrt((2 * d) / (lambda * 20 * 20)); // v = 1
    expect(traceScene(wall(2 + h), tx, rx, f).paths[0]!.blockageDb).toBeCloseTo(13.925728935, 8);
    expect(traceScene(wall(2 - 2 * h), tx, rx, f).paths[0]!.blockageDb).toBe(0); // v = -2 < -0.78
  });
});
