/**
 * The wavefront choice and the near-field line of sight, beside the array response.
 * References: the Fraunhofer (far-field) distance 2 D^2 / lambda (Balanis, Antenna Theory, 3rd
 * ed., sec. 2.2.4; IEEE Std 145) — M; the spherical phase of each element is its exact distance
 * (docs/conventions.md, "Array response") and tends to the plane-wave phase as the range grows
 * (the Fraunhofer approximation, error below k0 D^2 / (8 r)) — M, checked numerically here.
 */
import { describe, expect, it } from 'vitest';
import { AntennaArray } from '../src/array.js';
import { SPEED_OF_LIGHT } from '../src/constants.js';
import type { Vec3 } from '../src/vec3.js';
import { fraunhoferDistanceM, nearFieldLineOfSightProducts, usesSphericalWavefront, waveResponse } from '../src/wavefront.js';

const maxDiff = (a: ArrayLike<number>, b: ArrayLike<number>): number => {
  expect(a.length).toBe(b.length);
  let d = 0;
  for (let i = 0; i < a.length; i++) d = Math.max(d, Math.abs(a[i]! - b[i]!));
  return d;
};

describe('wavefront choice', () => {
  const fc = 30e9;
  const lambda = SPEED_OF_LIGHT / fc;
  const ula = AntennaArray.ula(64, 0.005); // D = 63 x 5 mm = 0.315 m

  it('Fraunhofer distance 2 D^2 / lambda (Balanis sec. 2.2.4, M)', () => {
    expect(fraunhoferDistanceM(ula, fc)).toBeCloseTo((2 * 0.315 ** 2) / lambda, 12);
    expect(fraunhoferDistanceM(ula, fc)).toBeCloseTo(19.858738, 5); // C: 2 * 0.315**2 / (299792458 / 30e9)
    // A UPA's aperture is its diagonal: 4 x 8 at 2.5 mm spans hypot(3, 7) x 2.5 mm.
    const upa = AntennaArray.upa(4, 8, 0.0025);
    expect(fraunhoferDistanceM(upa, fc)).toBeCloseTo((2 * (Math.hypot(3, 7) * 0.0025) ** 2) / lambda, 12);
    expect(fraunhoferDistanceM(AntennaArray.ula(1, 0), fc)).toBe(0); // one element: no aperture, always far field
  });

  it('auto is spherical strictly inside the Fraunhofer distance; plane is the default', () => {
    const r = fraunhoferDistanceM(ula, fc);
    expect(usesSphericalWavefront(ula, 'auto', r * (1 - 1e-9), fc)).toBe(true);
    expect(usesSphericalWavefront(ula, 'auto', r, fc)).toBe(false);
    expect(usesSphericalWavefront(ula, 'auto', r * (1 + 1e-9), fc)).toBe(false);
    expect(usesSphericalWavefront(ula, 'spherical', 1e6, fc)).toBe(true);
    expect(usesSphericalWavefront(ula, 'plane', 0.01, fc)).toBe(false);
    expect(usesSphericalWavefront(ula, undefined, 0.01, fc)).toBe(false);
  });

  it('waveResponse: exact element distances when spherical, the plane-wave response otherwise', () => {
    const a = AntennaArray.upa(8, 16, 0.005, { yawDeg: 20, pitchDeg: -10 });
    const u: Vec3 = [0.6, 0.64, 0.48]; // unit: 0.36 + 0.4096 + 0.2304
    const k0 = (2 * Math.PI * fc) / SPEED_OF_LIGHT;
    const L = 0.5; // inside 2 D^2 / lambda = 1.372 m for D = hypot(7, 15) x 5 mm
    expect(usesSphericalWavefront(a, 'auto', L, fc)).toBe(true);
    const sph = waveResponse(new Float64Array(2 * a.size), a, 'auto', u, L, k0, fc);
    const p = a.globalOffsets;
    const g = a.elementAmplitude(u);
    for (let n = 0; n < a.size; n++) {
      const d = Math.hypot(u[0] * L - p[3 * n]!, u[1] * L - p[3 * n + 1]!, u[2] * L - p[3 * n + 2]!);
      expect(sph[2 * n]).toBeCloseTo(g * Math.cos(-k0 * (d - L)), 12);
      expect(sph[2 * n + 1]).toBeCloseTo(g * Math.sin(-k0 * (d - L)), 12);
    }
    expect(maxDiff(waveResponse(new Float64Array(2 * a.size), a, 'auto', u, 50, k0, fc), a.response(new Float64Array(2 * a.size), u, k0))).toBe(0);
    // A zero length has no spherical source: the plane-wave response is used.
    expect(maxDiff(waveResponse(new Float64Array(2 * a.size), a, 'spherical', u, 0, k0, fc), a.response(new Float64Array(2 * a.size), u, k0))).toBe(0);
  });
});

describe('near-field line of sight (element-pair distances)', () => {
  const fc = 28e9;
  const k0 = (2 * Math.PI * fc) / SPEED_OF_LIGHT;
  const rx = AntennaArray.ula(8, 0.0054, { yawDeg: 180 });
  const tx = AntennaArray.upa(2, 4, 0.0054, { yawDeg: 10 });
  const arrival: Vec3 = [-0.8, 0.6, 0];

  it('each entry is g exp(-j k0 (|q_m - p_n| - d)) of the pair distance', () => {
    const d0 = 0.3;
    const out = nearFieldLineOfSightProducts(new Float64Array(2 * rx.size * tx.size), 0, rx, tx, arrival, d0, k0);
    const g = rx.elementAmplitude(arrival) * tx.elementAmplitude([0.8, -0.6, 0]);
    const q = rx.globalOffsets,
      p = tx.globalOffsets;
    for (let m = 0; m < rx.size; m++) {
      for (let n = 0; n < tx.size; n++) {
        const d = Math.hypot(arrival[0] * d0 + p[3 * n]! - q[3 * m]!, arrival[1] * d0 + p[3 * n + 1]! - q[3 * m + 1]!, p[3 * n + 2]! - q[3 * m + 2]!);
        expect(out[2 * (m * tx.size + n)]).toBeCloseTo(g * Math.cos(-k0 * (d - d0)), 12);
        expect(out[2 * (m * tx.size + n) + 1]).toBeCloseTo(g * Math.sin(-k0 * (d - d0)), 12);
      }
    }
  });

  it('writes at the offset and tends to r_rx(u) r_tx(-u)^T far away (Fraunhofer limit)', () => {
    const d0 = 2000;
    const offset = 6;
    const out = nearFieldLineOfSightProducts(new Float64Array(offset + 2 * rx.size * tx.size), offset, rx, tx, arrival, d0, k0);
    expect([...out.subarray(0, offset)]).toEqual([0, 0, 0, 0, 0, 0]);
    const r = rx.response(new Float64Array(2 * rx.size), arrival, k0);
    const t = tx.response(new Float64Array(2 * tx.size), [0.8, -0.6, 0], k0);
    const outer = new Float64Array(2 * rx.size * tx.size);
    for (let m = 0; m < rx.size; m++) {
      for (let n = 0; n < tx.size; n++) {
        outer[2 * (m * tx.size + n)] = r[2 * m]! * t[2 * n]! - r[2 * m + 1]! * t[2 * n + 1]!;
        outer[2 * (m * tx.size + n) + 1] = r[2 * m]! * t[2 * n + 1]! + r[2 * m + 1]! * t[2 * n]!;
      }
    }
    // Phase error of the plane approximation: at most k0 (D_rx + D_tx)^2 / (2 d0).
    const D = rx.aperture() + tx.aperture();
    const bound = (k0 * D * D) / (2 * d0);
    const err = maxDiff(out.subarray(offset), outer);
    expect(err).toBeLessThan(bound);
    expect(err).toBeGreaterThan(0);
  });
});
