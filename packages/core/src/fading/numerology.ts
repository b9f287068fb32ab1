/**
 * 5G NR numerology and OFDM symbol timing (3GPP TS 38.211, section 4 and 5.3.1).
 *
 * Subcarrier spacing 15 * 2^mu kHz, mu = 0..4; 2^mu slots per 1 ms subframe; 14 symbols per slot
 * with the normal cyclic prefix, 12 with the extended one (mu = 2 only). Time is counted in the
 * basic unit T_c = 1 / (480e3 * 4096) s with kappa = T_s / T_c = 64, so every length here is an
 * exact integer number of T_c:
 *   useful symbol  N_u = 2048 kappa 2^-mu
 *   normal CP      N_CP,l = 144 kappa 2^-mu + 16 kappa  for l = 0 and l = 7 * 2^mu, else 144 kappa 2^-mu
 *   extended CP    N_CP,l = 512 kappa 2^-mu
 * where l counts the symbols of the subframe (l = 7 * 2^mu starts the second half subframe).
 *
 * Arrays returned here are per symbol of one subframe, index l = 0 .. symbolsPerSubframe - 1.
 */

/**
 * The NR basic time unit T_c = 1 / (480 kHz * 4096) in seconds.
 * @example NR_TC_S // 5.086e-10
 */
export const NR_TC_S = 1 / (480e3 * 4096);
/**
 * kappa = T_s / T_c = 64 (T_s = 1 / (15 kHz * 2048), the LTE unit).
 * @example 1 / (15e3 * 2048) / NR_TC_S // 64
 */
export const NR_KAPPA = 64;
/**
 * One NR subframe, 1 ms, in T_c units (1 966 080).
 * @example NR_SUBFRAME_TC // 1966080
 */
export const NR_SUBFRAME_TC = 480e3 * 4096 * 1e-3;
/**
 * The NR subframe duration in seconds.
 * @example NR_SUBFRAME_S // 0.001
 */
export const NR_SUBFRAME_S = 1e-3;

/**
 * Cyclic prefix kind of TS 38.211.
 * @example nrNumerology(2, 'extended' satisfies CyclicPrefix).symbolsPerSlot // 12
 */
export type CyclicPrefix = 'normal' | 'extended';

/**
 * Where within a symbol its time is taken.
 * @example nrSymbolTimesS(nrNumerology(0), 'useful' satisfies SymbolReference)[0] // 5.2083e-6: the first useful sample of mu = 0 (CP of 160 T_s)
 */
export type SymbolReference = 'start' | 'useful' | 'middle';

/**
 * One numerology, with the per-symbol lengths of a subframe in integer T_c units.
 * @example
 * const mu3: NrNumerology = nrNumerology(3);
 * [mu3.subcarrierSpacingHz, mu3.symbolsPerSubframe, mu3.usefulTc] // [120000, 112, 16384]
 */
export interface NrNumerology {
  /** mu, 0..4. */
  mu: number;
  cyclicPrefix: CyclicPrefix;
  /** 15e3 * 2^mu. */
  subcarrierSpacingHz: number;
  /** 14 (normal CP) or 12 (extended CP). */
  symbolsPerSlot: number;
  /** 2^mu. */
  slotsPerSubframe: number;
  /** symbolsPerSlot * 2^mu. */
  symbolsPerSubframe: number;
  /** 1e-3 / 2^mu. */
  slotS: number;
  /** Useful (FFT) part of every symbol, T_c units: 2048 kappa 2^-mu. */
  usefulTc: number;
  /** Cyclic prefix of symbol l of the subframe, T_c units. */
  cpTc: readonly number[];
  /** Start of symbol l (start of its CP) from the start of the subframe, T_c units. */
  startTc: readonly number[];
}

/**
 * The numerology mu of TS 38.211 with its CP lengths.
 * @throws RangeError for mu outside 0..4 or an extended CP with mu != 2
 * @example nrNumerology(1).cpTc[0] // 5632 (= 144 * 64 / 2 + 16 * 64)
 * @example nrNumerology(2, 'extended').symbolsPerSubframe // 48
 */
export function nrNumerology(mu: number, cyclicPrefix: CyclicPrefix = 'normal'): NrNumerology {
  if (!Number.isInteger(mu) || mu < 0 || mu > 4) throw new RangeError(`nrNumerology(): mu must be an integer in 0..4, got ${mu}`);
  if (cyclicPrefix !== 'normal' && cyclicPrefix !== 'extended') {
    throw new TypeError(`nrNumerology(): cyclicPrefix must be "normal" or "extended", got ${String(cyclicPrefix)}`);
  }
  if (cyclicPrefix === 'extended' && mu !== 2) {
    throw new RangeError(`nrNumerology(): the extended cyclic prefix exists only for mu = 2 (60 kHz), got mu = ${mu}`);
  }
  const slots = 2 ** mu;
  const symbolsPerSlot = cyclicPrefix === 'normal' ? 14 : 12;
  const symbols = symbolsPerSlot * slots;
  const usefulTc = (2048 * NR_KAPPA) / slots;
  const cpTc: number[] = [];
  const startTc: number[] = [];
  let t = 0;
  for (let l = 0; l < symbols; l++) {
    let cp: number;
    if (cyclicPrefix === 'extended') cp = (512 * NR_KAPPA) / slots;
    else cp = (144 * NR_KAPPA) / slots + (l === 0 || l === 7 * slots ? 16 * NR_KAPPA : 0);
    cpTc.push(cp);
    startTc.push(t);
    t += cp + usefulTc;
  }
  return {
    mu,
    cyclicPrefix,
    subcarrierSpacingHz: 15e3 * slots,
    symbolsPerSlot,
    slotsPerSubframe: slots,
    symbolsPerSubframe: symbols,
    slotS: 1e-3 / slots,
    usefulTc,
    cpTc,
    startTc,
  };
}

/**
 * True (uneven) times of the symbols of one subframe, seconds from the subframe start.
 * `reference` picks the point of each symbol: 'start' the start of its CP (t_start of TS 38.211
 * 5.3.1), 'useful' the start of the FFT window (after the CP), 'middle' the middle of the FFT window.
 * @example nrSymbolTimesS(nrNumerology(0))[1] // 7.1875e-5 (= (160 + 2048) * 64 T_c)
 */
export function nrSymbolTimesS(numerology: NrNumerology, reference: SymbolReference = 'start'): Float64Array {
  const out = new Float64Array(numerology.symbolsPerSubframe);
  for (let l = 0; l < out.length; l++) {
    let tc = numerology.startTc[l]!;
    if (reference === 'useful') tc += numerology.cpTc[l]!;
    else if (reference === 'middle') tc += numerology.cpTc[l]! + numerology.usefulTc / 2;
    else if (reference !== 'start') throw new TypeError(`nrSymbolTimesS(): reference must be "start", "useful" or "middle", got ${String(reference)}`);
    out[l] = tc * NR_TC_S;
  }
  return out;
}

/**
 * Cyclic prefix lengths of the symbols of one subframe in seconds.
 * @example nrCyclicPrefixesS(nrNumerology(0))[0] // 5.2083e-6
 */
export function nrCyclicPrefixesS(numerology: NrNumerology): Float64Array {
  return Float64Array.from(numerology.cpTc, (tc) => tc * NR_TC_S);
}

/**
 * The nominal uniform symbol step 1 ms / symbolsPerSubframe, seconds (the mean symbol duration,
 * which the discrete recursions use as their step).
 * @example nrNominalSymbolStepS(nrNumerology(1)) // 3.5714e-5 (= 1e-3 / 28)
 */
export function nrNominalSymbolStepS(numerology: NrNumerology): number {
  return NR_SUBFRAME_S / numerology.symbolsPerSubframe;
}

/**
 * Lengths of one symbol in samples at a given FFT size (sample rate fftSize * subcarrier spacing).
 * @example
 * const s: NrSymbolSamples = nrSymbolSamples(nrNumerology(0), 2048);
 * [s.useful, s.cp[0], s.cp[1], s.perSubframe, s.sampleRateHz] // [2048, 160, 144, 30720, 30720000]
 */
export interface NrSymbolSamples {
  /** FFT size N (useful part in samples). */
  useful: number;
  /** CP of symbol l in samples. */
  cp: number[];
  /** Samples per 1 ms subframe (1 ms times the sample rate). */
  perSubframe: number;
  /** fftSize * subcarrierSpacingHz. */
  sampleRateHz: number;
}

/**
 * CP and symbol lengths in samples at FFT size `fftSize`; one T_c is fftSize / (4096 * 32 / 2^mu)
 * samples, so small FFT sizes may not give whole samples, which is refused.
 * @throws RangeError when fftSize is not an integer >= 1 or a CP is not a whole number of samples
 * @example nrSymbolSamples(nrNumerology(1), 4096).cp.slice(0, 2) // [352, 288]
 */
export function nrSymbolSamples(numerology: NrNumerology, fftSize: number): NrSymbolSamples {
  if (!Number.isInteger(fftSize) || fftSize < 1) throw new RangeError(`nrSymbolSamples(): fftSize must be an integer >= 1, got ${fftSize}`);
  const perTc = (fftSize * numerology.slotsPerSubframe) / (4096 * 32); // samples per T_c
  const cp = numerology.cpTc.map((tc) => tc * perTc);
  const bad = cp.find((c) => !Number.isInteger(c));
  if (bad !== undefined) {
    throw new RangeError(`nrSymbolSamples(): fftSize ${fftSize} gives a cyclic prefix of ${bad} samples at mu = ${numerology.mu}; use a larger power of two`);
  }
  return { useful: fftSize, cp, perSubframe: NR_SUBFRAME_TC * perTc, sampleRateHz: fftSize * numerology.subcarrierSpacingHz };
}

/**
 * Uniform symbol start times of the generic case (`timing.symbolsPerSubframe`): l * subframeS / n.
 * @example uniformSymbolTimesS(4, 1e-3) // Float64Array [0, 2.5e-4, 5e-4, 7.5e-4]
 */
export function uniformSymbolTimesS(symbolsPerSubframe: number, subframeS: number): Float64Array {
  if (!Number.isInteger(symbolsPerSubframe) || symbolsPerSubframe < 1) {
    throw new RangeError(`uniformSymbolTimesS(): symbolsPerSubframe must be an integer >= 1, got ${symbolsPerSubframe}`);
  }
  if (!(subframeS > 0) || !Number.isFinite(subframeS)) throw new RangeError(`uniformSymbolTimesS(): subframeS must be a finite number > 0, got ${subframeS}`);
  return Float64Array.from({ length: symbolsPerSubframe }, (_, l) => (l * subframeS) / symbolsPerSubframe);
}
