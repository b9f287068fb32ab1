/**
 * The plain transpose in H = sum rho r_rx r_tx^T checked against physics: for a line-of-sight
 * path between two arrays far apart, H must equal the exact element-to-element propagation
 * (lambda / (4 pi d_mn)) exp(-j k0 d_mn), up to the far-field approximation error; swapping
 * the ends must give H^T (reciprocity).
 */
import { describe, expect, it } from 'vitest';
import { ChannelGenerator, ExplicitTimeline, type ChannelSpec } from '@pathweave/core';
import { AntennaArray, degFromVector, unitFromDeg, wavelength, type Vec3 } from '@pathweave/geometry';

const fc = 28e9;
const lambda = wavelength(fc);
const k0 = (2 * Math.PI) / lambda;

function losSpec(txPos: Vec3, txArray: AntennaArray, rxPos: Vec3, rxArray: AntennaArray): ChannelSpec {
  const d = Math.hypot(rxPos[0] - txPos[0], rxPos[1] - txPos[1], rxPos[2] - txPos[2]);
  const dep: Vec3 = [(rxPos[0] - txPos[0]) / d, (rxPos[1] - txPos[1]) / d, (rxPos[2] - txPos[2]) / d];
  const [az, el] = degFromVector(dep);
  const [baz, bel] = degFromVector([-dep[0], -dep[1], -dep[2]]);
  return {
    carrierHz: fc,
    subframeS: 1e-3,
    subframes: 1,
    transmitter: { array: txArray, position: txPos, velocity: [0, 0, 0] },
    receiver: { array: rxArray, position: rxPos, velocity: [0, 0, 0] },
    paths: [
      {
        id: 'los',
        delayS: d / 299792458,
        power: (lambda / (4 * Math.PI * d)) ** 2,
        phaseRad: -k0 * d,
        departure: unitFromDeg(az, el),
        arrival: unitFromDeg(baz, bel),
      },
    ],
    fading: { model: 'static' },
    grid: { domain: 'frequency', subcarriers: 1, spacingHz: 1e6 },
    seed: 0,
    precision: 'complex128',
  };
}

/** Exact spherical propagation between every element pair, [Nr, Nt] complex interleaved. */
function exactChannel(txPos: Vec3, tx: AntennaArray, rxPos: Vec3, rx: AntennaArray, conjugateTx = false): Float64Array {
  const out = new Float64Array(2 * rx.size * tx.size);
  for (let m = 0; m < rx.size; m++) {
    for (let n = 0; n < tx.size; n++) {
      const q = [rxPos[0] + rx.globalOffsets[3 * m]!, rxPos[1] + rx.globalOffsets[3 * m + 1]!, rxPos[2] + rx.globalOffsets[3 * m + 2]!];
      // the "conjugate" variant mirrors the transmit offsets: what H = a_r r_tx^H would claim
      const s = conjugateTx ? -1 : 1;
      const p = [txPos[0] + s * tx.globalOffsets[3 * n]!, txPos[1] + s * tx.globalOffsets[3 * n + 1]!, txPos[2] + s * tx.globalOffsets[3 * n + 2]!];
      const d = Math.hypot(q[0]! - p[0]!, q[1]! - p[1]!, q[2]! - p[2]!);
      const a = lambda / (4 * Math.PI * d);
      out[2 * (m * tx.size + n)] = a * Math.cos(-k0 * d);
      out[2 * (m * tx.size + n) + 1] = a * Math.sin(-k0 * d);
    }
  }
  return out;
}

function relativeError(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let num = 0,
    den = 0;
  for (let i = 0; i < a.length; i++) {
    num += (a[i]! - b[i]!) ** 2;
    den += b[i]! ** 2;
  }
  return Math.sqrt(num / den);
}

describe('transpose convention against exact element-to-element phases', () => {
  const txPos: Vec3 = [0, 0, 10];
  const rxPos: Vec3 = [180, -95, 1.5];
  const tx = AntennaArray.upa(4, 8, lambda / 2, { yawDeg: -20, pitchDeg: 8, rollDeg: 15 });
  const rx = AntennaArray.ula(8, lambda / 2, { yawDeg: 140, pitchDeg: -3 });

  it('matches exp(-j k0 |q_m - p_n|) to the far-field error bound', () => {
    const H = new ChannelGenerator(losSpec(txPos, tx, rxPos, rx)).fill(new Float64Array(2 * rx.size * tx.size), 0, 1);
    const exact = exactChannel(txPos, tx, rxPos, rx);
    const d = Math.hypot(rxPos[0] - txPos[0], rxPos[1] - txPos[1], rxPos[2] - txPos[2]);
    // Far-field (Fraunhofer) phase error is at most k0 (|p|^2 + |q|^2 + 2|p||q|) / (2 d), and the
    // amplitude error about (|p| + |q|) / d (textbook expansion of |q - p| to second order).
    const maxOffset = (a: AntennaArray): number => {
      let m = 0;
      for (let n = 0; n < a.size; n++) m = Math.max(m, Math.hypot(a.globalOffsets[3 * n]!, a.globalOffsets[3 * n + 1]!, a.globalOffsets[3 * n + 2]!));
      return m;
    };
    const sum = maxOffset(tx) + maxOffset(rx);
    const bound = (k0 * sum * sum) / (2 * d) + sum / d;
    const error = relativeError(H, exact);
    expect(error).toBeLessThan(bound);
    expect(bound).toBeLessThan(0.01); // the geometry really is far field, so the check is sharp
    // The conjugate reading (a_t = r_tx in H = a_r a_t^H) is far off: the test can fail.
    expect(relativeError(H, exactChannel(txPos, tx, rxPos, rx, true))).toBeGreaterThan(0.5);
  });

  it('gives H^T when transmitter and receiver swap places (reciprocity)', () => {
    const H = new ChannelGenerator(losSpec(txPos, tx, rxPos, rx)).fill(new Float64Array(2 * rx.size * tx.size), 0, 1);
    const back = new ChannelGenerator(losSpec(rxPos, rx, txPos, tx)).fill(new Float64Array(2 * rx.size * tx.size), 0, 1);
    for (let m = 0; m < rx.size; m++) {
      for (let n = 0; n < tx.size; n++) {
        const a = 2 * (m * tx.size + n);
        const b = 2 * (n * rx.size + m);
        expect(Math.abs(back[b]! - H[a]!)).toBeLessThan(1e-12 * Math.abs(H[a]!) + 1e-20);
        expect(Math.abs(back[b + 1]! - H[a + 1]!)).toBeLessThan(1e-12 * Math.abs(H[a + 1]!) + 1e-20);
      }
    }
  });
});

describe('near-field line of sight, element pair by element pair', () => {
  it('spherical wavefronts at both ends give the exact field (lambda / (4 pi d_mn)) exp(-j k0 d_mn) of every pair', () => {
    // Two 16-element ULAs 1.5 m apart at 28 GHz: the far-field distance 2 D^2 / lambda is 1.6 m,
    // so the plane-wave model is off while the pairwise model is exact in phase.
    const tx = AntennaArray.ula(16, lambda / 2, { yawDeg: 10 });
    const rx = AntennaArray.ula(16, lambda / 2, { yawDeg: 195 });
    const txPos: Vec3 = [0, 0, 1];
    const rxPos: Vec3 = [1.5, 0.2, 1];
    const spec = losSpec(txPos, tx, rxPos, rx);
    spec.transmitter.wavefront = 'spherical';
    spec.receiver.wavefront = 'spherical';
    // The pairwise model applies to specular paths (an image map in the frame): give the explicit
    // path the identity map of a line of sight.
    const explicit = new ExplicitTimeline(spec.paths!);
    spec.timeline = {
      ids: explicit.ids,
      kinds: ['los'],
      constant: true,
      frameAt: (t, f) => {
        explicit.frameAt(t, f);
        f.image.set([1, 0, 0, 0, 1, 0, 0, 0, 1], 0);
      },
    };
    const H = new ChannelGenerator(spec).fill(new Float64Array(2 * 256), 0, 1);
    const exact = exactChannel(txPos, tx, rxPos, rx);
    let worstPhase = 0;
    for (let i = 0; i < 256; i++) {
      const d = Math.atan2(H[2 * i + 1]!, H[2 * i]!) - Math.atan2(exact[2 * i + 1]!, exact[2 * i]!);
      worstPhase = Math.max(worstPhase, Math.abs(Math.atan2(Math.sin(d), Math.cos(d))));
    }
    expect(worstPhase).toBeLessThan(1e-9);
    expect(relativeError(H, exact)).toBeLessThan(1e-9); // amplitude too: each pair's own 1 / d_mn
    const plane = new ChannelGenerator(losSpec(txPos, tx, rxPos, rx)).fill(new Float64Array(2 * 256), 0, 1);
    expect(relativeError(plane, exact)).toBeGreaterThan(0.1); // the far-field model really is wrong here
  });
});
