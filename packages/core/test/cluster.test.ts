/**
 * Clusters of sub-paths: power kept, ids keyed by the cluster, sample angular spreads against
 * the spread asked for (circular angular spread of 3GPP TR 38.901 Annex A, M), the ray offsets
 * of 38.901 Table 7.5-3 (M) and the presets of Table 7.5-6 (V secondary).
 */
import { describe, expect, it } from 'vitest';
import {
  circularAngularSpread,
  ClusteredTimeline,
  clusterPreset,
  ExplicitTimeline,
  PathSetFrame,
  RAY_OFFSETS_38901,
  type ClusterSpread,
  type ExplicitPathSpec,
} from '@pathweave/core';
import { degFromVector, unitFromDeg } from '@pathweave/geometry';

const DEG = Math.PI / 180;
const path = (id: string, azDep: number, power: number): ExplicitPathSpec => ({
  id,
  delayS: 1e-7,
  power,
  phaseRad: 0.3,
  departure: unitFromDeg(azDep, 0),
  arrival: unitFromDeg(azDep + 180, 0),
});
const spread = (over: Partial<ClusterSpread>): ClusterSpread => ({
  subPaths: 20,
  method: 'gaussian',
  azimuthSpreadDepartureDeg: 0,
  elevationSpreadDepartureDeg: 0,
  azimuthSpreadArrivalDeg: 0,
  elevationSpreadArrivalDeg: 0,
  delaySpreadS: 0,
  ...over,
});

function frameOf(t: ClusteredTimeline): PathSetFrame {
  const f = new PathSetFrame(t.ids.length);
  t.frameAt(0, f);
  return f;
}

/** Azimuth offsets (radians) of the sub-paths' arrivals from their path's, unwrapped. */
function arrivalAzimuthOffsets(f: PathSetFrame, from: number, count: number, parentAzDeg: number): Float64Array {
  const out = new Float64Array(count);
  for (let k = 0; k < count; k++) {
    const i = from + k;
    const [az] = degFromVector([f.arrival[3 * i]!, f.arrival[3 * i + 1]!, f.arrival[3 * i + 2]!]);
    out[k] = (((az - parentAzDeg + 540) % 360) - 180) * DEG;
  }
  return out;
}

describe('ClusteredTimeline', () => {
  it('keeps each path power in its sub-paths and names them id#k', () => {
    const inner = new ExplicitTimeline([path('a', 10, 0.25), path('b', -40, 0.01)]);
    const t = new ClusteredTimeline(inner, [spread({ azimuthSpreadArrivalDeg: 5, delaySpreadS: 3e-9 }), undefined], 7);
    expect(t.ids.slice(0, 3)).toEqual(['a#0', 'a#1', 'a#2']);
    expect(t.ids[20]).toBe('b');
    const f = frameOf(t);
    let power = 0;
    for (let k = 0; k < 20; k++) power += f.amplitude[2 * k]! ** 2 + f.amplitude[2 * k + 1]! ** 2;
    expect(power).toBeCloseTo(0.25, 14);
    expect(f.amplitude[40]! ** 2 + f.amplitude[41]! ** 2).toBeCloseTo(0.01, 15);
    for (let k = 0; k < 20; k++) expect(f.delayS[k]!).toBeGreaterThanOrEqual(1e-7);
  });

  it('draws sub-paths by cluster identity, not by rank', () => {
    const s = spread({ azimuthSpreadDepartureDeg: 4, elevationSpreadArrivalDeg: 2 });
    const one = new ClusteredTimeline(new ExplicitTimeline([path('x', 0, 1), path('y', 30, 1)]), [s, s], 11, 'user-3');
    const other = new ClusteredTimeline(new ExplicitTimeline([path('y', 30, 1)]), [s], 11, 'user-3');
    expect(Array.from(one.offsets.subarray(5 * 20, 5 * 40))).toEqual(Array.from(other.offsets));
    const elsewhere = new ClusteredTimeline(new ExplicitTimeline([path('y', 30, 1)]), [s], 11, 'user-4');
    expect(Array.from(elsewhere.offsets)).not.toEqual(Array.from(other.offsets));
  });

  it('gaussian sub-paths have the circular angular spread asked for (38.901 Annex A, M)', () => {
    // M = 2000 draws, sigma = 12 deg. With x = cos(dphi), Var(x) = (1 + e^(-2 s^2)) / 2 - e^(-s^2);
    // R = |mean e^(j dphi)| has sd about sqrt(Var(x) / M), and AS = sqrt(-2 ln R) moves by
    // dR / (AS R): the tolerance is 4 such standard deviations.
    const M = 2000;
    const sigma = 12 * DEG;
    const t = new ClusteredTimeline(new ExplicitTimeline([path('c', 20, 1)]), [spread({ subPaths: M, azimuthSpreadArrivalDeg: 12 })], 42);
    const offsets = arrivalAzimuthOffsets(frameOf(t), 0, M, 200);
    const as = circularAngularSpread(offsets);
    const e1 = Math.exp(-sigma * sigma);
    const sdR = Math.sqrt(((1 + e1 * e1) / 2 - e1) / M);
    const sdAs = sdR / (sigma * Math.sqrt(e1));
    expect(Math.abs(as - sigma)).toBeLessThan(4 * sdAs);
  });

  it('laplacian sub-paths have the standard deviation asked for', () => {
    // Sample variance of a Laplacian: Var(s^2) = (kurtosis - 1) sigma^4 / M = 5 sigma^4 / M,
    // so s / sigma has sd about sqrt(5 / M) / 2; tolerance 4 sd.
    const M = 4000;
    const t = new ClusteredTimeline(new ExplicitTimeline([path('c', 0, 1)]), [spread({ subPaths: M, method: 'laplacian', azimuthSpreadDepartureDeg: 6 })], 9);
    let sum = 0;
    for (let k = 0; k < M; k++) sum += t.offsets[5 * k]! ** 2;
    const ratio = Math.sqrt(sum / M) / 6;
    expect(Math.abs(ratio - 1)).toBeLessThan(4 * (Math.sqrt(5 / M) / 2));
  });

  it('38.901 Table 7.5-3 offsets have unit rms and the presets scale them (Table 7.5-6)', () => {
    // The 20 tabulated offsets are designed for a unit rms spread (M); rounding to 4 digits.
    const rms = Math.sqrt(RAY_OFFSETS_38901.reduce((a, x) => a + x * x, 0) / 20);
    expect(Math.abs(rms - 1)).toBeLessThan(2e-3);
    const preset = clusterPreset('umi-nlos');
    expect([preset.azimuthSpreadDepartureDeg, preset.azimuthSpreadArrivalDeg, preset.elevationSpreadArrivalDeg]).toEqual([10, 22, 7]); // 38.901 Table 7.5-6 UMi NLOS c_ASD, c_ASA, c_ZSA (V secondary)
    const t = new ClusteredTimeline(new ExplicitTimeline([path('c', 0, 1)]), [preset], 1);
    let sum = 0;
    for (let k = 0; k < 20; k++) sum += t.offsets[5 * k + 2]! ** 2;
    expect(Math.sqrt(sum / 20)).toBeCloseTo(22 * rms, 10);
    // Sub-cluster delays 0, 1.28 and 2.56 c_DS with 10, 6 and 4 rays (Table 7.5-5, M).
    const delays = Array.from({ length: 20 }, (_, k) => Math.round(t.offsets[5 * k + 4]! / 11e-11) / 100);
    expect([0, 1.28, 2.56].map((v) => delays.filter((x) => x === v).length)).toEqual([10, 6, 4]);
  });

  it('refuses a negative spread and the wrong ray count', () => {
    const inner = new ExplicitTimeline([path('c', 0, 1)]);
    expect(() => new ClusteredTimeline(inner, [spread({ delaySpreadS: -1e-9 })], 1)).toThrow(
      'ClusteredTimeline(): delaySpreadS must be a finite number >= 0, got -1e-9',
    );
    expect(() => new ClusteredTimeline(inner, [spread({ method: 'offsets-38901', subPaths: 10 })], 1)).toThrow(
      'ClusteredTimeline(): method "offsets-38901" has 20 sub-paths (Table 7.5-3), got subPaths 10',
    );
  });
});
