import { describe, expect, it } from 'vitest';
import { AntennaArray, wavelength, wavenumber, type Vec3 } from '@pathweave/geometry';
import {
  BeamSearch,
  ChannelGenerator,
  beamspaceChannel,
  bestBeamPair,
  codebookColumn,
  effectiveChannel,
  thermalNoisePowerW,
  trackBeamPairs,
  ulaCodebook,
  upaCodebook,
  type ChannelSpec,
  type Codebook,
} from '@pathweave/core';

const FC = 28e9;
const HALF = wavelength(FC) / 2;

/** Largest |G - I| of the Gram matrix W^H W of a codebook. */
function gramError(cb: Codebook): number {
  let worst = 0;
  for (let a = 0; a < cb.beams; a++) {
    for (let b = 0; b < cb.beams; b++) {
      let re = 0,
        im = 0;
      for (let n = 0; n < cb.elements; n++) {
        const ar = cb.weights[2 * (n * cb.beams + a)]!,
          ai = -cb.weights[2 * (n * cb.beams + a) + 1]!;
        const br = cb.weights[2 * (n * cb.beams + b)]!,
          bi = cb.weights[2 * (n * cb.beams + b) + 1]!;
        re += ar * br - ai * bi;
        im += ar * bi + ai * br;
      }
      worst = Math.max(worst, Math.hypot(re - (a === b ? 1 : 0), im));
    }
  }
  return worst;
}

/** Unit vector with local direction cosines (u_y, u_z), in front of the array (+x). */
function fromCosines(uy: number, uz: number): Vec3 {
  return [Math.sqrt(1 - uy * uy - uz * uz), uy, uz];
}

describe('DFT codebooks', () => {
  it('orthogonal DFT beams have an identity Gram matrix (check-values.md: error 4e-16 at N = 8, C)', () => {
    expect(gramError(ulaCodebook(8))).toBeLessThan(1e-12);
    expect(gramError(ulaCodebook(8, { side: 'receive' }))).toBeLessThan(1e-12);
    expect(gramError(ulaCodebook(64))).toBeLessThan(1e-12);
    expect(gramError(upaCodebook(4, 8))).toBeLessThan(1e-12);
  });

  it('oversampled neighbours overlap by the array factor |sin(N psi/2) / (N sin(psi/2))| (check-values.md ULA, V)', () => {
    const N = 8,
      O = 4;
    const cb = ulaCodebook(N, { oversampling: O });
    expect(cb.beams).toBe(32);
    const a = codebookColumn(cb, 10),
      b = codebookColumn(cb, 11);
    let re = 0,
      im = 0;
    for (let n = 0; n < N; n++) {
      re += a[2 * n]! * b[2 * n]! + a[2 * n + 1]! * b[2 * n + 1]!;
      im += a[2 * n]! * b[2 * n + 1]! - a[2 * n + 1]! * b[2 * n]!;
    }
    const psi = (2 * Math.PI) / (O * N);
    expect(Math.abs(Math.hypot(re, im) - Math.abs(Math.sin((N * psi) / 2) / (N * Math.sin(psi / 2))))).toBeLessThan(1e-12);
    expect(gramError(cb)).toBeGreaterThan(0.5); // not orthogonal, as expected
  });

  it('transmit columns are conj(r_tx) / sqrt(N), receive columns r_rx / sqrt(N), of the array response (docs/conventions.md)', () => {
    const k0 = wavenumber(FC);
    const ula = AntennaArray.ula(8, HALF);
    const tx = ulaCodebook(8),
      rx = ulaCodebook(8, { side: 'receive' });
    const r = new Float64Array(16);
    for (const b of [0, 3, 5, 7]) {
      const u = fromCosines(tx.directionCosines[2 * b]!, 0);
      expect(tx.directionCosines[2 * b]).toBeCloseTo((2 * b) / 8 - 1, 15);
      ula.response(r, u, k0);
      const t = codebookColumn(tx, b),
        c = codebookColumn(rx, b);
      for (let n = 0; n < 8; n++) {
        expect(Math.abs(t[2 * n]! - r[2 * n]! / Math.sqrt(8))).toBeLessThan(1e-12);
        expect(Math.abs(t[2 * n + 1]! + r[2 * n + 1]! / Math.sqrt(8))).toBeLessThan(1e-12);
        expect(Math.abs(c[2 * n]! - r[2 * n]! / Math.sqrt(8))).toBeLessThan(1e-12);
        expect(Math.abs(c[2 * n + 1]! - r[2 * n + 1]! / Math.sqrt(8))).toBeLessThan(1e-12);
      }
    }
    const upa = AntennaArray.upa(2, 4, HALF);
    const cb = upaCodebook(2, 4, { side: 'receive', oversampling: [2, 1] });
    expect(cb.beams).toBe(16);
    const ru = new Float64Array(16);
    const b = 2 * 4 + 1; // row beam 2 of 4 (u_z = 0), column beam 1 of 4 (u_y = -0.5)
    expect([cb.directionCosines[2 * b], cb.directionCosines[2 * b + 1]]).toEqual([-0.5, 0]);
    upa.response(ru, fromCosines(-0.5, 0), k0);
    const w = codebookColumn(cb, b);
    for (let n = 0; n < 8; n++) expect(Math.hypot(w[2 * n]! - ru[2 * n]! / Math.sqrt(8), w[2 * n + 1]! - ru[2 * n + 1]! / Math.sqrt(8))).toBeLessThan(1e-12);
  });

  it('refuses bad options', () => {
    expect(() => ulaCodebook(0)).toThrow('ulaCodebook(): elements must be an integer >= 1, got 0');
    expect(() => ulaCodebook(4, { oversampling: 1.5 })).toThrow('ulaCodebook(): oversampling must be an integer >= 1, got 1.5');
    expect(() => codebookColumn(ulaCodebook(4), 4)).toThrow('codebookColumn(): beam must be an integer in [0, 4), got 4');
  });
});

function spec(paths: ChannelSpec['paths'], fading: ChannelSpec['fading'], subframes: number): ChannelSpec {
  return {
    carrierHz: FC,
    subframeS: 0.5e-3,
    subframes,
    transmitter: { array: AntennaArray.ula(8, HALF), position: [0, 0, 6], velocity: [0, 0, 0] },
    receiver: { array: AntennaArray.ula(4, HALF, { yawDeg: 180 }), position: [40, 0, 1.5], velocity: [0, 0, 0] },
    paths,
    fading,
    grid: { domain: 'frequency', subcarriers: 16, spacingHz: 120e3 },
    seed: 21,
    precision: 'complex128',
  };
}

describe('beam space and beam search', () => {
  // Receiver yawed by 180 degrees: its local +x looks along global -x, local +y is global -y.
  const toRx = (uy: number): Vec3 => [-Math.sqrt(1 - uy * uy), -uy, 0];
  const W = ulaCodebook(4, { side: 'receive' }),
    F = ulaCodebook(8);

  it('a path on a DFT beam pair gives array gain Nr Nt on that pair and zero elsewhere (DFT orthogonality)', () => {
    const power = 1e-9;
    const gen = new ChannelGenerator(
      spec([{ id: 'los', delayS: 140e-9, power, phaseRad: 0.4, departure: fromCosines(0.25, 0), arrival: toRx(-0.5) }], { model: 'static' }, 1),
    );
    const H = gen.fill(gen.allocate(1), 0, 1);
    const txBeam = 5; // u = 2 * 5 / 8 - 1 = 0.25
    const rxBeam = 1; // u = 2 * 1 / 4 - 1 = -0.5
    const B = beamspaceChannel(H, 16, W, F);
    for (let k = 0; k < 16; k++) {
      for (let bw = 0; bw < 4; bw++) {
        for (let bf = 0; bf < 8; bf++) {
          const i = 2 * ((k * 4 + bw) * 8 + bf);
          const mag2 = B[i]! ** 2 + B[i + 1]! ** 2;
          if (bw === rxBeam && bf === txBeam)
            expect(Math.abs(mag2 / (power * 32) - 1)).toBeLessThan(1e-12); // |rho|^2 Nr Nt
          else expect(mag2 / power).toBeLessThan(1e-24);
        }
      }
    }
    const eff = effectiveChannel(H, 16, codebookColumn(W, rxBeam), codebookColumn(F, txBeam));
    for (let k = 0; k < 16; k++) expect(eff[2 * k]).toBeCloseTo(B[2 * ((k * 4 + rxBeam) * 8 + txBeam)]!, 20);
    const budget = { transmitPowerDbm: 23, bandwidthHz: 16 * 120e3, noiseFigureDb: 8 };
    const best = bestBeamPair(H, 16, W, F, budget);
    expect([best.receiveBeam, best.transmitBeam]).toEqual([rxBeam, txBeam]);
    expect(best.meanGain / (32 * power)).toBeCloseTo(1, 12);
    // SNR = P_t |rho|^2 Nr Nt / (k T B F), written out.
    expect(best.snrDb).toBeCloseTo(10 * Math.log10((10 ** -0.7 * 32 * power) / thermalNoisePowerW(16 * 120e3, 8)), 10);
  });

  it('tracks the best pair over subframes: equals the brute-force argmax of W^H H F, from a generator or a tensor', () => {
    const S = 40;
    const gen = new ChannelGenerator(
      spec(
        [
          { id: 'los', delayS: 140e-9, power: 1e-9, phaseRad: 0, departure: fromCosines(0.25, 0), arrival: toRx(-0.5) },
          { id: 'wall', delayS: 180e-9, power: 1e-9, phaseRad: 0, departure: fromCosines(-0.5, 0), arrival: toRx(0.5) },
        ],
        { model: 'gauss-markov', speedMps: 10 },
        S,
      ),
    );
    const tensor = gen.fill(gen.allocate(S), 0, S);
    const fromGen = trackBeamPairs(gen, W, F);
    // The generator's shape is typed number[] (it may carry a symbol axis); this one has four axes.
    const fromTensor = trackBeamPairs({ tensor, shape: gen.shape as [number, number, number, number] }, W, F);
    expect(Array.from(fromGen.transmitBeam)).toEqual(Array.from(fromTensor.transmitBeam));
    expect(Array.from(fromGen.gain)).toEqual(Array.from(fromTensor.gain));
    const per = 2 * gen.valuesPerSubframe;
    const pairs = new Set<string>();
    for (let s = 0; s < S; s++) {
      const B = beamspaceChannel(tensor.subarray(s * per, (s + 1) * per), 16, W, F);
      const sums = new Float64Array(32);
      for (let k = 0; k < 16; k++) for (let m = 0; m < 32; m++) sums[m] = sums[m]! + B[2 * (k * 32 + m)]! ** 2 + B[2 * (k * 32 + m) + 1]! ** 2;
      let arg = 0;
      for (let m = 1; m < 32; m++) if (sums[m]! > sums[arg]!) arg = m;
      expect([fromGen.receiveBeam[s], fromGen.transmitBeam[s]]).toEqual([Math.floor(arg / 8), arg % 8]);
      expect(fromGen.gain[s]! / sums[arg]!).toBeCloseTo(1, 12);
      pairs.add(`${fromGen.receiveBeam[s]},${fromGen.transmitBeam[s]}`);
    }
    // Both paths' beam pairs win at some subframe as the two gains fade independently.
    expect(pairs).toEqual(new Set(['1,5', '3,2']));
    const part = trackBeamPairs(gen, W, F, { transmitPowerDbm: 20, bandwidthHz: 2e6 }, 10, 5);
    expect(Array.from(part.transmitBeam)).toEqual(Array.from(fromGen.transmitBeam.subarray(10, 15)));
    expect(part.snrDb!.length).toBe(5);
    expect(() => trackBeamPairs(gen, ulaCodebook(3, { side: 'receive' }), F)).toThrow(
      'trackBeamPairs(): the receive codebook must have Nr = 4 elements, got 3',
    );
    expect(() => new BeamSearch(W, F, 16).search(new Float64Array(10))).toThrow(
      'BeamSearch.search(): H must hold 1024 numbers from offset 0 ([16, 4, 8] complex interleaved), got 10',
    );
  });
});
