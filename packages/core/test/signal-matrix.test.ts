/**
 * The helpers a researcher reaches for after pulling a subframe: steering vectors of any
 * direction, the per-subcarrier matrix view, complex singular values and capacity, and the
 * one-call time-varying channel (ChannelStreamFilter). References: numpy (C) and the formulas
 * of docs/conventions.md.
 */
import { describe, expect, it } from 'vitest';
import { AntennaArray, SPEED_OF_LIGHT, unitFromDeg, wavelength, type Vec3 } from '@pathweave/geometry';
import {
  ChannelFilter,
  ChannelGenerator,
  ChannelStreamFilter,
  RandomStream,
  complexSingularValues,
  equalPowerCapacity,
  steeringVector,
  subcarrierMatrix,
  type ChannelSpec,
} from '@pathweave/core';
import { hasPython, pythonJson } from '../../../test/support/python.js';

function complexNoise(values: number, seed: number): Float64Array {
  const rs = new RandomStream(seed, 'test-data');
  const out = new Float64Array(2 * values);
  for (let i = 0; i < out.length; i++) out[i] = rs.nextNormal();
  return out;
}

const still = (position: Vec3, array: AntennaArray) => ({ position, velocity: [0, 0, 0] as Vec3, array });

describe('steeringVector', () => {
  const f = 28e9,
    lambda = wavelength(f);
  const upa = AntennaArray.upa(2, 4, lambda / 2, { yawDeg: 30, pitchDeg: 10 });

  it('receive: r_n(u) = exp(+j k0 dot(u, p_n)) / sqrt(N) (docs/conventions.md), transmit: its conjugate', () => {
    const az = 47,
      el = -12;
    const u = unitFromDeg(az, el);
    const k0 = (2 * Math.PI * f) / SPEED_OF_LIGHT;
    const a = steeringVector(upa, { azimuthDeg: az, elevationDeg: el }, f);
    const t = steeringVector(upa, u, f, { side: 'transmit' });
    const p = upa.globalOffsets;
    for (let n = 0; n < 8; n++) {
      const phase = k0 * (u[0] * p[3 * n]! + u[1] * p[3 * n + 1]! + u[2] * p[3 * n + 2]!);
      expect(a[2 * n]).toBeCloseTo(Math.cos(phase) / Math.sqrt(8), 14);
      expect(a[2 * n + 1]).toBeCloseTo(Math.sin(phase) / Math.sqrt(8), 14);
      expect(t[2 * n]).toBeCloseTo(a[2 * n]!, 15);
      expect(t[2 * n + 1]).toBeCloseTo(-a[2 * n + 1]!, 15);
    }
    const raw = steeringVector(upa, u, f, { normalize: false });
    for (let n = 0; n < 8; n++) expect(Math.hypot(raw[2 * n]!, raw[2 * n + 1]!)).toBeCloseTo(1, 14); // isotropic: unit modulus
  });

  it('a rank-one channel rho a_r a_t^H has the single singular value |rho| sqrt(Nr Nt) (matched beams, textbook)', () => {
    const rx = AntennaArray.ula(4, lambda / 2),
      tx = upa;
    const ar = steeringVector(rx, { azimuthDeg: 170, elevationDeg: 5 }, f, { normalize: false });
    const at = steeringVector(tx, { azimuthDeg: -20, elevationDeg: -8 }, f, { side: 'transmit', normalize: false });
    const H = new Float64Array(2 * 4 * 8);
    const rho = [0.3, -0.4]; // |rho| = 0.5
    for (let r = 0; r < 4; r++)
      for (let c = 0; c < 8; c++) {
        // rho * ar[r] * conj(at[c])
        const pr = ar[2 * r]! * at[2 * c]! + ar[2 * r + 1]! * at[2 * c + 1]!;
        const pi = ar[2 * r + 1]! * at[2 * c]! - ar[2 * r]! * at[2 * c + 1]!;
        H[2 * (r * 8 + c)] = rho[0]! * pr - rho[1]! * pi;
        H[2 * (r * 8 + c) + 1] = rho[0]! * pi + rho[1]! * pr;
      }
    const s = complexSingularValues(H, 0, 4, 8);
    expect(s[0]).toBeCloseTo(0.5 * Math.sqrt(32), 12);
    for (const x of s.slice(1)) expect(x).toBeLessThan(1e-12);
  });

  it('refuses a direction that is not a unit vector, naming the argument', () => {
    expect(() => steeringVector(upa, [1, 1, 0], f)).toThrow('steeringVector(): direction must be a unit vector [x, y, z], got length 1.414');
    expect(() => steeringVector(upa, { azimuthDeg: 0, elevationDeg: 120 }, f)).toThrow(
      'steeringVector(): direction must be { azimuthDeg, elevationDeg } with finite degrees and |elevationDeg| <= 90, got {"azimuthDeg":0,"elevationDeg":120}',
    );
  });
});

describe('complexSingularValues and equalPowerCapacity against numpy', () => {
  it.skipIf(!hasPython('numpy'))('agree with numpy.linalg.svd and the log-det capacity over a sweep of shapes (C)', () => {
    const shapes: [number, number][] = [
      [1, 1],
      [2, 3],
      [4, 4],
      [4, 32],
      [8, 2],
    ];
    const cases = shapes.map(([Nr, Nt], i) => ({ Nr, Nt, data: Array.from(complexNoise(Nr * Nt, 40 + i)) }));
    const ref = pythonJson<{ s: number[]; c: number }[]>(
      `import json, sys, numpy as np
out = []
for c in json.loads(sys.stdin.read()):
    d = np.array(c['data']); H = (d[0::2] + 1j * d[1::2]).reshape(c['Nr'], c['Nt'])
    s = np.linalg.svd(H, compute_uv=False)
    cap = np.log2(np.linalg.det(np.eye(c['Nr']) + (10.0 / c['Nt']) * H @ H.conj().T).real)
    out.append({'s': s.tolist(), 'c': float(cap)})
print(json.dumps(out))`,
      [],
      JSON.stringify(cases),
    );
    cases.forEach((c, i) => {
      const s = complexSingularValues(Float64Array.from(c.data), 0, c.Nr, c.Nt);
      expect(s.length).toBe(Math.min(c.Nr, c.Nt));
      s.forEach((v, j) => expect(Math.abs(v - ref[i]!.s[j]!)).toBeLessThan(1e-12 * ref[i]!.s[0]!));
      expect(equalPowerCapacity(s, 10, c.Nt)).toBeCloseTo(ref[i]!.c, 10);
    });
  });
});

describe('subcarrierMatrix', () => {
  const spec: ChannelSpec = {
    carrierHz: 28e9,
    subframeS: 1e-3,
    subframes: 2,
    seed: 3,
    fading: { model: 'gauss-markov', speedMps: 3 },
    transmitter: still([0, 0, 5], AntennaArray.ula(3, 0.005)),
    receiver: still([20, 0, 1.5], AntennaArray.ula(2, 0.005)),
    paths: [
      { id: 'los', delayS: 70e-9, power: 1e-8, phaseRad: 0, departure: unitFromDeg(0, -10), arrival: unitFromDeg(180, 10) },
      { id: 'r1', delayS: 95e-9, power: 2e-9, phaseRad: 1, departure: unitFromDeg(25, -7), arrival: unitFromDeg(140, 7) },
    ],
    grid: { domain: 'frequency', subcarriers: 8, spacingHz: 120e3 },
    symbols: { perSubframe: 4 },
  };
  it('is the [Nr, Nt] block at (symbol, k) of the subframe, a view without a copy', () => {
    const gen = new ChannelGenerator(spec); // [2, 4, 8, 2, 3]
    const sub = gen.fill(gen.allocate(1), 1, 1);
    const view = subcarrierMatrix(gen, sub, 5, { symbol: 2 });
    expect(view.length).toBe(12);
    expect(view.buffer).toBe(sub.buffer);
    const start = 2 * ((2 * 8 + 5) * 6);
    expect(Array.from(view)).toEqual(Array.from(sub.subarray(start, start + 12)));
    expect(() => subcarrierMatrix(gen, sub, 8)).toThrow('subcarrierMatrix(): k must be < 8 (the subcarriers of the generator), got 8');
    expect(() => subcarrierMatrix(gen, sub, 0, { symbol: 4 })).toThrow(
      'subcarrierMatrix(): symbol must be < 4 (the steps per subframe of the generator), got 4',
    );
    expect(() => subcarrierMatrix(gen, gen.allocate(2), 0)).toThrow(
      'subcarrierMatrix(): subframe must hold one subframe of the generator (384 numbers, [4, 8, 2, 3] complex interleaved), got 768',
    );
  });
});

describe('ChannelStreamFilter: one call per block, taps switched at each step', () => {
  const base: ChannelSpec = {
    carrierHz: 28e9,
    subframeS: 1e-6,
    subframes: 5,
    seed: 8,
    fading: { model: 'gauss-markov', speedMps: 30000 }, // fast fading so each step differs
    transmitter: still([0, 0, 5], AntennaArray.ula(2, 0.005)),
    receiver: still([30, 0, 1.5], AntennaArray.ula(2, 0.005)),
    paths: [
      { id: 'los', delayS: 100e-9, power: 1, phaseRad: 0, departure: unitFromDeg(0, -6), arrival: unitFromDeg(180, 6) },
      { id: 'r1', delayS: 112e-9, power: 0.3, phaseRad: 1, departure: unitFromDeg(20, -5), arrival: unitFromDeg(150, 4) },
    ],
    grid: { domain: 'taps', sampleRateHz: 50e6, count: 8 },
    delayShiftS: 95e-9,
    precision: 'complex128',
  };

  for (const symbols of [undefined, 5]) {
    it(`equals the textbook time-varying FIR with step j in force from sample j * ${symbols === undefined ? 50 : 10} (${symbols === undefined ? 'subframes' : '5 symbols per subframe'}), and blocks of any sizes give the same bits`, () => {
      const spec = { ...base, ...(symbols !== undefined ? { symbols: { perSubframe: symbols } } : {}) };
      const gen = new ChannelGenerator(spec);
      const all = gen.fill(gen.allocate(5), 0, 5) as Float64Array;
      const steps = 5 * gen.stepsPerSubframe,
        per = 50 / gen.stepsPerSubframe; // 1 us at 50 MS/s = 50 samples per subframe
      const stepValues = 2 * gen.valuesPerStep;
      const N = 250,
        x = complexNoise(2 * N, 11);
      // Reference: the plain ChannelFilter with every step queued by hand (ChannelFilter is tested against a loop FIR).
      const manual = new ChannelFilter({ transmitters: 2, receivers: 2, taps: 8 });
      for (let j = 0; j < steps; j++) manual.setTaps(all, j * per, j * stepValues);
      const ref = manual.process(x, N);
      const one = new ChannelStreamFilter(gen).process(x, N);
      expect(Array.from(one)).toEqual(Array.from(ref));
      // The same signal cut into blocks.
      const cutFilter = new ChannelStreamFilter(gen);
      const parts = new Float64Array(2 * 2 * N);
      let start = 0;
      for (const len of [1, 49, 3, 97, 100]) {
        const block = new Float64Array(2 * 2 * len);
        for (let t = 0; t < 2; t++) block.set(x.subarray(2 * (t * N + start), 2 * (t * N + start + len)), 2 * t * len);
        const y = cutFilter.process(block, len);
        for (let r = 0; r < 2; r++) parts.set(y.subarray(2 * r * len, 2 * (r + 1) * len), 2 * (r * N + start));
        start += len;
      }
      expect(Array.from(parts)).toEqual(Array.from(ref));
      // Taps really change between steps (else the test would not see a late or early switch).
      expect(all[0]).not.toBe(all[stepValues]);
    });
  }

  it('starts at a later subframe, and refuses a block past the last subframe naming the sample', () => {
    const gen = new ChannelGenerator(base);
    const all = gen.fill(gen.allocate(5), 0, 5) as Float64Array;
    const f = new ChannelStreamFilter(gen, { firstSubframe: 3 });
    const x = complexNoise(2 * 100, 12);
    const manual = new ChannelFilter({ transmitters: 2, receivers: 2, taps: 8 });
    manual.setTaps(all, 0, 3 * 2 * gen.valuesPerSubframe);
    manual.setTaps(all, 50, 4 * 2 * gen.valuesPerSubframe);
    expect(Array.from(f.process(x, 100))).toEqual(Array.from(manual.process(x, 100)));
    expect(() => f.process(complexNoise(2, 1), 1)).toThrow(
      "ChannelStreamFilter.process(): the block ends at sample 101, past the generator's last subframe (4), which ends at sample 100; generate more subframes",
    );
    expect(() => new ChannelStreamFilter(gen, { firstSubframe: 5 })).toThrow(
      "ChannelStreamFilter(): firstSubframe must be < 5 (the generator's subframes), got 5",
    );
  });
});
