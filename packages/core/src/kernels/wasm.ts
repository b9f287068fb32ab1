/**
 * The WebAssembly SIMD kernel (128-bit lanes, built from packages/core/assembly/accumulate.ts by
 * scripts/setup.mjs into packages/core/dist/kernels/accumulate.wasm) behind the same signature as
 * the plain one.
 *
 * Layouts (complex interleaved re/im, row-major), as in accumulate.ts:
 *   weights  [bins, L]  float64 in, rounded to the kernel's float type
 *   products [L, M]     float64 in, rounded likewise; with them the kernel's memory holds
 *                       Q [L, M] = products turned by +90 degrees, (-im, re), so the inner loop
 *                       needs no shuffle
 *   out      [bins, M]  from `outOffset`; a Float32Array is accumulated in float32 lanes, a
 *                       Float64Array in float64 lanes (complex128 keeps double precision)
 * The products are converted on every call (2 L M values against 8 bins L M flops): nothing is
 * cached, so products that change in place between calls (moving geometry) are always seen.
 * Bins are processed in chunks of about CHUNK_BYTES of output and copied out while in cache.
 */
import { existsSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import type { KernelOut } from './accumulate.js';

/**
 * Where setup puts the compiled kernel (the same file from src/kernels and dist/kernels).
 * @example WASM_KERNEL_PATH // "/work/main/packages/core/dist/kernels/accumulate.wasm"
 */
export const WASM_KERNEL_PATH: string = fileURLToPath(new URL('../../dist/kernels/accumulate.wasm', import.meta.url));

/** Output bytes per kernel call: a chunk stays in L2 until it is copied out. */
const CHUNK_BYTES = 128 * 1024;
/** Bytes of P and Q columns kept hot in L1 per tile. */
const TILE_BYTES = 24 * 1024;
const PAGE = 65536;

/** The part of the WebAssembly global this module uses (the ES2022 lib does not declare it). */
interface WasmMemory {
  readonly buffer: ArrayBuffer;
  grow(pages: number): number;
}
interface WasmApi {
  validate(bytes: Uint8Array): boolean;
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object, imports: object) => { exports: unknown };
}
const wasmApi = (globalThis as { WebAssembly?: WasmApi }).WebAssembly;

interface KernelExports {
  memory: WasmMemory;
  accumulateF32(out: number, w: number, p: number, q: number, bins: number, L: number, M: number, tile: number): void;
  accumulateF64(out: number, w: number, p: number, q: number, bins: number, L: number, M: number, tile: number): void;
}

/** The SIMD kernel instance of this thread, with its linear-memory workspace. */
class WasmKernel {
  private base: number;
  private f32: Float32Array;
  private f64: Float64Array;

  constructor(private readonly exports: KernelExports) {
    // Our buffers live in pages grown past the module's own (it has no static data, but stay clear).
    this.base = exports.memory.buffer.byteLength;
    this.f32 = new Float32Array(exports.memory.buffer);
    this.f64 = new Float64Array(exports.memory.buffer);
  }

  private reserve(bytes: number): void {
    const need = this.base + bytes;
    const have = this.exports.memory.buffer.byteLength;
    if (need > have) this.exports.memory.grow(Math.ceil((need - have) / PAGE));
    if (this.f32.buffer !== this.exports.memory.buffer) {
      this.f32 = new Float32Array(this.exports.memory.buffer);
      this.f64 = new Float64Array(this.exports.memory.buffer);
    }
  }

  run(out: KernelOut, outOffset: number, weights: Float64Array, products: Float64Array, bins: number, L: number, M: number): void {
    const double = out instanceof Float64Array;
    if (bins === 0 || M === 0) return;
    if (L === 0) {
      out.fill(0, outOffset, outOffset + 2 * bins * M);
      return;
    }
    const eb = double ? 16 : 8; // bytes per complex value
    const align = (n: number): number => Math.ceil(n / 16) * 16;
    const chunkBins = Math.max(1, Math.min(bins, Math.floor(CHUNK_BYTES / (M * eb))));
    const pBytes = align(L * M * eb);
    const wBytes = align(bins * L * eb);
    const oBytes = align(chunkBins * M * eb);
    this.reserve(2 * pBytes + wBytes + oBytes);
    const p = this.base, q = p + pBytes, w = q + pBytes, o = w + wBytes;
    const lanes = double ? 4 : 8; // complex values per register block of the kernel
    const tile = Math.max(lanes, Math.floor(TILE_BYTES / (2 * L * eb * lanes)) * lanes); // P and Q columns of one tile fill about TILE_BYTES
    const view = double ? this.f64 : this.f32;
    const scale = double ? 8 : 4; // bytes per float
    const p0 = p / scale, q0 = q / scale;
    view.set(products.subarray(0, 2 * L * M), p0);
    for (let i = 0; i < L * M; i++) {
      view[q0 + 2 * i] = -view[p0 + 2 * i + 1]!;
      view[q0 + 2 * i + 1] = view[p0 + 2 * i]!;
    }
    view.set(weights.subarray(0, 2 * bins * L), w / scale);
    const kernel = double ? this.exports.accumulateF64 : this.exports.accumulateF32;
    for (let k0 = 0; k0 < bins; k0 += chunkBins) {
      const n = Math.min(chunkBins, bins - k0);
      kernel(o, w + k0 * L * eb, p, q, n, L, M, tile);
      out.set(view.subarray(o / scale, o / scale + 2 * n * M), outOffset + 2 * k0 * M);
    }
  }
}

/**
 * Compile and instantiate the SIMD kernel, or say why it cannot be used here.
 * @example loadWasmKernel().kernel !== undefined // true after setup on Node 20
 */
export function loadWasmKernel(path: string = WASM_KERNEL_PATH): { kernel?: WasmKernelFunction; reason?: string } {
  const WebAssembly = wasmApi;
  if (WebAssembly === undefined) return { reason: 'no WebAssembly in this runtime' };
  if (!existsSync(path)) return { reason: `${path} is missing (run node scripts/setup.mjs)` };
  const bytes = readFileSync(path);
  if (!WebAssembly.validate(bytes)) return { reason: `${path} does not validate here (no 128-bit SIMD?)` };
  const instance = new WebAssembly.Instance(new WebAssembly.Module(bytes), {});
  const k = new WasmKernel(instance.exports as unknown as KernelExports);
  const kernel: WasmKernelFunction = (out, outOffset, weights, products, bins, paths, elementPairs) => k.run(out, outOffset, weights, products, bins, paths, elementPairs);
  return { kernel };
}

/**
 * The SIMD kernel's call signature (the plain kernel's, without a scratch array).
 * @example const k: WasmKernelFunction = loadWasmKernel().kernel!; k(out, 0, w, p, bins, L, M) // out[k, m] = sum_l w[k, l] p[l, m]
 */
export type WasmKernelFunction = (out: KernelOut, outOffset: number, weights: Float64Array, products: Float64Array, bins: number, paths: number, elementPairs: number) => void;
