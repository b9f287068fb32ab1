/**
 * Under-sampling check of a gain process sampled every `stepS` seconds.
 *
 * A Clarke process of spread f_D has its spectrum in |f| <= f_D; with both ends moving the
 * product J0(2 pi f_t tau) J0(2 pi f_r tau) has its spectrum in |f| <= f_t + f_r; a geometric
 * path turns at its signed shift f_l. The samples resolve the process when the highest of these
 * frequencies f_max satisfies f_max * stepS <= 0.5 (Nyquist), i.e. stepS <= 0.5 / f_max.
 */

/**
 * Highest frequency of a path's gain: the sum of its spreads, or |dopplerHz| if larger.
 * @example gainBandwidthHz([280, 93], -500) // 500: |dopplerHz| exceeds the summed spreads 373
 */
export function gainBandwidthHz(dopplersHz: readonly number[], dopplerHz = 0): number {
  let spread = 0;
  for (const f of dopplersHz) spread += f;
  return Math.max(spread, Math.abs(dopplerHz));
}

/**
 * A warning when `bandwidthHz * stepS > 0.5`, naming the step that would resolve it; undefined
 * otherwise. `what` names the step in the message (the scenario key to change).
 * @example underSamplingWarning(2801.9, 1e-3, 'timing.subframeS')
 *   // 'timing.subframeS = 0.001 s under-samples a gain of bandwidth 2801.9 Hz (f T = 2.802 > 0.5); use a step of at most 1.784e-4 s'
 * @example underSamplingWarning(100, 1e-3) // undefined
 */
export function underSamplingWarning(bandwidthHz: number, stepS: number, what = 'the time step'): string | undefined {
  if (!(bandwidthHz >= 0) || !Number.isFinite(bandwidthHz))
    throw new RangeError(`underSamplingWarning(): bandwidthHz must be finite and >= 0, got ${bandwidthHz}`);
  if (!(stepS > 0) || !Number.isFinite(stepS)) throw new RangeError(`underSamplingWarning(): stepS must be a finite number > 0, got ${stepS}`);
  const product = bandwidthHz * stepS;
  if (product <= 0.5) return undefined;
  return (
    `${what} = ${stepS} s under-samples a gain of bandwidth ${bandwidthHz.toFixed(1)} Hz ` +
    `(f T = ${product.toFixed(3)} > 0.5); use a step of at most ${(0.5 / bandwidthHz).toExponential(3)} s`
  );
}
