/**
 * The wavefront choice and the near-field responses, beside the array response.
 * References: the Fraunhofer (far-field) distance 2 D^2 / lambda of one aperture (Balanis,
 * Antenna Theory, 3rd ed., sec. 2.2.4; IEEE Std 145) — M; the link form 2 (D_t + D_r)^2 / lambda
 * is common practice in the near-field MIMO literature, and its pi / 8 phase bound is derived in
 * wavefront.ts and checked numerically here; the exact field of each element pair is the
 * free-space spherical-wave Green's function exp(-j k d) / (4 pi d) (Balanis sec. 3.6; Jackson,
 * Classical Electrodynamics, 3rd ed., eq. 6.40) — M; a specular reflection on a plane is the
 * field of the source's mirror image (the image method, Balanis sec. 4.7) — M.
 */
import { describe, expect, it } from 'vitest';
import { AntennaArray } from '../src/array.js';
import { SPEED_OF_LIGHT } from '../src/constants.js';
import { traceScene } from '../src/scene/tracer.js';
import type { Vec3 } from '../src/vec3.js';
import {
  elementPairProducts,
  fraunhoferDistanceM,
  linkFraunhoferDistanceM,
  specularImageMap,
  usesSphericalWavefront,
  wavefrontRangesM,
  waveResponse,
} from '../src/wavefront.js';

const IDENTITY = Float64Array.of(1, 0, 0, 0, 1, 0, 0, 0, 1);

const maxDiff = (a: ArrayLike<number>, b: ArrayLike<number>): number => {
  expect(a.length).toBe(b.length);
  let d = 0;
  for (let i = 0; i < a.length; i++) d = Math.max(d, Math.abs(a[i]! - b[i]!));
  return d;
};

/** Worst phase difference of two complex interleaved arrays, radians. */
const worstPhase = (a: ArrayLike<number>, b: ArrayLike<number>): number => {
  let w = 0;
  for (let i = 0; i < a.length / 2; i++) {
    const d = Math.atan2(a[2 * i + 1]!, a[2 * i]!) - Math.atan2(b[2 * i + 1]!, b[2 * i]!);
    w = Math.max(w, Math.abs(Math.atan2(Math.sin(d), Math.cos(d))));
  }
  return w;
};

/**
 * The exact free-space field of every (receive, transmit) element pair, exp(-j k d_mn) / d_mn,
 * divided by that of the reference points exp(-j k d) / d: [Nr, Nt] complex. `txImage` maps a
 * transmit element's global position to the position of the source the receiver sees (identity
 * for a line of sight, the mirror image for a reflection).
 */
function exactPairs(rxPos: Vec3, rx: AntennaArray, txPos: Vec3, tx: AntennaArray, k: number, txImage: (p: Vec3) => Vec3 = (p) => p): Float64Array {
  const out = new Float64Array(2 * rx.size * tx.size);
  const ref = txImage(txPos);
  const d0 = Math.hypot(ref[0] - rxPos[0], ref[1] - rxPos[1], ref[2] - rxPos[2]);
  const q = rx.globalOffsets,
    p = tx.globalOffsets;
  for (let m = 0; m < rx.size; m++) {
    for (let n = 0; n < tx.size; n++) {
      const s = txImage([txPos[0] + p[3 * n]!, txPos[1] + p[3 * n + 1]!, txPos[2] + p[3 * n + 2]!]);
      const d = Math.hypot(s[0] - rxPos[0] - q[3 * m]!, s[1] - rxPos[1] - q[3 * m + 1]!, s[2] - rxPos[2] - q[3 * m + 2]!);
      out[2 * (m * tx.size + n)] = (d0 / d) * Math.cos(-k * (d - d0));
      out[2 * (m * tx.size + n) + 1] = (d0 / d) * Math.sin(-k * (d - d0));
    }
  }
  return out;
}

/** rx response times tx response, transposed plainly: [Nr, Nt] complex. */
function outer(r: Float64Array, t: Float64Array): Float64Array {
  const Nr = r.length / 2,
    Nt = t.length / 2;
  const out = new Float64Array(2 * Nr * Nt);
  for (let m = 0; m < Nr; m++) {
    for (let n = 0; n < Nt; n++) {
      out[2 * (m * Nt + n)] = r[2 * m]! * t[2 * n]! - r[2 * m + 1]! * t[2 * n + 1]!;
      out[2 * (m * Nt + n) + 1] = r[2 * m]! * t[2 * n + 1]! + r[2 * m + 1]! * t[2 * n]!;
    }
  }
  return out;
}

describe('wavefront choice', () => {
  const fc = 30e9;
  const lambda = SPEED_OF_LIGHT / fc;
  const ula = AntennaArray.ula(64, 0.005); // D = 63 x 5 mm = 0.315 m

  it('Fraunhofer distance 2 D^2 / lambda of one array (Balanis sec. 2.2.4, M) and of a link, 2 (D_a + D_b)^2 / lambda (common practice)', () => {
    expect(fraunhoferDistanceM(ula, fc)).toBeCloseTo((2 * 0.315 ** 2) / lambda, 12);
    expect(fraunhoferDistanceM(ula, fc)).toBeCloseTo(19.858738, 5); // C: 2 * 0.315**2 / (299792458 / 30e9)
    // A UPA's aperture is its diagonal: 4 x 8 at 2.5 mm spans hypot(3, 7) x 2.5 mm.
    const upa = AntennaArray.upa(4, 8, 0.0025);
    expect(fraunhoferDistanceM(upa, fc)).toBeCloseTo((2 * (Math.hypot(3, 7) * 0.0025) ** 2) / lambda, 12);
    expect(fraunhoferDistanceM(AntennaArray.ula(1, 0), fc)).toBe(0); // one element: no aperture, always far field
    expect(linkFraunhoferDistanceM(0.315, 0.015, fc)).toBeCloseTo(21.79508, 4); // C: 2 * 0.33**2 / (299792458 / 30e9)
    expect(linkFraunhoferDistanceM(0.315, 0, fc)).toBe(fraunhoferDistanceM(ula, fc));
  });

  it('auto is spherical strictly inside the given distance; plane is the default', () => {
    const r = fraunhoferDistanceM(ula, fc);
    expect(usesSphericalWavefront('auto', r * (1 - 1e-9), r)).toBe(true);
    expect(usesSphericalWavefront('auto', r, r)).toBe(false);
    expect(usesSphericalWavefront('auto', r * (1 + 1e-9), r)).toBe(false);
    expect(usesSphericalWavefront('spherical', 1e6, r)).toBe(true);
    expect(usesSphericalWavefront('plane', 0.01, r)).toBe(false);
    expect(usesSphericalWavefront(undefined, 0.01, r)).toBe(false);
  });

  it('the link distance bounds the phase error of plane responses at both ends by pi / 8 (derived in wavefront.ts, checked numerically)', () => {
    // Two broadside ULAs facing each other: the worst pair is at the outer ends, across the line.
    const fc28 = 28e9;
    const k = (2 * Math.PI * fc28) / SPEED_OF_LIGHT;
    const rx = AntennaArray.ula(32, 0.0054, { yawDeg: 180 });
    const tx = AntennaArray.ula(8, 0.0054);
    const d = linkFraunhoferDistanceM(rx.aperture(), tx.aperture(), fc28);
    const exact = exactPairs([d, 0, 0], rx, [0, 0, 0], tx, k);
    const plane = outer(rx.response(new Float64Array(2 * rx.size), [-1, 0, 0], k), tx.response(new Float64Array(2 * tx.size), [1, 0, 0], k));
    const err = worstPhase(plane, exact);
    expect(err).toBeLessThan(Math.PI / 8);
    expect(err).toBeGreaterThan(0.9 * (Math.PI / 8)); // the bound is tight for arrays in line across the path
    // The single-array distance of the larger array alone leaves more than the bound.
    const dSingle = fraunhoferDistanceM(rx, fc28);
    const exactS = exactPairs([dSingle, 0, 0], rx, [0, 0, 0], tx, k);
    expect(worstPhase(plane, exactS)).toBeGreaterThan(Math.PI / 8);
  });

  it('waveResponse: each element exact distance in amplitude and phase when spherical, the plane-wave response otherwise', () => {
    const a = AntennaArray.upa(8, 16, 0.005, { yawDeg: 20, pitchDeg: -10 });
    const u: Vec3 = [0.6, 0.64, 0.48]; // unit: 0.36 + 0.4096 + 0.2304
    const k0 = (2 * Math.PI * fc) / SPEED_OF_LIGHT;
    const L = 0.5;
    const sph = waveResponse(new Float64Array(2 * a.size), a, true, u, L, k0);
    const p = a.globalOffsets;
    const g = a.elementAmplitude(u);
    for (let n = 0; n < a.size; n++) {
      const d = Math.hypot(u[0] * L - p[3 * n]!, u[1] * L - p[3 * n + 1]!, u[2] * L - p[3 * n + 2]!);
      expect(sph[2 * n]).toBeCloseTo(((g * L) / d) * Math.cos(-k0 * (d - L)), 12);
      expect(sph[2 * n + 1]).toBeCloseTo(((g * L) / d) * Math.sin(-k0 * (d - L)), 12);
    }
    expect(maxDiff(waveResponse(new Float64Array(2 * a.size), a, false, u, L, k0), a.response(new Float64Array(2 * a.size), u, k0))).toBe(0);
    // A zero range has no spherical source: the plane-wave response is used.
    expect(maxDiff(waveResponse(new Float64Array(2 * a.size), a, true, u, 0, k0), a.response(new Float64Array(2 * a.size), u, k0))).toBe(0);
  });
});

describe('the reported case: a 64-element array 4.6 m from a 4-element array', () => {
  // 39 GHz; receiver a 64-element ULA at lambda / 2 (D = 0.2422 m), transmitter a 4-element ULA
  // at 2 lambda (D = 0.0461 m), broadside to each other 4.6 m apart.
  const fc = 39e9;
  const lambda = SPEED_OF_LIGHT / fc;
  const k = (2 * Math.PI) / lambda;
  const rx = AntennaArray.ula(64, lambda / 2, { yawDeg: 180 });
  const tx = AntennaArray.ula(4, 2 * lambda);
  const rxPos: Vec3 = [4.6, 0, 0];
  const exact = exactPairs(rxPos, rx, [0, 0, 0], tx, k);

  it('deciding per array (the large one spherical, the small one plane) is about 31 degrees off the exact pair phases (C: numpy, 31.12 deg)', () => {
    expect(fraunhoferDistanceM(rx, fc)).toBeGreaterThan(4.6); // 15.25 m
    expect(fraunhoferDistanceM(tx, fc)).toBeLessThan(4.6); // 0.553 m
    const mixed = outer(waveResponse(new Float64Array(128), rx, true, [-1, 0, 0], 4.6, k), waveResponse(new Float64Array(8), tx, false, [1, 0, 0], 4.6, k));
    expect((worstPhase(mixed, exact) * 180) / Math.PI).toBeCloseTo(31.12, 1);
  });

  it('deciding per link makes both ends spherical, and the pair products equal the exact field', () => {
    const link = linkFraunhoferDistanceM(rx.aperture(), tx.aperture(), fc); // 21.62 m
    expect(usesSphericalWavefront('auto', 4.6, link)).toBe(true);
    const pairs = elementPairProducts(new Float64Array(2 * 256), 0, rx, tx, [-1, 0, 0], [1, 0, 0], 4.6, k, IDENTITY, 0);
    expect(worstPhase(pairs, exact)).toBeLessThan(1e-9);
    expect(maxDiff(pairs, exact)).toBeLessThan(1e-9);
    // The amplitude d / d_mn is not 1: the outer receive elements are farther away.
    expect(Math.hypot(pairs[0]!, pairs[1]!)).toBeCloseTo(4.6 / Math.hypot(4.6, (63 * lambda) / 4 + (3 * 2 * lambda) / 2), 12);
  });
});

describe('element pairs through images (reflections)', () => {
  const fc = 28e9;
  const k0 = (2 * Math.PI * fc) / SPEED_OF_LIGHT;
  const rx = AntennaArray.ula(8, 0.0054, { yawDeg: 180 });
  const tx = AntennaArray.upa(2, 4, 0.0054, { yawDeg: 10 });
  const arrival: Vec3 = [-0.8, 0.6, 0];

  it('a line of sight: each entry is g (d / d_mn) exp(-j k0 (d_mn - d)) of the pair distance', () => {
    const d0 = 0.3;
    const out = elementPairProducts(new Float64Array(2 * rx.size * tx.size), 0, rx, tx, arrival, [0.8, -0.6, 0], d0, k0, IDENTITY, 0);
    const g = rx.elementAmplitude(arrival) * tx.elementAmplitude([0.8, -0.6, 0]);
    const exact = exactPairs([0, 0, 0], rx, [arrival[0] * d0, arrival[1] * d0, 0], tx, k0);
    expect(
      maxDiff(
        out,
        exact.map((v) => v * g),
      ),
    ).toBeLessThan(1e-12);
  });

  it('writes at the offset and tends to r_rx(u) r_tx(-u)^T far away (Fraunhofer limit)', () => {
    const d0 = 2000;
    const offset = 6;
    const out = elementPairProducts(new Float64Array(offset + 2 * rx.size * tx.size), offset, rx, tx, arrival, [0.8, -0.6, 0], d0, k0, IDENTITY, 0);
    expect([...out.subarray(0, offset)]).toEqual([0, 0, 0, 0, 0, 0]);
    const plane = outer(rx.response(new Float64Array(2 * rx.size), arrival, k0), tx.response(new Float64Array(2 * tx.size), [0.8, -0.6, 0], k0));
    // Phase error of the plane approximation: at most k0 (D_rx + D_tx)^2 / (8 d0) (wavefront.ts).
    const D = rx.aperture() + tx.aperture();
    const err = worstPhase(out.subarray(offset), plane);
    expect(err).toBeLessThan((k0 * D * D) / (8 * d0));
    expect(err).toBeGreaterThan(0);
  });

  it('one reflection: the image map mirrors the transmitter, and the pair products equal the field of the mirrored elements (image method)', () => {
    // Wall y = 3 (2-D scene: a vertical plane). Arrays 2 m apart, both near the wall.
    const scene = { walls: [{ vertices: [[-5, 3] as [number, number], [15, 3] as [number, number]], reflectionLossDb: 0 }] };
    const txPos: Vec3 = [0, 0, 0],
      rxPos: Vec3 = [2, 0.5, 0];
    const paths = traceScene(scene, { position: txPos }, { position: rxPos }, fc).paths;
    const refl = paths.find((p) => p.id === 'R:walls[0]')!;
    const M = new Float64Array(9);
    expect(specularImageMap(M, 0, refl, txPos, rxPos)).toBe(true);
    expect(maxDiff(M, [1, 0, 0, 0, -1, 0, 0, 0, 1])).toBeLessThan(1e-12);
    const out = elementPairProducts(new Float64Array(2 * rx.size * tx.size), 0, rx, tx, refl.arrival, refl.departure, refl.lengthM, k0, M, 0);
    const exact = exactPairs(rxPos, rx, txPos, tx, k0, (p) => [p[0], 6 - p[1], p[2]]);
    expect(maxDiff(out, exact)).toBeLessThan(1e-9);
    // The plane-wave model is off by 5.9 mrad here, far above the 1e-9 of the pair products.
    const plane = outer(rx.response(new Float64Array(2 * rx.size), refl.arrival, k0), tx.response(new Float64Array(2 * tx.size), refl.departure, k0));
    expect(worstPhase(plane, exact)).toBeGreaterThan(1e-3);
  });

  it('two reflections (a corridor): the map is the product of both mirrors, M dep = -arr, and the pairs match the double image', () => {
    const scene = {
      walls: [
        { vertices: [[-5, 3] as [number, number], [15, 3] as [number, number]], reflectionLossDb: 0 },
        { vertices: [[-5, -2] as [number, number], [15, -2] as [number, number]], reflectionLossDb: 0 },
      ],
    };
    const txPos: Vec3 = [0, 0, 0],
      rxPos: Vec3 = [3, 0.5, 0];
    const paths = traceScene(scene, { position: txPos }, { position: rxPos }, fc, { maxReflectionOrder: 2 }).paths;
    const p2 = paths.find((p) => p.id === 'R:walls[0]>R:walls[1]')!;
    const M = new Float64Array(9);
    expect(specularImageMap(M, 0, p2, txPos, rxPos)).toBe(true);
    // Two mirrors in y: the identity on offsets (a translation of the image only).
    expect(maxDiff(M, IDENTITY)).toBeLessThan(1e-12);
    const dep = p2.departure,
      arr = p2.arrival;
    expect(
      maxDiff(
        [M[0]! * dep[0] + M[1]! * dep[1] + M[2]! * dep[2], M[3]! * dep[0] + M[4]! * dep[1] + M[5]! * dep[2], M[6]! * dep[0] + M[7]! * dep[1] + M[8]! * dep[2]],
        [-arr[0], -arr[1], -arr[2]],
      ),
    ).toBeLessThan(1e-12);
    const out = elementPairProducts(new Float64Array(2 * rx.size * tx.size), 0, rx, tx, arr, dep, p2.lengthM, k0, M, 0);
    // Mirror in y = 3 first (y -> 6 - y), then in y = -2 (y -> -4 - y): y -> y - 10.
    const exact = exactPairs(rxPos, rx, txPos, tx, k0, (p) => [p[0], p[1] - 10, p[2]]);
    expect(maxDiff(out, exact)).toBeLessThan(1e-9);
    // A corner (two perpendicular walls) gives a rotation by 180 degrees about the vertical.
    const corner = {
      walls: [
        { vertices: [[-5, 3] as [number, number], [4, 3] as [number, number]], reflectionLossDb: 0 },
        { vertices: [[4, 3] as [number, number], [4, -5] as [number, number]], reflectionLossDb: 0 },
      ],
    };
    const pc = traceScene(corner, { position: txPos }, { position: [2, -1, 0] }, fc, { maxReflectionOrder: 2 }).paths.find((p) => p.interactions.length === 2)!;
    expect(specularImageMap(M, 0, pc, txPos, [2, -1, 0])).toBe(true);
    expect(maxDiff(M, [-1, 0, 0, 0, -1, 0, 0, 0, 1])).toBeLessThan(1e-12);
  });

  it('no image through a scatterer or an edge; ranges run to the nearest of them', () => {
    const M = new Float64Array(9).fill(7);
    const scatter = { interactions: [{ type: 'scatter' as const, point: [3, 4, 0] as Vec3 }] };
    expect(specularImageMap(M, 0, scatter, [0, 0, 0], [6, 0, 0])).toBe(false);
    expect([...M]).toEqual([7, 7, 7, 7, 7, 7, 7, 7, 7]);
    expect([...wavefrontRangesM(new Float64Array(2), 0, scatter, [0, 0, 0], [6, 0, 0], 10)]).toEqual([5, 5]);
    // Reflection at (0, 4) then an edge at (3, 4) then the receiver at (3, 0): 4 + 3 before the edge, 4 after.
    const rd = {
      interactions: [
        { type: 'reflection' as const, point: [0, 4, 0] as Vec3 },
        { type: 'diffraction' as const, point: [3, 4, 0] as Vec3 },
      ],
    };
    expect([...wavefrontRangesM(new Float64Array(3), 1, rd, [0, 0, 0], [3, 0, 0], 11)]).toEqual([0, 7, 4]);
    expect([...wavefrontRangesM(new Float64Array(2), 0, { interactions: [] }, [0, 0, 0], [3, 0, 0], 3)]).toEqual([3, 3]);
  });
});
