import { describe, expect, it } from 'vitest';
import { AntennaArray, unitFromDeg } from '@pathweave/geometry';
import {
  BOLTZMANN_J_PER_K,
  ChannelGenerator,
  NoiseSource,
  RandomStream,
  budgetNoisePowerW,
  channelPowerGain,
  dbmToWatts,
  meanPower,
  noiseVarianceForSnr,
  receivedSnr,
  thermalNoisePowerW,
  wattsToDbm,
} from '@pathweave/core';

function tone(streams: number, samples: number, amplitude: number): Float64Array {
  const y = new Float64Array(2 * streams * samples);
  for (let r = 0; r < streams; r++) {
    for (let n = 0; n < samples; n++) {
      y[2 * (r * samples + n)] = amplitude * Math.cos(0.1 * n + r);
      y[2 * (r * samples + n) + 1] = amplitude * Math.sin(0.1 * n + r);
    }
  }
  return y;
}

describe('NoiseSource at a stated SNR', () => {
  const Nr = 4,
    N = 25_000,
    M = Nr * N;
  // |w|^2 of CN(0, s2) is exponential: std = mean, so the mean over M samples has relative std
  // 1/sqrt(M) = 0.32 %; 4 standard deviations give the tolerance (a 6e-5 two-sided risk).
  const relTol = 4 / Math.sqrt(M);

  for (const snrDb of [-5, 10, 30]) {
    it(`measured SNR equals the SNR asked for (${snrDb} dB) within 4/sqrt(Nr N), per-call measurement asked for`, () => {
      const clean = tone(Nr, N, 0.7);
      const y = clean.slice();
      const level = new NoiseSource({ seed: 11, streams: Nr }).addAtSnr(y, N, snrDb, { perCall: true });
      expect(level.signalPower).toBeCloseTo(0.49, 12); // |0.7 e^{j..}|^2
      let noise = 0,
        re2 = 0,
        pseudoRe = 0,
        pseudoIm = 0;
      for (let i = 0; i < y.length; i += 2) {
        const wr = y[i]! - clean[i]!,
          wi = y[i + 1]! - clean[i + 1]!;
        noise += wr * wr + wi * wi;
        re2 += wr * wr;
        pseudoRe += wr * wr - wi * wi; // E[w^2] = 0 for circular noise
        pseudoIm += 2 * wr * wi;
      }
      const noisePower = noise / M;
      const measuredSnr = level.signalPower / noisePower;
      const asked = 10 ** (snrDb / 10);
      expect(Math.abs(measuredSnr / asked - 1)).toBeLessThan(relTol);
      // Half the power in each quadrature: re^2 has relative std sqrt(2)/sqrt(M).
      expect(Math.abs(re2 / M / (noisePower / 2) - 1)).toBeLessThan((4 * Math.SQRT2) / Math.sqrt(M));
      // Circularity: |mean w^2| / s2 has std 1/sqrt(M).
      expect(Math.hypot(pseudoRe, pseudoIm) / M / noisePower).toBeLessThan(4 / Math.sqrt(M));
    });
  }

  it('takes a reference power instead of the measured one', () => {
    const y = tone(2, 10, 1);
    const level = new NoiseSource({ seed: 1, streams: 2 }).addAtSnr(y, 10, 20, 4);
    expect(level).toEqual({ signalPower: 4, noiseVariance: 0.04 });
    expect(noiseVarianceForSnr(2, 10)).toBeCloseTo(0.2, 15);
  });

  it('by default keeps one noise floor for the run: a fade of the signal does not lower the noise', () => {
    // Two blocks, the second 20 dB weaker (a fade). With a fixed reference the noise variance is
    // the same in both (sigma^2 = P_ref / SNR); per-call measurement (automatic gain control)
    // lowers it by the same 20 dB, so the SNR of the faded block would stay at 10 dB.
    const strong = tone(2, 100, 1),
      weak = tone(2, 100, 0.1);
    const fixed = new NoiseSource({ seed: 5, streams: 2, referencePower: 1 });
    const a = fixed.addAtSnr(strong, 100, 10),
      b = fixed.addAtSnr(weak, 100, 10);
    expect(a).toEqual({ signalPower: 1, noiseVariance: 0.1 });
    expect(b).toEqual({ signalPower: 1, noiseVariance: 0.1 });
    const agc = new NoiseSource({ seed: 5, streams: 2 });
    agc.addAtSnr(tone(2, 100, 1), 100, 10, { perCall: true });
    const c = agc.addAtSnr(tone(2, 100, 0.1), 100, 10, { perCall: true });
    expect(c.signalPower).toBeCloseTo(0.01, 14);
    expect(c.noiseVariance).toBeCloseTo(0.001, 14);
  });

  it('a link budget sets the thermal floor k T B F: the noise power added matches it within 4/sqrt(M)', () => {
    const budget = { transmitPowerDbm: 23, bandwidthHz: 100e6, noiseFigureDb: 7 };
    const src = new NoiseSource({ seed: 9, streams: 2, budget });
    // k T B F at 290 K, 100 MHz, NF 7 dB: -173.975 + 80 + 7 = -86.975 dBm (C: 10 log10(1.380649e-23 * 290 * 1e8) + 30 + 7).
    expect(wattsToDbm(src.noiseFloor!)).toBeCloseTo(-86.975, 3);
    const Ns = 50_000;
    const y = src.add(new Float64Array(2 * 2 * Ns), Ns);
    // |w|^2 exponential: relative std of the mean over 2 Ns samples is 1/sqrt(2 Ns); 4 sigma.
    expect(Math.abs(meanPower(y, 2, Ns) / src.noiseFloor! - 1)).toBeLessThan(4 / Math.sqrt(2 * Ns));
  });

  it('adds the same noise whether the signal comes in one block or many (keyed by absolute sample)', () => {
    const Nb = 1000;
    const one = new Float64Array(2 * 2 * Nb);
    new NoiseSource({ seed: 3, streams: 2 }).add(one, Nb, 0.3);
    const src = new NoiseSource({ seed: 3, streams: 2 });
    const parts = new Float64Array(2 * 2 * Nb);
    let start = 0;
    for (const len of [1, 255, 256, 2, 486]) {
      const block = new Float64Array(2 * 2 * len);
      src.add(block, len, 0.3);
      for (let r = 0; r < 2; r++) parts.set(block.subarray(2 * r * len, 2 * (r + 1) * len), 2 * (r * Nb + start));
      start += len;
    }
    expect(start).toBe(Nb);
    expect(Array.from(parts)).toEqual(Array.from(one));
    // Random access: samples [600, 610) again give the same numbers.
    const again = new Float64Array(2 * 2 * 10);
    src.add(again, 10, 0.3, 600);
    expect(Array.from(again.subarray(0, 20))).toEqual(Array.from(one.subarray(1200, 1220)));
    // Another key gives other noise.
    const other = new Float64Array(2 * 2 * Nb);
    new NoiseSource({ seed: 3, streams: 2, key: 'noise-2' }).add(other, Nb, 0.3);
    expect(other[0]).not.toBe(one[0]);
  });

  it('refuses bad input with clear messages', () => {
    const src = new NoiseSource({ seed: 1, streams: 2 });
    expect(() => src.addAtSnr(new Float64Array(40), 10, Number.NaN)).toThrow('NoiseSource.addAtSnr(): snrDb must be a finite number, got NaN');
    expect(() => src.addAtSnr(new Float64Array(40), 10, Infinity)).toThrow('NoiseSource.addAtSnr(): snrDb must be a finite number, got Infinity');
    expect(() => src.addAtSnr(new Float64Array(60), 10, 10)).toThrow(
      'NoiseSource.addAtSnr(): y must hold 2 streams of 10 samples (40 numbers, [streams, samples] complex interleaved), got 60 numbers (3 streams)',
    );
    expect(() => src.add(new Float64Array(0), 0, 1)).toThrow('NoiseSource.add(): samples must be an integer >= 1, got 0');
    expect(() => src.addAtSnr(new Float64Array(40), 10, 10)).toThrow(
      'NoiseSource.addAtSnr(): no reference power for the SNR: create the source with referencePower (the received signal power per antenna, fixed for the run), ' +
        "pass referencePower here, or pass { perCall: true } to scale the noise to each call's own signal power (this behaves like automatic gain control)",
    );
    expect(() => src.add(new Float64Array(40), 10)).toThrow(
      'NoiseSource.add(): no noise power: give variance, or create the source with noisePowerW (a stated floor) or budget (thermal k T B F)',
    );
    expect(() => new NoiseSource({ seed: 1, streams: 1, noisePowerW: 1, budget: { transmitPowerDbm: 0, bandwidthHz: 1 } })).toThrow(
      'NoiseSource(): give noisePowerW or budget, not both',
    );
    expect(() => src.addAtSnr(new Float64Array(40), 10, 10, { perCall: true })).toThrow(
      'NoiseSource.addAtSnr(): the signal has zero power, so an SNR cannot set the noise; give referencePower, got signal power 0',
    );
    expect(() => src.add(new Float64Array(40), 10, -1)).toThrow('NoiseSource.add(): variance must be a finite number >= 0, got -1');
    expect(() => new NoiseSource({ seed: -1, streams: 1 })).toThrow('RandomStream(): seed must be an integer in [0, 2^53), got -1');
  });
});

describe('link budget', () => {
  it('k T B at 290 K is -173.98 dBm/Hz', () => {
    // k = 1.380649e-23 J/K, CODATA 2018, exact in the 2019 SI (M); 10 log10(k 290) + 30 = -173.975 dBm/Hz (C).
    expect(BOLTZMANN_J_PER_K).toBe(1.380649e-23);
    expect(Math.abs(wattsToDbm(thermalNoisePowerW(1)) - -173.98)).toBeLessThan(0.005); // 2-decimal value (C)
    // -174 dBm/Hz at 290 K: common practice, good to 0.03 dB.
    expect(Math.abs(wattsToDbm(thermalNoisePowerW(1)) - -174)).toBeLessThan(0.03);
    // Scaling: bandwidth adds 10 log10(B), noise figure adds F, temperature scales linearly.
    expect(wattsToDbm(thermalNoisePowerW(100e6, 7))).toBeCloseTo(-173.97518719 + 80 + 7, 6);
    expect(thermalNoisePowerW(1, 0, 580) / thermalNoisePowerW(1)).toBeCloseTo(2, 14);
    expect(budgetNoisePowerW({ transmitPowerDbm: 0, bandwidthHz: 1e6, noiseFigureDb: 3, temperatureK: 300 })).toBeCloseTo(
      1.380649e-23 * 300 * 1e6 * 10 ** 0.3,
      30,
    );
    expect(dbmToWatts(30)).toBe(1);
    expect(wattsToDbm(1e-3)).toBe(0);
  });

  it('received SNR per subframe of a one-path channel is P_t |rho|^2 / (k T B F) (isotropic elements, |r_n| = 1)', () => {
    const gen = new ChannelGenerator({
      carrierHz: 28e9,
      subframeS: 1e-3,
      subframes: 3,
      transmitter: { array: AntennaArray.ula(4, 0.0053), position: [0, 0, 6], velocity: [0, 0, 0] },
      receiver: { array: AntennaArray.ula(2, 0.0053), position: [50, 0, 1.5], velocity: [0, 0, 0] },
      paths: [{ id: 'los', delayS: 170e-9, power: 1e-10, phaseRad: 0.3, departure: unitFromDeg(0, -5), arrival: unitFromDeg(180, 5) }],
      fading: { model: 'static' },
      grid: { domain: 'frequency', subcarriers: 64, spacingHz: 120e3 },
      seed: 1,
      precision: 'complex128',
    });
    const H = gen.fill(gen.allocate(3), 0, 3);
    const budget = { transmitPowerDbm: 20, bandwidthHz: 100e6, noiseFigureDb: 7 };
    // The generator's shape is typed number[] (it may carry a symbol axis); this one has four axes.
    const shape = gen.shape as [number, number, number, number];
    const snr = receivedSnr(H, shape, 'frequency', budget);
    // 20 dBm - 100 dB - (-173.975 + 80 + 7) dBm = 6.975 dB (C, from the formulas above).
    for (let s = 0; s < 3; s++) expect(snr.snrDb[s]).toBeCloseTo(20 - 100 - (10 * Math.log10(1.380649e-23 * 290 * 100e6 * 10 ** 0.7) + 30), 9);
    expect(Array.from(channelPowerGain(H, shape, 'frequency')).every((g) => Math.abs(g / 1e-10 - 1) < 1e-12)).toBe(true);
  });

  it('channelPowerGain of taps sums the tap energy', () => {
    const h = Float64Array.of(1, 0, 0, 2); // taps 1 and 2j, Nr = Nt = 1
    expect(channelPowerGain(h, [1, 2, 1, 1], 'taps')[0]).toBe(5);
    expect(channelPowerGain(h, [1, 2, 1, 1], 'frequency')[0]).toBe(2.5);
    expect(() => channelPowerGain(h, [1, 3, 1, 1], 'taps')).toThrow('channelPowerGain(): tensor must hold 6 numbers ([1, 3, 1, 1] complex interleaved), got 4');
  });

  it('meanPower', () => {
    const rs = new RandomStream(0, 'x');
    const y = new Float64Array(8).map(() => rs.nextNormal());
    let s = 0;
    for (const v of y) s += v * v;
    expect(meanPower(y, 2, 2)).toBeCloseTo(s / 4, 14);
  });
});
