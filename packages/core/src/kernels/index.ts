/**
 * The kernel in use for the assembler's inner loop. Chosen the same way on every run of a
 * machine and recorded in the output's metadata (design.md, Reproducibility).
 */
import { accumulatePathsPlain, type KernelOut } from './accumulate.js';

export { accumulatePathsPlain, type KernelOut } from './accumulate.js';

/** Signature of an accumulate kernel (see accumulate.ts for the layouts). */
export type AccumulateKernel = (
  out: KernelOut,
  outOffset: number,
  weights: Float64Array,
  products: Float64Array,
  bins: number,
  paths: number,
  elementPairs: number,
  scratch: Float64Array,
) => void;

/** Name of the kernel `accumulatePaths` runs, recorded in files as the `kernel` attribute. */
export const KERNEL_NAME: string = 'js-float64';

/** out[k, :] = sum_l w[k, l] P[l, :] with the kernel in use. */
export const accumulatePaths: AccumulateKernel = accumulatePathsPlain;
