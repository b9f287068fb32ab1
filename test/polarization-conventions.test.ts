/**
 * The polarisation conventions of docs/conventions.md ("Polarisation") checked against the code:
 * the local axes of vertical, horizontal and slantDeg; the (theta_hat, phi_hat) basis; the TE/TM
 * sign convention of the Fresnel coefficients; what the polarimetric transfer maps.
 * References: the Fresnel coefficients of a half-space (ITU-R P.2040, sec. 2.2; Balanis, Advanced
 * Engineering Electromagnetics, 2nd ed., sec. 5.3 — M): normal incidence (1 - sqrt(eta)) /
 * (1 + sqrt(eta)), the Brewster angle atan(sqrt(eta)) where the TM (parallel) coefficient
 * vanishes, a perfect conductor reversing the tangential field (E_r = -E_i at normal
 * incidence) — M. The reflected field of a ground bounce is computed here from those formulas
 * in the basis the conventions state, independently of the tracer's code path.
 */
import { describe, expect, it } from 'vitest';
import {
  directionBasis,
  fresnel,
  polarizationVectorLocal,
  reflectField,
  rotationFromOrientation,
  surfaceCoefficients,
  terminalFieldVector,
  traceScene,
  type Scene,
  type Vec3,
} from '@pathweave/geometry';

const dot = (a: ArrayLike<number>, b: ArrayLike<number>): number => a[0]! * b[0]! + a[1]! * b[1]! + a[2]! * b[2]!;
const cross = (a: ArrayLike<number>, b: ArrayLike<number>): Vec3 => [
  a[1]! * b[2]! - a[2]! * b[1]!,
  a[2]! * b[0]! - a[0]! * b[2]!,
  a[0]! * b[1]! - a[1]! * b[0]!,
];
const unit = (a: Vec3): Vec3 => {
  const n = Math.hypot(...a);
  return [a[0] / n, a[1] / n, a[2] / n];
};

describe('terminal polarisation in the array frame', () => {
  it('vertical is local +z, horizontal local +y, slantDeg s is [0, sin s, cos s] from vertical towards +y', () => {
    expect(polarizationVectorLocal('vertical')).toEqual([0, 0, 1]);
    expect(polarizationVectorLocal('horizontal')).toEqual([0, 1, 0]);
    const s = polarizationVectorLocal({ slantDeg: 30 });
    expect(s[0]).toBe(0);
    expect(s[1]).toBeCloseTo(0.5, 15);
    expect(s[2]).toBeCloseTo(Math.sqrt(3) / 2, 15);
    expect(polarizationVectorLocal({ slantDeg: -30 })[1]).toBeCloseTo(-0.5, 15);
  });

  it('seen from the front, a positive slant leans to the right: towards +y, the right of an observer on the boresight facing the array', () => {
    // Array at the origin, boresight +x; observer at +x looking along -x, up +z: right = forward x up.
    const right = cross([-1, 0, 0], [0, 0, 1]);
    expect(right.map((v) => v + 0)).toEqual([0, 1, 0]);
    const field = terminalFieldVector([0, 0, 0], polarizationVectorLocal({ slantDeg: 45 }), rotationFromOrientation({}), [1, 0, 0]);
    expect(dot(field, right)).toBeCloseTo(Math.SQRT1_2, 12);
    expect(field[2]).toBeCloseTo(Math.SQRT1_2, 12);
    // Turned by yaw 90 (boresight +y), local +y is global -x: still the observer's right.
    const turned = terminalFieldVector([0, 0, 0], polarizationVectorLocal('horizontal'), rotationFromOrientation({ yawDeg: 90 }), [0, 1, 0]);
    expect(dot(turned, cross([0, -1, 0], [0, 0, 1]))).toBeCloseTo(1, 12);
  });

  it('the basis is theta_hat upward and phi_hat = [-sin phi, cos phi, 0]', () => {
    const b = directionBasis(new Float64Array(6), unit([1, 1, Math.SQRT2])); // azimuth 45, elevation 45
    expect(b[0]).toBeCloseTo(-0.5, 12);
    expect(b[1]).toBeCloseTo(-0.5, 12);
    expect(b[2]).toBeCloseTo(Math.SQRT1_2, 12);
    expect(b[3]).toBeCloseTo(-Math.SQRT1_2, 12);
    expect(b[4]).toBeCloseTo(Math.SQRT1_2, 12);
    expect(b[5]).toBe(0);
  });
});

describe('Fresnel sign convention (TE perpendicular, TM in the plane of incidence)', () => {
  it('normal incidence: TE = (1 - sqrt(eta)) / (1 + sqrt(eta)) and TM = -TE; Brewster: TM = 0 (textbook, M)', () => {
    const c0 = fresnel([4, 0], 0);
    expect(c0.te[0]).toBeCloseTo(-1 / 3, 12);
    expect(c0.tm[0]).toBeCloseTo(1 / 3, 12);
    const b = fresnel([4, 0], Math.atan(2));
    expect(Math.hypot(...b.tm)).toBeLessThan(1e-12);
    expect(Math.hypot(...b.te)).toBeGreaterThan(0.5);
  });

  it('a perfect conductor is TE -1, TM +1 and reverses any field at normal incidence; a fixed loss is -A for both', () => {
    const pec = surfaceCoefficients({ kind: 'conductor' }, 1);
    expect(pec).toEqual({ te: [-1, 0], tm: [1, 0] });
    const e = Float64Array.of(0.6, 0.8, 0, 0, 0.3, 0); // any field across the normal z
    const r = reflectField(new Float64Array(6), e, [0, 0, -1], [0, 0, 1], [0, 0, 1], pec);
    for (let i = 0; i < 6; i++) expect(r[i]).toBeCloseTo(-e[i]!, 12);
    const fixed = surfaceCoefficients({ kind: 'fixed', amplitude: 0.5 }, 1);
    expect(fixed).toEqual({ te: [-0.5, 0], tm: [-0.5, 0] });
  });

  it('a ground bounce: T maps departure-basis components to arrival-basis components as E_r = G_TE (E.s) s + G_TM (E.p_i) p_r', () => {
    const eta = 5;
    const scene: Scene = {
      walls: [
        {
          vertices: [
            [-50, -50, 0],
            [50, -50, 0],
            [50, 50, 0],
            [-50, 50, 0],
          ],
          material: { relativePermittivity: eta, conductivitySpm: 0 },
        },
      ],
    };
    const tx: Vec3 = [0, 1, 6],
      rx: Vec3 = [12, -2, 1.5];
    const path = traceScene(scene, { position: tx }, { position: rx }, 28e9).paths.find((p) => p.kind === 'reflection')!;
    const P = path.interactions[0]!.point;
    const ki = unit([P[0] - tx[0], P[1] - tx[1], P[2] - tx[2]]);
    const kr = unit([rx[0] - P[0], rx[1] - P[1], rx[2] - P[2]]);
    const n: Vec3 = [0, 0, 1];
    const cosT = -dot(ki, n);
    const root = Math.sqrt(eta - (1 - cosT * cosT));
    const gTE = (cosT - root) / (cosT + root),
      gTM = (eta * cosT - root) / (eta * cosT + root); // P.2040 / textbook, lossless
    const s = unit(cross(ki, n));
    const pi = cross(ki, s),
      pr = cross(kr, s);
    const dep = directionBasis(new Float64Array(6), path.departure);
    const arr = directionBasis(new Float64Array(6), path.arrival);
    // Columns of T: the reflected field of a unit theta, then a unit phi, leaving the transmitter.
    for (const [col, e] of [dep.subarray(0, 3), dep.subarray(3, 6)].entries()) {
      const a = gTE * dot(e, s),
        b = gTM * dot(e, pi);
      const er: Vec3 = [a * s[0] + b * pr[0], a * s[1] + b * pr[1], a * s[2] + b * pr[2]];
      const row0 = dot(er, arr.subarray(0, 3)),
        row1 = dot(er, arr.subarray(3, 6));
      expect(path.polarimetric[0][col]![0]).toBeCloseTo(row0, 12);
      expect(path.polarimetric[1][col]![0]).toBeCloseTo(row1, 12);
      expect(path.polarimetric[0][col]![1]).toBeCloseTo(0, 12);
      expect(path.polarimetric[1][col]![1]).toBeCloseTo(0, 12);
    }
    // The check can fail: theta_hat lies in the plane of incidence (TM) and phi_hat across it
    // (TE), and the two coefficients differ here, so swapping TE and TM or the sign of TM would not pass.
    const tt = path.polarimetric[0][0][0],
      pp = path.polarimetric[1][1][0];
    expect(Math.abs(Math.abs(tt) - Math.abs(pp))).toBeGreaterThan(0.1);
    expect(Math.abs(tt)).toBeGreaterThan(0.05);
  });

  it('a horizontal line of sight has T = [[1, 0], [0, -1]] (phi_hat reversed at the arrival)', () => {
    const los = traceScene({ walls: [] }, { position: [0, 0, 0] }, { position: [10, 0, 0] }, 28e9).paths[0]!;
    expect(los.polarimetric).toEqual([
      [
        [1, 0],
        [0, 0],
      ],
      [
        [0, 0],
        [-1, 0],
      ],
    ]);
  });
});
