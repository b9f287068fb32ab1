/**
 * Frequency and time grids (docs/conventions.md): f_k = (k - floor(K / 2)) df for k = 0..K-1 (centred
 * order, DC at index floor(K / 2)); subframe s starts at s T_s; tap n sits at n / sampleRate.
 */

/**
 * Baseband offsets of the K subcarriers, hertz.
 * @example subcarrierOffsetsHz(4, 1) // Float64Array [-2, -1, 0, 1]
 */
export function subcarrierOffsetsHz(subcarriers: number, spacingHz: number): Float64Array {
  const out = new Float64Array(subcarriers);
  const centre = Math.floor(subcarriers / 2);
  for (let k = 0; k < subcarriers; k++) out[k] = (k - centre) * spacingHz;
  return out;
}

/**
 * Start times of subframes [first, first + count), seconds.
 * @example subframeTimesS(0, 3, 1e-3) // Float64Array [0, 0.001, 0.002]
 */
export function subframeTimesS(first: number, count: number, subframeS: number): Float64Array {
  const out = new Float64Array(count);
  for (let s = 0; s < count; s++) out[s] = (first + s) * subframeS;
  return out;
}

/**
 * Tap delays n / sampleRate for n = 0..count-1, seconds.
 * @example tapDelaysS(3, 1e9) // Float64Array [0, 1e-9, 2e-9]
 */
export function tapDelaysS(count: number, sampleRateHz: number): Float64Array {
  const out = new Float64Array(count);
  for (let n = 0; n < count; n++) out[n] = n / sampleRateHz;
  return out;
}
