/**
 * Polarised ports: single vertical ports reproduce the single-polarised H, the cross-polar
 * transfer has the power ratio asked for (3GPP TR 38.901 section 7.5 steps 9-11 form, M), and
 * the port order is element-major.
 */
import { describe, expect, it } from 'vitest';
import {
  ChannelGenerator,
  ExplicitTimeline,
  Motion,
  PolarimetricTracedTimeline,
  RandomStream,
  TracedTimeline,
  xprTransfer,
  type ChannelSpec,
  type ExplicitPathSpec,
} from '@pathweave/core';
import { AntennaArray, dualPolarizedPortVectors, unitFromDeg, wavelength, type Scene } from '@pathweave/geometry';

const fc = 28e9;
const d = wavelength(fc) / 2;

const scene: Scene = {
  walls: [
    {
      vertices: [
        [-20, 8, 0],
        [60, 8, 0],
        [60, 8, 15],
        [-20, 8, 15],
      ],
      material: 'brick',
    },
    {
      vertices: [
        [-20, -10, 0],
        [60, -10, 0],
        [60, 8, 0],
        [-20, 8, 0],
      ],
      material: 'concrete',
    },
  ],
  maxReflectionOrder: 2,
} as unknown as Scene;

function tracedSpec(Timeline: typeof TracedTimeline, ports: boolean, speed: number): ChannelSpec {
  const txMotion = new Motion([0, 0, 6], [0, 0, 0], undefined, { yawDeg: 10, pitchDeg: 5 });
  const rxMotion = new Motion([25, 3, 1.5], [-speed, 0.2 * speed, 0], undefined, { yawDeg: -160 });
  const timeline = new Timeline(
    scene,
    { motion: txMotion, orientation: { yawDeg: 10, pitchDeg: 5 } },
    { motion: rxMotion, orientation: { yawDeg: -160 } },
    fc,
    0.004,
    0.002,
  );
  return {
    carrierHz: fc,
    subframeS: 1e-3,
    subframes: 5,
    transmitter: {
      array: AntennaArray.upa(2, 4, d, { yawDeg: 10, pitchDeg: 5 }),
      position: [0, 0, 6],
      velocity: [0, 0, 0],
      motion: txMotion,
      ...(ports ? { ports: [[0, 0, 1]] } : {}),
    },
    receiver: {
      array: AntennaArray.ula(4, d, { yawDeg: -160 }),
      position: [25, 3, 1.5],
      velocity: [-speed, 0.2 * speed, 0],
      motion: rxMotion,
      ...(ports ? { ports: [[0, 0, 1]] } : {}),
    },
    timeline,
    fading: { model: 'static' },
    grid: { domain: 'frequency', subcarriers: 16, spacingHz: 240e3 },
    seed: 5,
    precision: 'complex128',
  };
}

describe('polarised ports', () => {
  it.each([
    // Still: the same F = r^T T t evaluated once in the tracer and once per port, rounding only.
    [0, 1e-12],
    // Moving: between geometry updates the tracer keeps F of the last update, while the ports
    // project onto the current directions (which turn by about v dt / d = 1.5e-3 * 2e-3 / 25 rad).
    [1.5, 1e-6],
  ])('single vertical ports give the single-polarised H of a traced scene (receiver at %s m/s)', (speed, tolerance) => {
    const plain = new ChannelGenerator(tracedSpec(TracedTimeline, false, speed));
    const ported = new ChannelGenerator(tracedSpec(PolarimetricTracedTimeline, true, speed));
    expect(ported.shape).toEqual(plain.shape);
    const a = plain.fill(plain.allocate(5), 0, 5);
    const b = ported.fill(ported.allocate(5), 0, 5);
    let err = 0,
      norm = 0;
    for (let i = 0; i < a.length; i++) {
      err = Math.max(err, Math.abs(a[i]! - b[i]!));
      norm = Math.max(norm, Math.abs(a[i]!));
    }
    expect(norm).toBeGreaterThan(0);
    expect(err / norm).toBeLessThan(tolerance);
  });

  it('orders ports element-major (port = 2 element + p) and couples V to V and H to H on a horizontal explicit path', () => {
    const path: ExplicitPathSpec = { id: 'p', delayS: 1e-7, power: 1, phaseRad: 0, departure: unitFromDeg(0, 0), arrival: unitFromDeg(180, 0) };
    const g = new ChannelGenerator({
      carrierHz: fc,
      subframeS: 1e-3,
      subframes: 1,
      transmitter: { array: AntennaArray.ula(2, d), position: [0, 0, 0], velocity: [0, 0, 0], ports: dualPolarizedPortVectors('vh') },
      receiver: { array: AntennaArray.ula(1, d, { yawDeg: 180 }), position: [10, 0, 0], velocity: [0, 0, 0], ports: dualPolarizedPortVectors('vh') },
      paths: [path],
      fading: { model: 'static' },
      grid: { domain: 'frequency', subcarriers: 1, spacingHz: 1e6 },
      seed: 1,
      precision: 'complex128',
    });
    expect(g.shape).toEqual([1, 1, 2, 4]);
    const H = g.fill(g.allocate(1), 0, 1);
    const mag = (a: number, b: number): number => Math.hypot(H[2 * (a * 4 + b)]!, H[2 * (a * 4 + b) + 1]!);
    // Identity transfer: receive V (port 0) sees transmit V of both elements (ports 0 and 2), none of H.
    expect(mag(0, 0)).toBeCloseTo(1, 12);
    expect(mag(0, 2)).toBeCloseTo(1, 12);
    expect(mag(0, 1)).toBeCloseTo(0, 12);
    expect(mag(1, 1)).toBeCloseTo(1, 12);
    expect(mag(1, 0)).toBeCloseTo(0, 12);
  });

  it('a cross-polar transfer has unit co-polar and 10^(-XPR/20) cross-polar moduli', () => {
    const out = new Float64Array(8);
    xprTransfer(out, 0, 9, new RandomStream(3, 'x'));
    const m = [0, 1, 2, 3].map((e) => Math.hypot(out[2 * e]!, out[2 * e + 1]!));
    // 38.901 7.5 step 11 form (M): co-polar e^(j Phi), cross-polar sqrt(1/kappa) e^(j Phi).
    expect(m[0]).toBeCloseTo(1, 14);
    expect(m[3]).toBeCloseTo(1, 14);
    expect(m[1]).toBeCloseTo(10 ** (-9 / 20), 14);
    expect(m[2]).toBeCloseTo(10 ** (-9 / 20), 14);
    expect(() => xprTransfer(out, 0, Infinity, new RandomStream(3, 'x'))).toThrow('xprTransfer(): xprDb must be a finite number, got Infinity');
  });

  it('the co-polar to cross-polar power of a stochastic dual-polarised link matches the XPR asked for', () => {
    // One element per end, ports "vh", 40 explicit paths, Gauss-Markov gains. Over R runs with
    // different seeds, |H_VV|^2 and |H_HV|^2 are sums of 40 independent random-phase terms, close
    // to exponential, so each mean over R runs has relative sd 1/sqrt(R) and their ratio about
    // sqrt(2/R); with R = 800 that is 5 %, and the 4-sigma tolerance is 20 % (0.8 dB).
    const xprDb = 8;
    const R = 800;
    const paths: ExplicitPathSpec[] = Array.from({ length: 40 }, (_, l) => ({
      id: `p${l}`,
      delayS: l * 1e-8,
      power: 1 / 40,
      phaseRad: 0,
      departure: unitFromDeg(-60 + 3 * l, 0),
      arrival: unitFromDeg(120 - 3 * l, 0),
    }));
    const timeline = new ExplicitTimeline(paths);
    let co = 0,
      cross = 0;
    for (let r = 0; r < R; r++) {
      const g = new ChannelGenerator({
        carrierHz: fc,
        subframeS: 1e-3,
        subframes: 1,
        transmitter: { array: AntennaArray.ula(1, d), position: [0, 0, 0], velocity: [0, 0, 0], ports: dualPolarizedPortVectors('vh') },
        receiver: { array: AntennaArray.ula(1, d), position: [10, 0, 0], velocity: [0, 0, 0], ports: dualPolarizedPortVectors('vh') },
        timeline,
        fading: { model: 'gauss-markov', speedMps: 1 },
        grid: { domain: 'frequency', subcarriers: 1, spacingHz: 1e6 },
        seed: 1000 + r,
        precision: 'complex128',
        xprDb,
      });
      const H = g.fill(g.allocate(1), 0, 1);
      co += H[0]! ** 2 + H[1]! ** 2 + H[6]! ** 2 + H[7]! ** 2; // VV and HH
      cross += H[2]! ** 2 + H[3]! ** 2 + H[4]! ** 2 + H[5]! ** 2; // VH and HV
    }
    const measuredDb = 10 * Math.log10(co / cross);
    expect(Math.abs(measuredDb - xprDb)).toBeLessThan(0.8);
  });
});
