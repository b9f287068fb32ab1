/**
 * The kernel in use for the assembler's inner loop. Chosen the same way on every run of a
 * machine and recorded in the output's metadata (docs/performance.md, "Kernels and
 * reproducibility"): the fused WebAssembly kernel (relaxed-SIMD multiply-add) when its compiled
 * file validates and the runtime fuses, else the WebAssembly SIMD kernel (multiply then add)
 * when its file validates (128-bit SIMD), else the plain JavaScript one. `PATHWEAVE_KERNEL`
 * forces one: `js` (or `js-float64`) the plain kernel, `simd` (or `wasm-simd128`) the unfused
 * SIMD kernel, whose bits are the same on every machine with 128-bit SIMD; any other value
 * leaves the choice as above. The name in use is recorded.
 *
 * Layouts: see accumulate.ts (weights [bins, L], products [L, M], out [bins, M], complex interleaved).
 */
import { accumulatePathsPlain, type KernelOut } from './accumulate.js';
import { FMA_KERNEL_PATH, loadWasmKernel, type WasmKernelAllocate, type WasmKernelFunction } from './wasm.js';

export { accumulatePathsPlain, type KernelOut } from './accumulate.js';
export { FMA_KERNEL_PATH, loadWasmKernel, WASM_KERNEL_PATH, type WasmKernelAllocate, type WasmKernelFunction } from './wasm.js';

/**
 * Signature of an accumulate kernel (see accumulate.ts for the layouts). `scratch` (2 M values)
 * is used by the plain kernel only; `productsStamp`, optional, lets a SIMD kernel reuse its
 * converted copy of `products` when the same array comes with the same stamp as in its previous
 * call (the caller's promise that the values did not change; the plain kernel reads them anyway).
 * @example
 * const kernel: AccumulateKernel = accumulatePathsPlain;
 * const out = new Float32Array(2);
 * kernel(out, 0, Float64Array.of(0.5, 0), Float64Array.of(0, 2), 1, 1, 1, new Float64Array(2));
 * out // Float32Array [0, 1]: 0.5 * 2j
 */
export type AccumulateKernel = (
  out: KernelOut,
  outOffset: number,
  weights: Float64Array,
  products: Float64Array,
  bins: number,
  paths: number,
  elementPairs: number,
  scratch: Float64Array,
  productsStamp?: number,
) => void;

/**
 * Name of the plain JavaScript kernel (float64 accumulation).
 * @example PLAIN_KERNEL_NAME // "js-float64"
 */
export const PLAIN_KERNEL_NAME = 'js-float64';
/**
 * Name of the SIMD kernel (float32 lanes for complex64 output, float64 lanes for complex128;
 * one multiply and one add per lane and term).
 * @example [PLAIN_KERNEL_NAME, WASM_KERNEL_NAME, FMA_KERNEL_NAME].includes(KERNEL_NAME) // true: KERNEL_NAME is one of the three
 */
export const WASM_KERNEL_NAME = 'wasm-simd128';
/**
 * Name of the fused SIMD kernel: the same lanes, each term two fused multiply-adds
 * (relaxed-SIMD `madd`, used only where the runtime fuses it; last bits differ from WASM_KERNEL_NAME).
 * @example FMA_KERNEL_NAME // "wasm-fma128"
 */
export const FMA_KERNEL_NAME = 'wasm-fma128';

/** Plain typed arrays, for the plain kernel (it writes any array equally fast). */
const plainAllocate: WasmKernelAllocate = (length, type) => new type(length) as InstanceType<typeof type>;

function load(path?: string): { kernel?: WasmKernelFunction; allocate?: WasmKernelAllocate; reason?: string } {
  try {
    return loadWasmKernel(path);
  } catch (e) {
    return { reason: `could not instantiate ${path ?? 'the SIMD kernel'}: ${(e as Error).message}` };
  }
}

function choose(): { name: string; kernel: AccumulateKernel; allocate: WasmKernelAllocate; reason: string } {
  const forced = typeof process === 'object' ? process.env.PATHWEAVE_KERNEL : undefined;
  if (forced === 'js' || forced === PLAIN_KERNEL_NAME)
    return { name: PLAIN_KERNEL_NAME, kernel: accumulatePathsPlain, allocate: plainAllocate, reason: `PATHWEAVE_KERNEL=${forced}` };
  const unfused = forced === 'simd' || forced === WASM_KERNEL_NAME;
  const reasons: string[] = [];
  if (!unfused) {
    const fma = load(FMA_KERNEL_PATH);
    const k = fma.kernel;
    if (k !== undefined)
      return {
        name: FMA_KERNEL_NAME,
        kernel: (out, offset, w, p, bins, L, M, _scratch, stamp) => k(out, offset, w, p, bins, L, M, stamp),
        allocate: fma.allocate!,
        reason: 'WebAssembly relaxed SIMD validates and fuses multiply-add',
      };
    reasons.push(fma.reason ?? 'unknown');
  }
  const simd = load();
  const wasm = simd.kernel;
  if (wasm === undefined)
    return { name: PLAIN_KERNEL_NAME, kernel: accumulatePathsPlain, allocate: plainAllocate, reason: [...reasons, simd.reason ?? 'unknown'].join('; ') };
  const why = unfused ? `PATHWEAVE_KERNEL=${forced}` : `WebAssembly SIMD validates (fused kernel not used: ${reasons.join('; ')})`;
  return {
    name: WASM_KERNEL_NAME,
    kernel: (out, offset, w, p, bins, L, M, _scratch, stamp) => wasm(out, offset, w, p, bins, L, M, stamp),
    allocate: simd.allocate!,
    reason: why,
  };
}

const chosen = choose();

/**
 * Name of the kernel `accumulatePaths` runs, recorded in files as the `kernel` attribute.
 * @example KERNEL_NAME // "wasm-fma128" after setup on Node 20 on an x86-64 with FMA; "wasm-simd128" with PATHWEAVE_KERNEL=simd
 */
export const KERNEL_NAME: string = chosen.name;

/**
 * Why KERNEL_NAME was chosen (for benchmarks and bug reports).
 * @example KERNEL_REASON // "WebAssembly relaxed SIMD validates and fuses multiply-add"
 */
export const KERNEL_REASON: string = chosen.reason;

/**
 * out[k, :] = sum_l w[k, l] P[l, :] with the kernel in use.
 * @example
 * const out = new Float32Array(2);
 * accumulatePaths(out, 0, Float64Array.of(0, 1), Float64Array.of(2, 0), 1, 1, 1, new Float64Array(2));
 * out // Float32Array [0, 2]  (j * 2)
 */
export const accumulatePaths: AccumulateKernel = chosen.kernel;

/**
 * A zeroed Float32Array or Float64Array of `length` values that `accumulatePaths` fills without
 * an extra copy: with the SIMD kernel it lives in WebAssembly memory of its own (use it for
 * large, reused output buffers such as a block of subframes; each call reserves a few MiB
 * besides); with the plain kernel it is an ordinary typed array. Any other array works as
 * `out` too, through a copy.
 * @example
 * const out = allocateKernelArray(4, Float32Array);
 * accumulatePaths(out, 0, Float64Array.of(0, 1, 1, 0), Float64Array.of(2, 0), 2, 1, 1, new Float64Array(2));
 * out // Float32Array [0, 2, 2, 0]  (j * 2, then 1 * 2)
 */
export function allocateKernelArray<T extends typeof Float32Array | typeof Float64Array>(length: number, type: T): InstanceType<T> {
  if (type !== Float32Array && type !== Float64Array)
    throw new TypeError(`allocateKernelArray(): type must be Float32Array or Float64Array, got ${String(type)}`);
  return chosen.allocate(length, type);
}
