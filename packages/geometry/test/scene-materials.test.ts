import { describe, expect, it } from 'vitest';
import {
  brewsterAngle,
  cabs,
  fresnel,
  fresnelCos,
  knifeEdgeLossDb,
  fresnelParameter,
  p2040Permittivity,
  P2040_MATERIALS,
  reflectField,
  resolveSurface,
  surfaceCoefficients,
  gasAmplitudeFactor,
  polarizationVectorLocal,
  terminalFieldVector,
  directionBasis,
  rotationFromOrientation,
  identity,
} from '../src/index.js';

const DEG = Math.PI / 180;

describe('ITU-R P.2040 materials', () => {
  it('uses the Table 3 coefficients', () => {
    // ITU-R P.2040-3 Table 3 (V, secondary copy in check-values.md)
    expect(P2040_MATERIALS.concrete).toMatchObject({ a: 5.24, b: 0, c: 0.0462, d: 0.7822 });
    expect(P2040_MATERIALS.glass).toMatchObject({ a: 6.31, b: 0, c: 0.0036, d: 1.3394 });
    expect(P2040_MATERIALS.wood).toMatchObject({ a: 1.99, b: 0, c: 0.0047, d: 1.0718 });
    expect(P2040_MATERIALS.plasterboard).toMatchObject({ a: 2.73, b: 0, c: 0.0085, d: 0.9395 });
    expect(P2040_MATERIALS.brick).toMatchObject({ a: 3.91, b: 0, c: 0.0238, d: 0.16 });
  });

  it('gives concrete at 28 GHz: sigma 0.62605 S/m, eta 5.24 - 0.4019j', () => {
    // check-values.md, P.2040 derived (C, tolerance 1e-5)
    const r = p2040Permittivity('concrete', 28e9);
    expect(r.conductivitySpm).toBeCloseTo(0.62605, 5);
    expect(r.eta[0]).toBeCloseTo(5.24, 10);
    expect(r.eta[1]).toBeCloseTo(-0.4019, 4);
    // 17.98 sigma / f_GHz form of the Recommendation (V form), to its 4 digits
    expect(Math.abs(r.eta[1] + (17.98 * r.conductivitySpm) / 28)).toBeLessThan(3e-4);
    expect(r.warning).toBeUndefined();
  });

  it('warns (does not throw) outside the validated range', () => {
    const r = p2040Permittivity('glass', 60e9);
    expect(r.warning).toBe('material "glass" is validated for 1-40 GHz, got 60 GHz; the ITU-R P.2040 fit is used outside its range');
    expect(resolveSurface({ material: 'brick' }, 0.5e9).warning).toMatch(/validated for 1-40 GHz, got 0.5 GHz/);
  });

  it('resolves metal, custom and fixed-loss surfaces', () => {
    expect(resolveSurface({ material: 'metal' }, 28e9).surface).toEqual({ kind: 'conductor' });
    const custom = resolveSurface({ material: { relativePermittivity: 4, conductivitySpm: 0 } }, 28e9).surface;
    expect(custom).toEqual({ kind: 'dielectric', eta: [4, -0] });
    const fixed = resolveSurface({ material: 'glass', reflectionLossDb: 6 }, 28e9).surface;
    expect(fixed.kind).toBe('fixed');
    expect((fixed as { amplitude: number }).amplitude).toBeCloseTo(10 ** (-6 / 20), 12);
    const c = surfaceCoefficients(fixed, 0.3);
    expect(c.te[0]).toBeCloseTo(-0.501187, 6); // amplitude 10^(-6/20), phase pi (documented)
    expect(c.tm[0]).toBeCloseTo(-0.501187, 6);
    expect(() => resolveSurface({ material: 'steel' as 'metal' }, 28e9)).toThrow(
      'resolveSurface(): material must be one of concrete, glass, wood, plasterboard, brick, metal or { relativePermittivity, conductivitySpm }, got "steel"',
    );
  });
});

describe('Fresnel coefficients', () => {
  it('matches the lossless eta = 4 values', () => {
    // check-values.md, Fresnel (C): 45 degrees TE -0.451416, TM 0.203777, |Gamma(0)| = 1/3
    const c45 = fresnel([4, 0], 45 * DEG);
    expect(c45.te[0]).toBeCloseTo(-0.451416, 6);
    expect(c45.tm[0]).toBeCloseTo(0.203777, 6);
    const c0 = fresnel([4, 0], 0);
    expect(cabs(c0.te)).toBeCloseTo(1 / 3, 12);
    expect(cabs(c0.tm)).toBeCloseTo(1 / 3, 12);
  });

  it('has the stated TM sign convention: Gamma_TM(0) = -Gamma_TE(0), zero at Brewster', () => {
    const c0 = fresnel([4, 0], 0);
    expect(c0.tm[0]).toBeCloseTo(-c0.te[0], 12);
    expect(c0.te[0]).toBeCloseTo(-1 / 3, 12);
    // Brewster angle 63.4349 degrees, |Gamma_TE| = 0.6 there (check-values.md, C)
    const b = brewsterAngle(4);
    expect(b / DEG).toBeCloseTo(63.4349, 4);
    const cb = fresnel([4, 0], b);
    expect(cabs(cb.tm)).toBeLessThan(1e-12);
    expect(cabs(cb.te)).toBeCloseTo(0.6, 12);
  });

  it('matches the P.2040 derived values at 28 and 60 GHz to 1e-5', () => {
    // check-values.md, P.2040 derived (C, tolerance 1e-5)
    const concrete = p2040Permittivity('concrete', 28e9).eta;
    expect(Math.abs(cabs(fresnel(concrete, 0).te) - 0.39301)).toBeLessThan(1e-5);
    expect(Math.abs(cabs(fresnel(concrete, 45 * DEG).te) - 0.51075)).toBeLessThan(1e-5);
    expect(Math.abs(cabs(fresnel(concrete, 45 * DEG).tm) - 0.26087)).toBeLessThan(1e-5);
    const glass = p2040Permittivity('glass', 60e9).eta;
    expect(Math.abs(cabs(fresnel(glass, 0).te) - 0.43081)).toBeLessThan(1e-5);
    expect(Math.abs(cabs(fresnel(glass, 45 * DEG).te) - 0.54664)).toBeLessThan(1e-5);
    expect(Math.abs(cabs(fresnel(glass, 45 * DEG).tm) - 0.29882)).toBeLessThan(1e-5);
    const wood = p2040Permittivity('wood', 28e9).eta;
    expect(Math.abs(cabs(fresnel(wood, 0).te) - 0.17124)).toBeLessThan(1e-5);
  });

  it('tends to a perfect conductor as eta grows (TE -1, TM +1 in this convention)', () => {
    const c = fresnelCos([1e12, -1e12], Math.cos(30 * DEG));
    expect(c.te[0]).toBeCloseTo(-1, 5);
    expect(c.tm[0]).toBeCloseTo(1, 5);
    expect(surfaceCoefficients({ kind: 'conductor' }, 0.5)).toEqual({ te: [-1, 0], tm: [1, 0] });
  });

  it('reflectField: a perfect conductor cancels the tangential field (textbook boundary condition)', () => {
    const t = 35 * DEG;
    const kIn: [number, number, number] = [Math.sin(t), 0.3, -Math.cos(t)];
    const nk = Math.hypot(...kIn);
    const ki = kIn.map((x) => x / nk) as [number, number, number];
    const kr: [number, number, number] = [ki[0], ki[1], -ki[2]];
    const n: [number, number, number] = [0, 0, 1];
    // an arbitrary complex field perpendicular to ki
    const a: [number, number, number] = [0.2, -0.7, 0.4];
    const ad = a[0] * ki[0] + a[1] * ki[1] + a[2] * ki[2];
    const e = Float64Array.of(a[0] - ad * ki[0], a[1] - ad * ki[1], a[2] - ad * ki[2], 0.1 * ki[1], -0.1 * ki[0], 0);
    const out = reflectField(new Float64Array(6), e, ki, kr, n, surfaceCoefficients({ kind: 'conductor' }, Math.abs(ki[2])));
    for (const k of [0, 1, 3, 4]) expect(Math.abs(e[k]! + out[k]!)).toBeLessThan(1e-12); // x, y tangential, re and im
    // the reflected field is transverse to kr
    expect(Math.abs(out[0]! * kr[0] + out[1]! * kr[1] + out[2]! * kr[2])).toBeLessThan(1e-12);
  });

  it('reflectField at normal incidence reflects every polarisation by Gamma_TE', () => {
    const c = fresnel([4, 0], 0);
    const e = Float64Array.of(0.6, 0.8, 0, 0, 0, 0);
    const out = reflectField(new Float64Array(6), e, [0, 0, -1], [0, 0, 1], [0, 0, 1], c);
    expect(out[0]).toBeCloseTo(-0.6 / 3, 12);
    expect(out[1]).toBeCloseTo(-0.8 / 3, 12);
  });
});

describe('ITU-R P.526 knife edge', () => {
  it('gives about 6 dB at v = 0 and the formula elsewhere', () => {
    // ITU-R P.526 section 4.1: J(0) ~ 6 dB (V); J(v) from the P.526 approximation (C, scipy-free numpy evaluation)
    expect(knifeEdgeLossDb(0)).toBeCloseTo(6.0, 1);
    expect(knifeEdgeLossDb(0)).toBeCloseTo(6.0328522086, 9);
    expect(knifeEdgeLossDb(-0.5)).toBeCloseTo(1.9592497062, 9);
    expect(knifeEdgeLossDb(1)).toBeCloseTo(13.925728935, 9);
    expect(knifeEdgeLossDb(2)).toBeCloseTo(19.0428595136, 9);
    expect(knifeEdgeLossDb(3)).toBeCloseTo(22.4159538316, 9);
    expect(knifeEdgeLossDb(-0.78)).toBe(0);
    expect(knifeEdgeLossDb(-2)).toBe(0);
    // nearly continuous at the cut-off -0.78 (P.526 approximation, C)
    expect(knifeEdgeLossDb(-0.7799)).toBeLessThan(0.01);
  });

  it('computes v = h sqrt(2/lambda (1/d1 + 1/d2))', () => {
    expect(fresnelParameter(1, 100, 100, 0.01)).toBeCloseTo(2, 12);
    expect(() => fresnelParameter(1, 0, 1, 1)).toThrow('fresnelParameter(): d1M and d2M must be > 0, got 0 and 1');
  });
});

describe('gas absorption and polarisation vectors', () => {
  it('applies a given dB/km over the length', () => {
    expect(gasAmplitudeFactor(1000, 20)).toBeCloseTo(0.1, 12);
    expect(20 * Math.log10(gasAmplitudeFactor(250, 14.77832))).toBeCloseTo(-14.77832 / 4, 10);
    expect(() => gasAmplitudeFactor(1, -1)).toThrow('gasAmplitudeFactor(): gasAttenuationDbPerKm must be a finite number >= 0, got -1');
  });

  it('maps vertical, horizontal and slant to local vectors', () => {
    expect(polarizationVectorLocal('vertical')).toEqual([0, 0, 1]);
    expect(polarizationVectorLocal('horizontal')).toEqual([0, 1, 0]);
    const s = polarizationVectorLocal({ slantDeg: 45 });
    expect(s[1]).toBeCloseTo(Math.SQRT1_2, 15);
    expect(s[2]).toBeCloseTo(Math.SQRT1_2, 15);
    expect(() => polarizationVectorLocal('circular' as 'vertical')).toThrow(/polarizationVectorLocal\(\): polarization must be/);
  });

  it('projects the field perpendicular to the direction, with the boresight fallback', () => {
    const e = terminalFieldVector([0, 0, 0], [0, 0, 1], identity(), [Math.SQRT1_2, 0, Math.SQRT1_2]);
    expect(e[0]).toBeCloseTo(-Math.SQRT1_2, 15);
    expect(e[2]).toBeCloseTo(Math.SQRT1_2, 15);
    // straight up along a vertical polarisation: boresight (local +x rotated by yaw 90 = global +y)
    const f = terminalFieldVector([0, 0, 0], [0, 0, 1], rotationFromOrientation({ yawDeg: 90 }), [0, 0, 1]);
    expect(f[1]).toBeCloseTo(1, 15);
  });

  it('builds an orthonormal (theta, phi) basis transverse to u', () => {
    for (const u of [
      [1, 0, 0],
      [0.3, -0.5, 0.81],
      [0, 0, 1],
      [-0.6, 0, -0.8],
    ] as [number, number, number][]) {
      const n = Math.hypot(...u);
      const v = u.map((x) => x / n) as [number, number, number];
      const b = directionBasis(new Float64Array(6), v);
      const t = [b[0]!, b[1]!, b[2]!],
        p = [b[3]!, b[4]!, b[5]!];
      const dot = (a: number[], c: number[]): number => a[0]! * c[0]! + a[1]! * c[1]! + a[2]! * c[2]!;
      expect(dot(t, t)).toBeCloseTo(1, 14);
      expect(dot(p, p)).toBeCloseTo(1, 14);
      expect(Math.abs(dot(t, p)) + Math.abs(dot(t, v)) + Math.abs(dot(p, v))).toBeLessThan(1e-14);
    }
  });
});
