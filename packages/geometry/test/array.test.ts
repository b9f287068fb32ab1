import { describe, expect, it } from 'vitest';
import { AntennaArray } from '../src/array.js';
import { degFromVector, unitFromDeg } from '../src/direction.js';
import { sectorElementGainDbi } from '../src/pattern.js';
import { applyRotation, rotationFromOrientation } from '../src/rotation.js';
import type { Vec3 } from '../src/vec3.js';

const close = (a: ArrayLike<number>, b: ArrayLike<number>, tol = 1e-12): void => {
  expect(a.length).toBe(b.length);
  for (let i = 0; i < a.length; i++) expect(Math.abs(a[i]! - b[i]!)).toBeLessThan(tol);
};

describe('orientation (docs/conventions.md: R = Rz(yaw) Ry(pitch) Rx(roll))', () => {
  it('tilts the boresight down for a positive pitch', () => {
    const b = applyRotation([0, 0, 0], rotationFromOrientation({ pitchDeg: 30 }), [1, 0, 0]);
    const [az, el] = degFromVector(b);
    expect(az).toBeCloseTo(0, 12);
    expect(el).toBeCloseTo(-30, 12);
  });
  it('turns the boresight by the yaw and keeps a right-handed orthonormal frame', () => {
    const r = rotationFromOrientation({ yawDeg: 120, pitchDeg: -15, rollDeg: 40 });
    const x = applyRotation([0, 0, 0], r, [1, 0, 0]);
    const y = applyRotation([0, 0, 0], r, [0, 1, 0]);
    const z = applyRotation([0, 0, 0], r, [0, 0, 1]);
    expect(degFromVector(x)[0]).toBeCloseTo(120, 12);
    expect(degFromVector(x)[1]).toBeCloseTo(15, 12);
    // x cross y = z for a proper rotation (det R = +1)
    close([x[1] * y[2] - x[2] * y[1], x[2] * y[0] - x[0] * y[2], x[0] * y[1] - x[1] * y[0]], z);
  });
  it('composes yaw, then pitch about the new y, then roll about the new x', () => {
    const r = rotationFromOrientation({ yawDeg: 90, pitchDeg: 90 });
    // yaw 90 sends local y to global -x; pitch 90 about that axis points the boresight straight down
    close(applyRotation([0, 0, 0], r, [1, 0, 0]), [0, 0, -1]);
  });
});

describe('directions', () => {
  it('uses azimuth from +x towards +y and elevation from the horizontal', () => {
    close(unitFromDeg(90, 0), [0, 1, 0]);
    close(unitFromDeg(0, 90), [0, 0, 1]);
    expect(degFromVector([-1, 0, 0])[0]).toBe(180); // (-180, 180]
    expect(degFromVector([-1, -1e-3, 0])[0]).toBeCloseTo(-179.9427, 4);
  });
});

describe('AntennaArray', () => {
  it('places a ULA along local +y and a UPA in the local y-z plane, centred, n = row * columns + column', () => {
    close(AntennaArray.ula(3, 0.5).localOffsets, [0, -0.5, 0, 0, 0, 0, 0, 0.5, 0]);
    const upa = AntennaArray.upa(2, 3, 1);
    // element 4 = row 1, column 1: y = 0, z = +0.5; element 0: row 0 (lowest), column 0
    close(upa.localOffsets.subarray(12, 15), [0, 0, 0.5]);
    close(upa.localOffsets.subarray(0, 3), [0, -1, -0.5]);
  });

  it('computes r_n = g exp(+j k0 dot(u, p_n)) in the global frame (docs/conventions.md)', () => {
    const a = AntennaArray.upa(2, 2, 0.01, { yawDeg: 30, pitchDeg: 10 });
    const u = unitFromDeg(50, 20);
    const k0 = (2 * Math.PI * 28e9) / 299792458;
    const r = a.response(new Float64Array(8), u, k0);
    for (let n = 0; n < 4; n++) {
      const p = a.globalOffsets.subarray(3 * n, 3 * n + 3);
      const phase = k0 * (u[0] * p[0]! + u[1] * p[1]! + u[2] * p[2]!);
      expect(r[2 * n]).toBeCloseTo(Math.cos(phase), 14);
      expect(r[2 * n + 1]).toBeCloseTo(Math.sin(phase), 14);
      expect(Math.hypot(r[2 * n]!, r[2 * n + 1]!)).toBeCloseTo(1, 14); // isotropic: unit modulus, no 1/sqrt(N)
    }
  });

  it('spherical response tends to the plane-wave one far away and differs near by the exact distances', () => {
    const a = AntennaArray.ula(16, 0.005, { yawDeg: 10 });
    const k0 = (2 * Math.PI) / 0.01;
    const u = unitFromDeg(25, 5);
    const plane = a.response(new Float64Array(32), u, k0);
    const far = a.sphericalResponse(new Float64Array(32), [u[0] * 1e5, u[1] * 1e5, u[2] * 1e5], k0);
    close(far, plane, 1e-4);
    const range = 0.2; // inside the far-field distance 2 D^2 / lambda = 1.1 m
    const source: Vec3 = [u[0] * range, u[1] * range, u[2] * range];
    const near = a.sphericalResponse(new Float64Array(32), source, k0);
    for (let n = 0; n < 16; n++) {
      const p = a.globalOffsets.subarray(3 * n, 3 * n + 3);
      const d = Math.hypot(source[0] - p[0]!, source[1] - p[1]!, source[2] - p[2]!);
      // Each element's own distance in the amplitude (range / d) and the phase.
      expect(near[2 * n]).toBeCloseTo((range / d) * Math.cos(-k0 * (d - range)), 12);
      expect(near[2 * n + 1]).toBeCloseTo((range / d) * Math.sin(-k0 * (d - range)), 12);
    }
    let diff = 0;
    for (let i = 0; i < 32; i++) diff = Math.max(diff, Math.abs(near[i]! - plane[i]!));
    expect(diff).toBeGreaterThan(0.1);
  });

  it('has half-power beamwidths of a half-wavelength broadside ULA as in check-values.md (C, 1e-3 deg)', () => {
    const expected: [number, number][] = [
      [8, 12.8025],
      [16, 6.3587],
      [64, 1.5864],
    ];
    for (const [N, hpbw] of expected) {
      const a = AntennaArray.ula(N, 0.5);
      const k0 = 2 * Math.PI;
      const r0 = a.response(new Float64Array(2 * N), [1, 0, 0], k0); // broadside beam weights conj(r0)
      const gain = (deg: number): number => {
        const r = a.response(new Float64Array(2 * N), unitFromDeg(deg, 0), k0);
        let re = 0,
          im = 0;
        for (let n = 0; n < N; n++) {
          re += r0[2 * n]! * r[2 * n]! + r0[2 * n + 1]! * r[2 * n + 1]!;
          im += r0[2 * n]! * r[2 * n + 1]! - r0[2 * n + 1]! * r[2 * n]!;
        }
        return (re * re + im * im) / (N * N);
      };
      let lo: number, hi: number;
      // search the main lobe only: start the bracket below the first null asin(2/N)
      lo = 0;
      hi = (Math.asin(2 / N) * 180) / Math.PI;
      for (let i = 0; i < 80; i++) {
        const mid = (lo + hi) / 2;
        if (gain(mid) > 0.5) lo = mid;
        else hi = mid;
      }
      expect(Math.abs(2 * lo - hpbw)).toBeLessThan(1e-3);
      // rule of thumb 102 / N degrees (common practice), good to about 1 %
      expect(Math.abs(2 * lo - 102 / N) / (102 / N)).toBeLessThan(0.015);
    }
  });

  it('refuses arrays without elements', () => {
    expect(() => AntennaArray.ula(0, 0.5)).toThrow('AntennaArray.ula(): elements must be an integer >= 1, got 0');
    expect(() => AntennaArray.custom([])).toThrow(RangeError);
  });
});

describe('3GPP TR 38.901 Table 7.3-1 element (V, from the Table)', () => {
  it('gives 8 dBi at boresight, 3 dB down at 32.5 degrees, and the 30 dB limit at the back', () => {
    expect(sectorElementGainDbi(0, 0)).toBe(8);
    expect(sectorElementGainDbi(32.5, 0)).toBeCloseTo(5, 12);
    expect(sectorElementGainDbi(0, 32.5)).toBeCloseTo(5, 12);
    expect(sectorElementGainDbi(180, 0)).toBe(-22);
    expect(sectorElementGainDbi(120, 60)).toBe(-22);
  });
});
