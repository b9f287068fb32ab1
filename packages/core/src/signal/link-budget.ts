/**
 * Link budget: thermal noise k T B F and the received SNR of generated channels.
 *
 * Channel tensors (docs/conventions.md layout, row-major, complex interleaved):
 *   frequency domain [S, K, Nr, Nt], tap-delay [S, count, Nr, Nt].
 * Path powers are absolute (E|rho|^2 includes spreading and reflection losses), so with the
 * transmit power P_t split equally over Nt streams of unit-power, independent symbols
 * (E[x x^H] = (P_t / Nt) I) the mean received power per receive antenna in subframe s is
 *   P_r(s) = P_t G(s),  G(s) = ||H_s||_F^2 / (K Nr Nt)  (mean over subcarriers)
 *   or, for taps, G(s) = sum_d ||h_s[d]||_F^2 / (Nr Nt)  (energy over the taps),
 * and the received SNR per antenna is P_r(s) / (k T B F).
 */
import { checkFinite, checkInteger, checkLength, checkPositive, type ComplexArray } from './checks.js';

/**
 * Boltzmann's constant, J/K (CODATA 2018; exact in the 2019 SI).
 * @example 10 * Math.log10(BOLTZMANN_J_PER_K * REFERENCE_TEMPERATURE_K * 1e3) // -173.975 (dBm in 1 Hz at 290 K)
 */
export const BOLTZMANN_J_PER_K = 1.380649e-23;

/**
 * Reference noise temperature T0 = 290 K (common practice, as in the noise-figure definition).
 * @example REFERENCE_TEMPERATURE_K // 290
 */
export const REFERENCE_TEMPERATURE_K = 290;

/**
 * What the link budget states.
 * @example budgetNoisePowerW({ transmitPowerDbm: 23, bandwidthHz: 100e6, noiseFigureDb: 7 } satisfies LinkBudget) // 2.0067e-12 (-86.98 dBm)
 */
export interface LinkBudget {
  /** Total transmit power over all transmit antennas, dBm. */
  transmitPowerDbm: number;
  /** Noise bandwidth B, Hz (the sample rate for a baseband signal sampled at B). */
  bandwidthHz: number;
  /** Receiver noise figure F, dB. Default 0. */
  noiseFigureDb?: number;
  /** Noise temperature T, K. Default 290. */
  temperatureK?: number;
}

/**
 * dBm to watts: 10^((dBm - 30) / 10).
 * @example dbmToWatts(30) // 1
 */
export function dbmToWatts(dbm: number): number {
  checkFinite('dbmToWatts()', 'dbm', dbm);
  return 10 ** ((dbm - 30) / 10);
}

/**
 * Watts to dBm: 10 log10(W) + 30.
 * @example wattsToDbm(1e-3) // 0
 */
export function wattsToDbm(watts: number): number {
  checkPositive('wattsToDbm()', 'watts', watts);
  return 10 * Math.log10(watts) + 30;
}

/**
 * Thermal noise power N = k T B F, watts.
 * @example wattsToDbm(thermalNoisePowerW(1)) // -173.975 (dBm/Hz at 290 K)
 * @example wattsToDbm(thermalNoisePowerW(100e6, 7)) // -86.975
 */
export function thermalNoisePowerW(bandwidthHz: number, noiseFigureDb = 0, temperatureK = REFERENCE_TEMPERATURE_K): number {
  const fn = 'thermalNoisePowerW()';
  checkPositive(fn, 'bandwidthHz', bandwidthHz);
  checkFinite(fn, 'noiseFigureDb', noiseFigureDb);
  checkPositive(fn, 'temperatureK', temperatureK);
  return BOLTZMANN_J_PER_K * temperatureK * bandwidthHz * 10 ** (noiseFigureDb / 10);
}

/**
 * Noise power of a link budget, watts (k T B F).
 * @example budgetNoisePowerW({ transmitPowerDbm: 20, bandwidthHz: 1 }) // 4.0039e-21
 */
export function budgetNoisePowerW(budget: LinkBudget): number {
  checkBudget('budgetNoisePowerW()', budget);
  return thermalNoisePowerW(budget.bandwidthHz, budget.noiseFigureDb ?? 0, budget.temperatureK ?? REFERENCE_TEMPERATURE_K);
}

/**
 * Mean power gain G(s) per subframe (see the module comment) of a channel tensor
 * [S, bins, Nr, Nt]: `domain` 'frequency' averages over the K subcarriers, 'taps' sums the
 * tap energies.
 * @example channelPowerGain(Float64Array.of(3, 4), [1, 1, 1, 1], 'frequency') // Float64Array [25]
 */
export function channelPowerGain(tensor: ComplexArray, shape: readonly [number, number, number, number], domain: 'frequency' | 'taps'): Float64Array {
  const fn = 'channelPowerGain()';
  const [S, bins, Nr, Nt] = checkShape(fn, shape);
  checkLength(fn, 'tensor', tensor, 2 * S * bins * Nr * Nt, `[${S}, ${bins}, ${Nr}, ${Nt}] complex interleaved`);
  if (domain !== 'frequency' && domain !== 'taps') throw new RangeError(`${fn}: domain must be 'frequency' or 'taps', got ${String(domain)}`);
  const per = 2 * bins * Nr * Nt;
  const scale = domain === 'frequency' ? 1 / (bins * Nr * Nt) : 1 / (Nr * Nt);
  const out = new Float64Array(S);
  for (let s = 0; s < S; s++) {
    let sum = 0;
    for (let i = s * per; i < (s + 1) * per; i++) sum += tensor[i]! * tensor[i]!;
    out[s] = sum * scale;
  }
  return out;
}

/**
 * Received power and SNR per subframe.
 * @example
 * const snr: ReceivedSnr = receivedSnr(Float64Array.of(1e-5, 0), [1, 1, 1, 1], 'frequency', { transmitPowerDbm: 30, bandwidthHz: 1e8 });
 * [snr.receivedPowerW[0], snr.noisePowerW] // [1e-10, 4.0039e-13]
 */
export interface ReceivedSnr {
  /** Mean received power per antenna P_r(s), watts. */
  receivedPowerW: Float64Array;
  /** Noise power k T B F, watts. */
  noisePowerW: number;
  /** P_r(s) / N, linear. */
  snr: Float64Array;
  /** 10 log10 of snr. */
  snrDb: Float64Array;
}

/**
 * Received SNR per receive antenna for every subframe of a channel tensor, from a link budget
 * (module comment: P_r = P_t G(s), SNR = P_r / (k T B F)).
 * @example receivedSnr(Float64Array.of(1e-5, 0), [1, 1, 1, 1], 'frequency', { transmitPowerDbm: 30, bandwidthHz: 1e8 }).snrDb[0] // 23.98
 */
export function receivedSnr(
  tensor: ComplexArray,
  shape: readonly [number, number, number, number],
  domain: 'frequency' | 'taps',
  budget: LinkBudget,
): ReceivedSnr {
  const noisePowerW = budgetNoisePowerW(budget);
  const gain = channelPowerGain(tensor, shape, domain);
  const transmitW = dbmToWatts(budget.transmitPowerDbm);
  const S = gain.length;
  const receivedPowerW = new Float64Array(S);
  const snr = new Float64Array(S);
  const snrDb = new Float64Array(S);
  for (let s = 0; s < S; s++) {
    receivedPowerW[s] = transmitW * gain[s]!;
    snr[s] = receivedPowerW[s]! / noisePowerW;
    snrDb[s] = 10 * Math.log10(snr[s]!);
  }
  return { receivedPowerW, noisePowerW, snr, snrDb };
}

function checkBudget(fn: string, budget: LinkBudget): void {
  if (budget === null || typeof budget !== 'object')
    throw new TypeError(`${fn}: budget must be an object { transmitPowerDbm, bandwidthHz, noiseFigureDb?, temperatureK? }, got ${budget}`);
  checkFinite(fn, 'budget.transmitPowerDbm', budget.transmitPowerDbm);
  checkPositive(fn, 'budget.bandwidthHz', budget.bandwidthHz);
  if (budget.noiseFigureDb !== undefined) checkFinite(fn, 'budget.noiseFigureDb', budget.noiseFigureDb);
  if (budget.temperatureK !== undefined) checkPositive(fn, 'budget.temperatureK', budget.temperatureK);
}

function checkShape(fn: string, shape: readonly number[]): [number, number, number, number] {
  if (!Array.isArray(shape) || shape.length !== 4) throw new RangeError(`${fn}: shape must be [S, bins, Nr, Nt], got ${JSON.stringify(shape)}`);
  shape.forEach((v, i) => checkInteger(fn, `shape[${i}]`, v, 1));
  return shape as unknown as [number, number, number, number];
}
