import { describe, expect, it } from 'vitest';
import {
  NR_KAPPA,
  NR_SUBFRAME_TC,
  NR_TC_S,
  nrCyclicPrefixesS,
  nrNominalSymbolStepS,
  nrNumerology,
  nrSymbolSamples,
  nrSymbolTimesS,
  numerologyClock,
  uniformClock,
  uniformSymbolTimesS,
} from '../src/index.js';

describe('NR numerology (3GPP TS 38.211 section 4; check-values.md)', () => {
  it('basic units: T_c = 1 / (480e3 * 4096), kappa = 64 (TS 38.211 4.1 (V secondary))', () => {
    expect(NR_TC_S).toBe(1 / (480e3 * 4096));
    expect(NR_KAPPA).toBe(64);
    expect(NR_SUBFRAME_TC).toBe(1966080);
  });

  it('table 4.2-1 / 4.3.2-1: spacing 15 * 2^mu kHz, 14 symbols per slot, 2^mu slots per subframe (V secondary, numbers M)', () => {
    const expected = [
      [0, 15e3, 14, 1, 14],
      [1, 30e3, 14, 2, 28],
      [2, 60e3, 14, 4, 56],
      [3, 120e3, 14, 8, 112],
      [4, 240e3, 14, 16, 224],
    ];
    for (const [mu, scs, perSlot, slots, perSubframe] of expected) {
      const n = nrNumerology(mu!);
      expect([n.subcarrierSpacingHz, n.symbolsPerSlot, n.slotsPerSubframe, n.symbolsPerSubframe]).toEqual([scs, perSlot, slots, perSubframe]);
      expect(n.slotS).toBeCloseTo(1e-3 / slots!, 15);
    }
    const e = nrNumerology(2, 'extended');
    expect([e.subcarrierSpacingHz, e.symbolsPerSlot, e.symbolsPerSubframe]).toEqual([60e3, 12, 48]);
  });

  it('CP lengths in seconds: 4.6875 / 5.2083 us (mu 0), 2.34375 / 2.8646 us (mu 1), 0.5859 / 1.1068 us (mu 3), extended 4.1667 us (C)', () => {
    const cases: [number, number, number][] = [
      [0, 4.6875e-6, 5.2083e-6],
      [1, 2.34375e-6, 2.8646e-6],
      [3, 0.5859e-6, 1.1068e-6],
    ];
    for (const [mu, short, long] of cases) {
      const n = nrNumerology(mu);
      const cp = nrCyclicPrefixesS(n);
      const longSymbols = [0, 7 * 2 ** mu];
      for (let l = 0; l < n.symbolsPerSubframe; l++) {
        const want = longSymbols.includes(l) ? long : short;
        expect(Math.abs(cp[l]! - want), `mu ${mu} l ${l}`).toBeLessThan(0.5e-10); // check values carry 5 significant digits
      }
    }
    const ext = nrCyclicPrefixesS(nrNumerology(2, 'extended'));
    for (const c of ext) expect(Math.abs(c - 4.1667e-6)).toBeLessThan(0.5e-10);
  });

  it('CP samples at 30 kHz with a 4096-point FFT: 352 on l = 0 and 14, 288 elsewhere (C)', () => {
    const s = nrSymbolSamples(nrNumerology(1), 4096);
    expect(s.cp[0]).toBe(352);
    expect(s.cp[14]).toBe(352);
    expect(s.cp.filter((c) => c === 288)).toHaveLength(26);
    expect(s.sampleRateHz).toBe(122.88e6);
    expect(s.perSubframe).toBe(122880);
    expect(s.cp.reduce((a, b) => a + b, 0) + 28 * 4096).toBe(s.perSubframe);
  });

  it('symbols plus prefixes fill exactly 1 ms in integer T_c for every numerology (C)', () => {
    const all = [0, 1, 2, 3, 4].map((mu) => nrNumerology(mu)).concat([nrNumerology(2, 'extended')]);
    for (const n of all) {
      let sum = 0;
      for (const cp of n.cpTc) {
        expect(Number.isInteger(cp)).toBe(true);
        sum += cp + n.usefulTc;
      }
      expect(Number.isInteger(n.usefulTc)).toBe(true);
      expect(sum, `mu ${n.mu} ${n.cyclicPrefix}`).toBe(NR_SUBFRAME_TC);
      const last = n.symbolsPerSubframe - 1;
      expect(n.startTc[last]! + n.cpTc[last]! + n.usefulTc).toBe(NR_SUBFRAME_TC);
    }
  });

  it('symbol times are uneven; the nominal step is their mean', () => {
    const n = nrNumerology(0);
    const t = nrSymbolTimesS(n);
    expect(t[0]).toBe(0);
    expect(t[1]).toBeCloseTo((160 + 2048) * 64 * NR_TC_S, 18); // CP of l = 0 is 160 kappa at mu = 0
    expect(t[2]! - t[1]!).toBeCloseTo((144 + 2048) * 64 * NR_TC_S, 18);
    expect(nrNominalSymbolStepS(n)).toBe(1e-3 / 14);
    const useful = nrSymbolTimesS(n, 'useful');
    const middle = nrSymbolTimesS(n, 'middle');
    expect(useful[7]! - t[7]!).toBeCloseTo(160 * 64 * NR_TC_S, 18);
    expect(middle[3]! - useful[3]!).toBeCloseTo(1024 * 64 * NR_TC_S, 18);
  });

  it('clocks: numerology steps at true times, uniform steps evenly', () => {
    const n = nrNumerology(1);
    const clock = numerologyClock(n);
    const t = nrSymbolTimesS(n);
    expect(clock.timeS(3)).toBe(t[3]);
    expect(clock.timeS(28 + 14)).toBe(1e-3 + t[14]!);
    expect(clock.stepS).toBe(1e-3 / 28);
    expect(uniformClock(2e-4).timeS(5)).toBe(5 * 2e-4);
    expect(Array.from(uniformSymbolTimesS(4, 1e-3))).toEqual([0, 2.5e-4, 5e-4, 7.5e-4]);
  });

  it('errors name the value and what is allowed', () => {
    expect(() => nrNumerology(5)).toThrow(new RangeError('nrNumerology(): mu must be an integer in 0..4, got 5'));
    expect(() => nrNumerology(-1)).toThrow(RangeError);
    expect(() => nrNumerology(1.5)).toThrow(RangeError);
    expect(() => nrNumerology(1, 'extended')).toThrow(new RangeError('nrNumerology(): the extended cyclic prefix exists only for mu = 2 (60 kHz), got mu = 1'));
    expect(() => nrSymbolSamples(nrNumerology(0), 64)).toThrow(
      new RangeError('nrSymbolSamples(): fftSize 64 gives a cyclic prefix of 4.5 samples at mu = 0; use a larger power of two'),
    );
    expect(() => uniformSymbolTimesS(0, 1e-3)).toThrow(new RangeError('uniformSymbolTimesS(): symbolsPerSubframe must be an integer >= 1, got 0'));
    expect(() => numerologyClock(nrNumerology(0), 'start', 0.5e-3)).toThrow(RangeError);
  });
});
