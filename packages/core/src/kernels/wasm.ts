/**
 * The WebAssembly SIMD kernels (128-bit lanes, built from packages/core/assembly/accumulate.ts by
 * scripts/setup.mjs into packages/core/dist/kernels/accumulate.wasm, and with relaxed-SIMD
 * multiply-add into accumulate-fma.wasm) behind the same signature as the plain one.
 *
 * Layouts (complex interleaved re/im, row-major), as in accumulate.ts:
 *   weights  [bins, L]  float64 in, copied into the kernel's memory (and rounded to float32 there
 *                       for complex64 output)
 *   products [L, M]     float64 in, copied likewise; from them the kernel's memory holds P and
 *                       Q [L, M] = products turned by +90 degrees, (-im, re), so the inner loop
 *                       needs no shuffle
 *   out      [bins, M]  from `outOffset`; a Float32Array is accumulated in float32 lanes, a
 *                       Float64Array in float64 lanes (complex128 keeps double precision)
 * The products are copied and converted on every call (a memcpy of 16 L M bytes and one SIMD
 * pass, against 8 bins L M flops) unless the caller passes the stamp of the previous call for the
 * same array (its promise that they did not change): a taps call (64 bins) spent about as much
 * memory traffic on staging the products as on its output.
 *
 * Output: an array from `allocate` lives in the WebAssembly memory of an instance of its own
 * (grown once, never again, so the view stays valid); the kernel then writes all bins of a call
 * straight into it. Any other array gets the output in chunks of about CHUNK_BYTES, computed in
 * the shared instance's memory and copied out while in cache.
 */
import { existsSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { setFlagsFromString } from 'node:v8';
import type { KernelOut } from './accumulate.js';

/**
 * Where setup puts the compiled kernel (the same file from src/kernels and dist/kernels).
 * @example WASM_KERNEL_PATH // <checkout>/packages/core/dist/kernels/accumulate.wasm
 */
export const WASM_KERNEL_PATH: string = fileURLToPath(new URL('../../dist/kernels/accumulate.wasm', import.meta.url));

/**
 * Where setup puts the fused build of the same source (relaxed-SIMD multiply-add).
 * @example FMA_KERNEL_PATH // <checkout>/packages/core/dist/kernels/accumulate-fma.wasm
 */
export const FMA_KERNEL_PATH: string = fileURLToPath(new URL('../../dist/kernels/accumulate-fma.wasm', import.meta.url));

/** Output bytes per kernel call: a chunk stays in L2 while the column tiles sweep it (and, on the copying path, until it is copied out). */
const CHUNK_BYTES = 128 * 1024;
/** Bytes of P and Q columns kept hot in L1 per column tile (4-32 KiB measured on the bench machine: 16 best). */
const TILE_BYTES = 16 * 1024;
/** Workspace (products, Q, weights) reserved beside an allocated output array; calls needing more take the copying path. */
const PINNED_WORKSPACE_BYTES = 4 * 2 ** 20;
const PAGE = 65536;

/** The part of the WebAssembly global this module uses (the ES2022 lib does not declare it). */
interface WasmMemory {
  readonly buffer: ArrayBuffer;
  grow(pages: number): number;
}
interface WasmModule {
  readonly compiled: unknown;
}
interface WasmApi {
  validate(bytes: Uint8Array): boolean;
  Module: new (bytes: Uint8Array) => WasmModule;
  Instance: new (module: WasmModule, imports: object) => { exports: unknown };
}
const wasmApi = (globalThis as { WebAssembly?: WasmApi }).WebAssembly;

interface KernelExports {
  memory: WasmMemory;
  fusedBuild(): number;
  splitF32(p: number, src: number, L: number, M: number): void;
  prepareF32(p: number, q: number, src: number, L: number, M: number): void;
  roundF32(dst: number, src: number, n: number): void;
  turnF64(q: number, p: number, n: number): void;
  accumulateF32(out: number, w: number, p: number, q: number, bins: number, L: number, M: number, tile: number): void;
  accumulateF64(out: number, w: number, p: number, q: number, bins: number, L: number, M: number, tile: number): void;
}

const align = (n: number): number => Math.ceil(n / 16) * 16;

/**
 * Workspace bytes of one call: P (and Q) in the kernel's float type first, at a fixed address so
 * they survive between calls with the same products (the fused f32 kernel: P alone, in its split
 * layout, rows splitRowBytes apart); then the weights in the kernel's form;
 * then one float64 staging area, used in turn for the products and the weights (float64 output:
 * the products and weights are staged in place).
 */
function workspaceBytes(bins: number, L: number, M: number, double: boolean, fused: boolean): number {
  if (double) return 2 * align(16 * L * M) + align(16 * bins * L);
  const stage = align(16 * Math.max(L * M, bins * L));
  return (fused ? align(L * splitRowBytes(M)) : 2 * align(L * plainRowBytes(M))) + align(8 * bins * L) + stage;
}

/**
 * Bytes between rows of P in the fused f32 kernel's split layout (groups of four columns, 32
 * bytes each, then a cache line so that rows are not a multiple of 4 KiB apart): the same
 * function as splitRowBytes in assembly/accumulate.ts, which says why.
 */
const splitRowBytes = (M: number): number => pastPageMultiple(Math.ceil(M / 4) * 32);

/** Bytes between rows of P and Q in the unfused f32 kernel: plainRowBytes in assembly/accumulate.ts. */
const plainRowBytes = (M: number): number => pastPageMultiple(8 * M);

/** A row of `packed` bytes plus one cache line, or two when one would end on a multiple of 4 KiB. */
const pastPageMultiple = (packed: number): number => ((packed + 64) % 4096 === 0 ? packed + 128 : packed + 64);

/** Bins per register block of the fused f32 kernel: its chunks are whole blocks where they can be. */
const FUSED_BLOCK_BINS = 3;

/** One instance of the SIMD kernel with its linear-memory workspace at [base, base + workspace). */
class WasmKernel {
  private readonly base: number;
  private f64: Float64Array;
  private f32: Float32Array;
  /** The fused (relaxed-SIMD multiply-add) build: f32 products in a split layout, no Q. */
  private readonly fused: boolean;
  /** What P (and Q) at `base` hold: the products array, its stamp and shape (undefined: nothing reusable). */
  private staged: { products: Float64Array; stamp: number; L: number; M: number; double: boolean } | undefined;

  /** `fixedWorkspace`: the memory was sized once and must never grow (an allocated output array lives in it). */
  constructor(
    private readonly exports: KernelExports,
    private readonly fixedWorkspace?: number,
  ) {
    // Our buffers live in pages grown past the module's own (it has no static data, but stay clear).
    this.base = exports.memory.buffer.byteLength;
    this.fused = exports.fusedBuild() === 1;
    if (fixedWorkspace !== undefined) exports.memory.grow(Math.ceil(fixedWorkspace / PAGE));
    this.f64 = new Float64Array(exports.memory.buffer);
    this.f32 = new Float32Array(exports.memory.buffer);
  }

  get memory(): WasmMemory {
    return this.exports.memory;
  }

  /** Byte address where the fixed workspace ends (the start of an allocated array). */
  get workspaceEnd(): number {
    return this.base + (this.fixedWorkspace ?? 0);
  }

  /** Whether a call of this size fits the fixed workspace (always true for a growable one). */
  fits(bins: number, L: number, M: number, double: boolean): boolean {
    return this.fixedWorkspace === undefined || workspaceBytes(bins, L, M, double, this.fused) <= this.fixedWorkspace;
  }

  private reserve(bytes: number): void {
    const need = this.base + bytes;
    const have = this.exports.memory.buffer.byteLength;
    if (need > have) {
      if (this.fixedWorkspace !== undefined) throw new RangeError(`WasmKernel: workspace of ${bytes} bytes exceeds the fixed ${this.fixedWorkspace}`);
      this.exports.memory.grow(Math.ceil((need - have) / PAGE));
    }
    if (this.f64.buffer !== this.exports.memory.buffer) {
      this.f64 = new Float64Array(this.exports.memory.buffer);
      this.f32 = new Float32Array(this.exports.memory.buffer);
    }
  }

  /**
   * Stage weights and products and run the kernel. `target` is the byte address of out[outOffset]
   * when out lives in this instance's memory, else undefined (chunks copied into `out`). With a
   * `stamp` equal to the previous call's, for the same products array and shape, the staged P
   * (and Q) are reused: the caller promises the products did not change in between.
   */
  run(
    out: KernelOut,
    outOffset: number,
    weights: Float64Array,
    products: Float64Array,
    bins: number,
    L: number,
    M: number,
    target: number | undefined,
    stamp: number | undefined,
  ): void {
    const double = out instanceof Float64Array;
    const eb = double ? 16 : 8; // bytes per complex value
    const fusedF32 = this.fused && !double;
    const wb = eb; // bytes per staged weight
    let chunkBins = Math.max(1, Math.min(bins, Math.floor(CHUNK_BYTES / (M * eb))));
    if (fusedF32 && chunkBins >= FUSED_BLOCK_BINS) chunkBins -= chunkBins % FUSED_BLOCK_BINS;
    const p = this.base;
    let q: number, w: number, stage: number, o: number;
    if (double) {
      q = p + align(16 * L * M);
      w = q + align(16 * L * M); // products and weights are staged where the kernel reads them
      stage = w;
      o = w + align(16 * bins * L);
    } else {
      q = fusedF32 ? p : p + align(L * plainRowBytes(M)); // fused: unused, P's split layout serves both parts
      w = fusedF32 ? p + align(L * splitRowBytes(M)) : q + align(L * plainRowBytes(M));
      stage = w + align(wb * bins * L);
      o = stage + align(16 * Math.max(L * M, bins * L));
    }
    this.reserve(o - this.base + (target === undefined ? align(chunkBins * M * eb) : 0));
    const f64 = this.f64;
    const s = this.staged;
    const reuse = stamp !== undefined && s !== undefined && s.products === products && s.stamp === stamp && s.L === L && s.M === M && s.double === double;
    if (!reuse) {
      this.staged = undefined;
      f64.set(products.subarray(0, 2 * L * M), (double ? p : stage) / 8);
      if (double) this.exports.turnF64(q, p, L * M);
      else if (fusedF32) this.exports.splitF32(p, stage, L, M);
      else this.exports.prepareF32(p, q, stage, L, M);
      if (stamp !== undefined) this.staged = { products, stamp, L, M, double };
    }
    f64.set(weights.subarray(0, 2 * bins * L), stage / 8);
    if (!double) this.exports.roundF32(w, stage, 2 * bins * L);
    // Complex columns per register block (f32: 2 bins x 4, fused 3 bins x 4; f64: 1 bin x 4); the
    // P (and Q) columns of one tile fill about TILE_BYTES.
    const lanes = 4;
    const tile = Math.max(lanes, Math.floor(TILE_BYTES / ((fusedF32 ? 1 : 2) * L * eb * lanes)) * lanes);
    const kernel = double ? this.exports.accumulateF64 : this.exports.accumulateF32;
    if (target !== undefined) {
      // Straight into the caller's array, still chunk by chunk: a chunk's rows stay in L2 while
      // the column tiles sweep over them (one pass over all bins thrashes the cache sets).
      for (let k0 = 0; k0 < bins; k0 += chunkBins) kernel(target + k0 * M * eb, w + k0 * L * wb, p, q, Math.min(chunkBins, bins - k0), L, M, tile);
      return;
    }
    const scale = double ? 8 : 4; // bytes per float
    const view = double ? this.f64 : this.f32;
    const o0 = o / scale;
    for (let k0 = 0; k0 < bins; k0 += chunkBins) {
      const n = Math.min(chunkBins, bins - k0);
      kernel(o, w + k0 * L * wb, p, q, n, L, M, tile);
      out.set(view.subarray(o0, o0 + 2 * n * M), outOffset + 2 * k0 * M);
    }
  }
}

/** Output arrays handed out by `allocate`, by their buffer: the instance whose memory holds them. */
const pinned = new WeakMap<ArrayBuffer, WasmKernel>();

/**
 * Whether `kernel` evaluates multiply-add terms with one rounding, in float32 and in float64
 * lanes. Each case is one term whose fused and twice-rounded results differ: with w = -1 + (1 + e) j
 * and P = (1 + e) + 1 j the imaginary lane is madd(1 + e, 1 + e, -1) = 2e + e^2 fused, while
 * rounding (1 + e)^2 first drops e^2 (a tie, to even); e = 2^-12 (float32), 2^-27 (float64).
 * The float32 kernel subtracts with a negated multiply-add in its real lanes, so a second case
 * checks that one: w = 1 + (1 + e) j and P = 1 + (1 + e) j give the real lane
 * nmadd(1 + e, 1 + e, 1) = -(2e + e^2) fused.
 */
function fusesBoth(kernel: WasmKernelFunction): boolean {
  const f32 = new Float32Array(2),
    neg32 = new Float32Array(2),
    f64 = new Float64Array(2);
  const e32 = 2 ** -12,
    e64 = 2 ** -27;
  kernel(f32, 0, Float64Array.of(-1, 1 + e32), Float64Array.of(1 + e32, 1), 1, 1, 1);
  kernel(neg32, 0, Float64Array.of(1, 1 + e32), Float64Array.of(1, 1 + e32), 1, 1, 1);
  kernel(f64, 0, Float64Array.of(-1, 1 + e64), Float64Array.of(1 + e64, 1), 1, 1, 1);
  return f32[1] === 2 * e32 + e32 * e32 && neg32[0] === -(2 * e32 + e32 * e32) && f64[1] === 2 * e64 + e64 * e64;
}

/**
 * Compile and instantiate a SIMD kernel, or say why it cannot be used here. `allocate` gives
 * zeroed output arrays that the kernel writes without a copy. For the fused build
 * (FMA_KERNEL_PATH) Node 20 needs V8's relaxed-SIMD flag, set here before compiling when the
 * module does not validate without it; `fused` says whether this runtime fused its multiply-adds
 * (the relaxed instruction may also round twice, which would be neither kernel's arithmetic).
 * @example loadWasmKernel().kernel !== undefined // true after setup on Node 20
 */
export function loadWasmKernel(path: string = WASM_KERNEL_PATH): {
  kernel?: WasmKernelFunction;
  allocate?: WasmKernelAllocate;
  fused?: boolean;
  reason?: string;
} {
  const WebAssembly = wasmApi;
  if (WebAssembly === undefined) return { reason: 'no WebAssembly in this runtime' };
  if (!existsSync(path)) return { reason: `${path} is missing (run node scripts/setup.mjs)` };
  const bytes = readFileSync(path);
  if (!WebAssembly.validate(bytes)) {
    // Relaxed SIMD is behind a flag on Node 20 (on by default later); it must be set before compiling.
    setFlagsFromString('--experimental-wasm-relaxed-simd');
    if (!WebAssembly.validate(bytes)) return { reason: `${path} does not validate here (no 128-bit or relaxed SIMD?)` };
  }
  // Compiled optimised at once, not first by the baseline compiler and optimised later while it
  // runs: the kernel is hot from its first call, and a short run (a 4-subframe generate) spent
  // about 12 ms of its first block in baseline code. The flag is set back for other modules.
  setFlagsFromString('--no-wasm-dynamic-tiering');
  let module: WasmModule;
  try {
    module = new WebAssembly.Module(bytes);
  } finally {
    setFlagsFromString('--wasm-dynamic-tiering');
  }
  const instantiate = (): KernelExports => new WebAssembly.Instance(module, {}).exports as unknown as KernelExports;
  const first = instantiate();
  const build = first.fusedBuild() === 1;
  const shared = new WasmKernel(first);
  const kernel: WasmKernelFunction = (out, outOffset, weights, products, bins, paths, elementPairs, productsStamp) => {
    if (bins === 0 || elementPairs === 0) return;
    if (paths === 0) {
      out.fill(0, outOffset, outOffset + 2 * bins * elementPairs);
      return;
    }
    const own = pinned.get(out.buffer as ArrayBuffer);
    if (own !== undefined && own.fits(bins, paths, elementPairs, out instanceof Float64Array)) {
      own.run(out, outOffset, weights, products, bins, paths, elementPairs, out.byteOffset + outOffset * out.BYTES_PER_ELEMENT, productsStamp);
    } else shared.run(out, outOffset, weights, products, bins, paths, elementPairs, undefined, productsStamp);
  };
  const allocate: WasmKernelAllocate = (length, type) => {
    if (!Number.isInteger(length) || length < 0) throw new RangeError(`allocate(): length must be an integer >= 0, got ${length}`);
    const k = new WasmKernel(instantiate(), PINNED_WORKSPACE_BYTES);
    const start = k.workspaceEnd;
    k.memory.grow(Math.ceil((length * type.BYTES_PER_ELEMENT) / PAGE));
    const array = new type(k.memory.buffer, start, length) as InstanceType<typeof type>;
    pinned.set(k.memory.buffer, k);
    return array;
  };
  if (build && !fusesBoth(kernel)) return { reason: `${path}: relaxed multiply-add is not fused on this machine` };
  return { kernel, allocate, fused: build };
}

/**
 * The SIMD kernel's call signature (the plain kernel's, without a scratch array). `productsStamp`:
 * optional; a caller that passes the same products array with the same stamp as in its previous
 * call promises the values did not change, and the kernel then reuses its float32 (or turned)
 * copy instead of converting them again; a new stamp, or none, always reads them.
 * @example const k: WasmKernelFunction = loadWasmKernel().kernel!; k(out, 0, w, p, bins, L, M) // out[k, m] = sum_l w[k, l] p[l, m]
 */
export type WasmKernelFunction = (
  out: KernelOut,
  outOffset: number,
  weights: Float64Array,
  products: Float64Array,
  bins: number,
  paths: number,
  elementPairs: number,
  productsStamp?: number,
) => void;

/**
 * Allocates a zeroed output array in a kernel instance's own WebAssembly memory (written without a copy).
 * @example const a = loadWasmKernel().allocate!(8, Float32Array); a.length // 8
 */
export type WasmKernelAllocate = <T extends typeof Float32Array | typeof Float64Array>(length: number, type: T) => InstanceType<T>;
