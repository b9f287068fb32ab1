/**
 * Near field through the whole generator: traced paths (a line of sight and a wall reflection),
 * `wavefront: auto` at both ends, against the exact sum over element pairs of the free-space
 * spherical-wave Green's function, lambda / (4 pi d_mn) exp(-j k d_mn) (Balanis, Antenna Theory,
 * 3rd ed., sec. 3.6 — M), the reflection as the field of each transmit element's mirror image
 * (the image method, Balanis sec. 4.7 — M) times the wall's fixed reflection coefficient.
 * The report this answers: a 64-element array 4.6 m from a 4-element array; deciding `auto` per
 * array left about 31 degrees of phase error (packages/geometry/test/wavefront.test.ts).
 */
import { describe, expect, it } from 'vitest';
import { ChannelGenerator, Motion, TracedTimeline, type ChannelSpec } from '@pathweave/core';
import { AntennaArray, wavelength, type Scene, type Vec3 } from '@pathweave/geometry';

const fc = 39e9;
const lambda = wavelength(fc);
const k0 = (2 * Math.PI) / lambda;

function relativeError(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let num = 0,
    den = 0;
  for (let i = 0; i < a.length; i++) {
    num += (a[i]! - b[i]!) ** 2;
    den += b[i]! ** 2;
  }
  return Math.sqrt(num / den);
}

describe('near field per link, traced line of sight and reflection', () => {
  // Receiver: 64-element ULA at lambda / 2 facing -x; transmitter: 4-element ULA at 2 lambda.
  const rx = AntennaArray.ula(64, lambda / 2, { yawDeg: 180 });
  const tx = AntennaArray.ula(4, 2 * lambda);
  const txPos: Vec3 = [0, 0, 0],
    rxPos: Vec3 = [4.6, 0, 0];
  const lossDb = 3;
  // A wall along y = 1.5 (2-D scene): one reflection with a fixed coefficient of amplitude 10^(-3/20).
  const scene: Scene = {
    walls: [
      {
        vertices: [
          [-10, 1.5],
          [20, 1.5],
        ],
        reflectionLossDb: lossDb,
      },
    ],
  };

  function spec(wavefront: 'auto' | 'plane'): ChannelSpec {
    const timeline = new TracedTimeline(scene, { motion: new Motion(txPos) }, { motion: new Motion(rxPos) }, fc, 0, 1);
    return {
      carrierHz: fc,
      subframeS: 1e-3,
      subframes: 1,
      transmitter: { array: tx, position: txPos, velocity: [0, 0, 0], wavefront },
      receiver: { array: rx, position: rxPos, velocity: [0, 0, 0], wavefront },
      timeline,
      fading: { model: 'static' },
      grid: { domain: 'frequency', subcarriers: 1, spacingHz: 1e6 },
      seed: 0,
      precision: 'complex128',
    };
  }

  it('H equals the exact sum over element pairs of the direct and the mirrored fields', () => {
    const s = spec('auto');
    const timeline = s.timeline as TracedTimeline;
    expect(timeline.ids).toEqual(['los', 'R:walls[0]']);
    const traced = timeline.epochs[0]!.get('R:walls[0]')!;
    // The wall's coefficient read from the traced reference path: rho = gamma lambda / (4 pi d) exp(-j k d).
    const d1 = traced.lengthM;
    const [ar, ai] = traced.amplitude;
    const c = Math.cos(k0 * d1) * ((4 * Math.PI * d1) / lambda),
      sn = Math.sin(k0 * d1) * ((4 * Math.PI * d1) / lambda);
    const gr = ar * c - ai * sn,
      gi = ar * sn + ai * c;
    expect(Math.hypot(gr, gi)).toBeCloseTo(10 ** (-lossDb / 20), 9); // the fixed loss, angle-independent
    const exact = new Float64Array(2 * rx.size * tx.size);
    for (let m = 0; m < rx.size; m++) {
      for (let n = 0; n < tx.size; n++) {
        const q = [rxPos[0] + rx.globalOffsets[3 * m]!, rxPos[1] + rx.globalOffsets[3 * m + 1]!, rxPos[2] + rx.globalOffsets[3 * m + 2]!];
        const p = [txPos[0] + tx.globalOffsets[3 * n]!, txPos[1] + tx.globalOffsets[3 * n + 1]!, txPos[2] + tx.globalOffsets[3 * n + 2]!];
        const d = Math.hypot(q[0]! - p[0]!, q[1]! - p[1]!, q[2]! - p[2]!);
        const di = Math.hypot(q[0]! - p[0]!, q[1]! - (3 - p[1]!), q[2]! - p[2]!); // image in y = 1.5: y -> 3 - y
        const a = lambda / (4 * Math.PI * d),
          b = lambda / (4 * Math.PI * di);
        const i = 2 * (m * tx.size + n);
        exact[i] = a * Math.cos(-k0 * d) + b * (gr * Math.cos(-k0 * di) - gi * Math.sin(-k0 * di));
        exact[i + 1] = a * Math.sin(-k0 * d) + b * (gr * Math.sin(-k0 * di) + gi * Math.cos(-k0 * di));
      }
    }
    const H = new ChannelGenerator(s).fill(new Float64Array(exact.length), 0, 1);
    expect(relativeError(H, exact)).toBeLessThan(1e-9);
    // The plane-wave model of the same paths is far from it (the test can fail).
    const plane = new ChannelGenerator(spec('plane')).fill(new Float64Array(exact.length), 0, 1);
    expect(relativeError(plane, exact)).toBeGreaterThan(0.3);
  });

  it('beyond the link Fraunhofer distance auto gives the plane-wave channel bit for bit', () => {
    const far: Vec3 = [40, 0, 0]; // 2 (D_rx + D_tx)^2 / lambda = 21.6 m; the reflection is longer still
    const make = (wavefront: 'auto' | 'plane'): ChannelSpec => ({
      ...spec(wavefront),
      receiver: { array: rx, position: far, velocity: [0, 0, 0], wavefront },
      timeline: new TracedTimeline(scene, { motion: new Motion(txPos) }, { motion: new Motion(far) }, fc, 0, 1),
    });
    const a = new ChannelGenerator(make('auto')).fill(new Float64Array(2 * 256), 0, 1);
    const b = new ChannelGenerator(make('plane')).fill(new Float64Array(2 * 256), 0, 1);
    expect([...a]).toEqual([...b]);
  });
});
