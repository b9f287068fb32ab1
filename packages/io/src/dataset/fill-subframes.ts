/**
 * Tensors in memory on every core: a `SubframeFiller` fills subframes of a built scenario into
 * an array the caller holds, split over worker threads that write it in place (the array lives
 * in a SharedArrayBuffer), with no file and no copy. This is `generate` without the sink, for
 * callers that use the channel in the same process (a training loop, a link simulation).
 *
 * Layouts: out [count, (U,) (symbols,) K or count, Nr, Nt] complex interleaved (Float32Array for
 * complex64, Float64Array for complex128), packed as `fillBlock` writes it; gains
 * [count, (U,) (symbols,) Lmax] complex128, zero-padded to the largest path count.
 */
import { availableParallelism } from 'node:os';
import { KERNEL_NAME, type TensorArray } from '@pathweave/core';
import type { BuiltScenario } from '../scenario/build.js';
import { blockSubframes } from './generate.js';
import { fillBlock, maxPathCount } from './workers/fill.js';
import { BlockPool, sharedArray } from './workers/pool.js';

/** Pieces per worker a fill is cut into at least (when the range allows), so no thread waits long for the last one. */
const PIECES_PER_WORKER = 4;

/**
 * A zeroed array for `count` subframes of `built`'s tensor over a SharedArrayBuffer, which
 * worker threads can fill in place (a SubframeFiller with more than one worker needs one).
 * @example
 * const { scenario } = await loadScenario('examples/street-corner-28ghz.json');
 * const H = allocateSharedTensor(buildScenario(scenario), 4);
 * [H.buffer instanceof SharedArrayBuffer, H.length] // [true, 65536]: 4 subframes of 64 x 4 x 32 complex values
 */
export function allocateSharedTensor(built: BuiltScenario, count: number): TensorArray {
  if (!Number.isInteger(count) || count < 0) throw new RangeError(`allocateSharedTensor(): count must be an integer >= 0, got ${count}`);
  return sharedArray(2 * count * built.valuesPerSubframe, built.plan.precision === 'complex64' ? Float32Array : Float64Array);
}

/** Options of a SubframeFiller. */
export interface SubframeFillerOptions {
  /**
   * Threads that fill (worker_threads). Default: one per available core. With 1 the calling
   * thread fills and `out` may be any array of the right type. Nothing else competes for the
   * cores in memory, unlike `generate`, whose file writes want a core of their own.
   */
  workers?: number;
}

/**
 * Fills subframes of one built scenario into arrays the caller holds, on `workers` threads.
 * Start it once (the workers build their generators from the plan, which takes tens of
 * milliseconds) and fill as often as needed; close it at the end. The bits are those of
 * `fillBlock` over the same range, whatever the worker count (docs/conventions.md,
 * Reproducibility).
 * @example
 * const { scenario } = await loadScenario('examples/street-corner-28ghz.json');
 * const built = buildScenario(scenario);
 * const filler = new SubframeFiller(built, { workers: 2 });
 * const H = allocateSharedTensor(built, 100); // subframe s at 2 * s * built.valuesPerSubframe
 * await filler.fill(H, 0, 100);
 * await filler.close();
 * const last = new Float32Array(2 * built.valuesPerSubframe);
 * fillBlock(built, last, 99, 1);
 * H.subarray(99 * last.length).every((v, i) => v === last[i]) // true: subframe 99 as one thread fills it
 */
export class SubframeFiller {
  /** Threads that fill. */
  readonly workers: number;
  private readonly pool: BlockPool | undefined;
  private readonly gainsPerSubframe: number;

  constructor(
    private readonly built: BuiltScenario,
    options: SubframeFillerOptions = {},
  ) {
    const workers = options.workers ?? availableParallelism();
    if (!Number.isInteger(workers) || workers < 1) throw new RangeError(`SubframeFiller: options.workers must be an integer >= 1, got ${workers}`);
    this.workers = workers;
    const first = built.users[0]!.generator;
    this.gainsPerSubframe = 2 * built.users.length * first.stepsPerSubframe * maxPathCount(built);
    this.pool =
      workers === 1
        ? undefined
        : new BlockPool(workers, { plan: built.plan, traced: built.users.map((u) => u.tracedEpochs), gainsPerSubframe: this.gainsPerSubframe });
  }

  /**
   * Fill subframes [first, first + count) into `out` (from its start, packed) and, when given,
   * their gains into `gains` ([count, (U,) (symbols,) Lmax] complex128). With more than one
   * worker `out` must lie over a SharedArrayBuffer (allocateSharedTensor). Resolves with the
   * kernel that computed the subframes (KERNEL_NAME of the threads).
   */
  async fill(out: TensorArray, first: number, count: number, gains?: Float64Array): Promise<{ kernel: string }> {
    const fn = 'SubframeFiller.fill()';
    const built = this.built;
    const subframes = built.plan.timing.subframes;
    if (!Number.isInteger(first) || first < 0 || first >= subframes)
      throw new RangeError(`${fn}: first must be an integer in [0, ${subframes - 1}] (the scenario's subframes), got ${first}`);
    if (!Number.isInteger(count) || count < 1 || first + count > subframes)
      throw new RangeError(`${fn}: count must be an integer in [1, ${subframes - first}] (subframes from ${first} to the scenario's end), got ${count}`);
    const perSubframe = 2 * built.valuesPerSubframe;
    const Type = built.plan.precision === 'complex64' ? Float32Array : Float64Array;
    if (!(out instanceof Type))
      throw new TypeError(`${fn}: out must be a ${Type.name} for ${built.plan.precision}, got ${out?.constructor?.name ?? typeof out}`);
    if (out.length < count * perSubframe) throw new RangeError(`${fn}: out holds ${out.length} values, ${count} subframes need ${count * perSubframe}`);
    if (gains !== undefined && gains.length < count * this.gainsPerSubframe)
      throw new RangeError(`${fn}: gains holds ${gains.length} values, ${count} subframes need ${count * this.gainsPerSubframe}`);
    if (this.pool === undefined) {
      fillBlock(built, out.subarray(0, count * perSubframe), first, count, gains);
      return { kernel: KERNEL_NAME };
    }
    if (!(out.buffer instanceof SharedArrayBuffer))
      throw new TypeError(
        `${fn}: out must lie over a SharedArrayBuffer for ${this.workers} workers (allocate it with allocateSharedTensor), got one over an ${out.buffer.constructor.name}`,
      );
    // At most a block of `generate`, and small enough that every worker gets several pieces.
    const piece = Math.min(blockSubframes(perSubframe * Type.BYTES_PER_ELEMENT), Math.ceil(count / (PIECES_PER_WORKER * this.workers)));
    const pieces: Array<Promise<unknown>> = [];
    for (let s = 0; s < count; s += piece) {
      const n = Math.min(piece, count - s);
      const done = this.pool.request(first + s, n, out.subarray(s * perSubframe, (s + n) * perSubframe)).then((block) => {
        gains?.set(block.gains, s * this.gainsPerSubframe);
      });
      pieces.push(done);
    }
    const settled = await Promise.allSettled(pieces); // every worker done with `out` before this settles
    const failed = settled.find((r): r is PromiseRejectedResult => r.status === 'rejected');
    if (failed !== undefined) throw failed.reason;
    return { kernel: this.pool.kernel ?? KERNEL_NAME };
  }

  /** Stop the workers. */
  async close(): Promise<void> {
    await this.pool?.close();
  }
}
