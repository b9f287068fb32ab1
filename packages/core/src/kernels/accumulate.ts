/**
 * The assembler's inner kernel, kept apart so faster versions (WebAssembly SIMD, ...) can
 * replace it and be tested against this plain one.
 *
 * Layouts (complex interleaved re/im, row-major):
 *   weights  [bins, L]        w_(k,l) = rho_l c_(k,l), float64
 *   products [L, M]           r_rx r_tx^T of each path, M = Nr Nt, float64
 *   out      [bins, M]        written from `outOffset` (float32 or float64)
 * out[k, m] = sum_l weights[k, l] products[l, m]: a complex matrix product.
 */

/**
 * Output element type of the kernels.
 * @example const out: KernelOut = new Float32Array(2 * 4); // [bins = 1, M = 4] complex64
 */
export type KernelOut = Float32Array | Float64Array;

/**
 * Plain JavaScript reference: out[k, :] = sum_l w[k, l] P[l, :], accumulated in float64 in
 * `scratch` (2 M values) and stored once per bin.
 * @example
 * const out = new Float64Array(2);
 * // one bin, two paths, M = 1: (1 + j) * 2 + (0 + 1j) * (0 + 1j)
 * accumulatePathsPlain(out, 0, Float64Array.of(1, 1, 0, 1), Float64Array.of(2, 0, 0, 1), 1, 2, 1, new Float64Array(2));
 * out // Float64Array [1, 2]
 */
export function accumulatePathsPlain(
  out: KernelOut,
  outOffset: number,
  weights: Float64Array,
  products: Float64Array,
  bins: number,
  paths: number,
  elementPairs: number,
  scratch: Float64Array,
): void {
  const M = elementPairs;
  for (let k = 0; k < bins; k++) {
    scratch.fill(0, 0, 2 * M);
    for (let l = 0; l < paths; l++) {
      const wr = weights[2 * (k * paths + l)]!;
      const wi = weights[2 * (k * paths + l) + 1]!;
      const base = 2 * l * M;
      for (let m = 0; m < M; m++) {
        const ar = products[base + 2 * m]!;
        const ai = products[base + 2 * m + 1]!;
        scratch[2 * m] = scratch[2 * m]! + wr * ar - wi * ai;
        scratch[2 * m + 1] = scratch[2 * m + 1]! + wr * ai + wi * ar;
      }
    }
    for (let m = 0; m < 2 * M; m++) out[outOffset + 2 * k * M + m] = scratch[m]!;
  }
}
