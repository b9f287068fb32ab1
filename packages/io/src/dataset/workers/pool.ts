/**
 * A pool of worker threads that fill blocks of subframes for `generate` (docs/conventions.md,
 * Reproducibility: the same tensor bytes with any worker count). Every worker builds the
 * generators from the plan and the traced epochs it is given (it traces nothing) and runs ChannelGenerator.fill over the subframe range it is given, which is
 * bit-identical whatever range a call covers (gain streams keyed by (seed, path id, block) and
 * phase recurrences re-anchored at absolute indices), so the pool only decides who computes a
 * block, never what is in it. Each worker fills its blocks in place into block buffers of its
 * own in shared memory (`sharedBlockArray`) and hands back a view of them, so nothing is copied
 * or transferred; the caller releases a block once written, and the worker reuses its buffer.
 *
 * Layouts: a block's tensor is [n, (U,) (symbols,) K or count, Nr, Nt] complex interleaved, its
 * gains [n, (U,) (symbols,) Lmax] complex128, exactly as `fillBlock` writes them.
 */
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import { allocateKernelArray, type TracedEpochs } from '@pathweave/core';
import type { ScenarioPlan } from '../../scenario/plan.js';

/** What each worker is started with: the plan and each user's traced epochs (workers trace nothing). */
export interface BlockWorkerData {
  plan: ScenarioPlan;
  traced: (TracedEpochs | undefined)[];
  /** Float64 values of gains per subframe (2 x complex count). */
  gainsPerSubframe: number;
}

/**
 * Messages to a worker: fill a block (into its own buffers, or into `into`, a view of the
 * caller's array over a SharedArrayBuffer), or take back a block buffer once the main thread is
 * done with it.
 */
export type BlockRequest = { kind: 'fill'; id: number; first: number; n: number; into?: Float32Array | Float64Array } | { kind: 'release'; slot: number };

interface BlockReply {
  id: number;
  /** The worker's block buffer that holds the block (released with `release`). */
  slot?: number;
  /** The block, a view of the worker's shared kernel memory (not copied). */
  tensor?: Float32Array | Float64Array;
  gains?: Float64Array;
  kernel?: string;
  error?: string;
}

/** A filled block: `tensor` stays valid until `release()`, after which the worker fills it again. */
export interface FilledBlock {
  tensor: Float32Array | Float64Array;
  gains: Float64Array;
  release(): void;
}

/**
 * A zeroed block buffer in shared memory that the kernel in use fills in place: an
 * `allocateKernelArray` array (the SIMD kernels' memory is a SharedArrayBuffer), or, with the
 * plain kernel, a typed array over a SharedArrayBuffer (it writes any array equally fast).
 * Pool workers and the hash thread read such a buffer where it is, without a copy.
 * @example sharedBlockArray(8, Float32Array).buffer instanceof SharedArrayBuffer // true
 */
export function sharedBlockArray<T extends typeof Float32Array | typeof Float64Array>(length: number, type: T): InstanceType<T> {
  const a = allocateKernelArray(length, type);
  return a.buffer instanceof SharedArrayBuffer ? a : sharedArray(length, type);
}

/**
 * A zeroed typed array over a SharedArrayBuffer of its own (outside any kernel's memory).
 * @example sharedArray(4, Float64Array).buffer instanceof SharedArrayBuffer // true
 */
export function sharedArray<T extends typeof Float32Array | typeof Float64Array>(length: number, type: T): InstanceType<T> {
  return new type(new SharedArrayBuffer(length * type.BYTES_PER_ELEMENT) as unknown as ArrayBuffer) as InstanceType<T>; // the lib types the constructor with ArrayBuffer only
}

/**
 * Where the compiled worker lives: dist/dataset/workers/fill-worker.js, reached the same way from
 * src/ (tests run the sources; worker threads need JavaScript) and from dist/.
 * @example FILL_WORKER_URL.pathname // "<checkout>/packages/io/dist/dataset/workers/fill-worker.js"
 */
export const FILL_WORKER_URL: URL = new URL('../../../dist/dataset/workers/fill-worker.js', import.meta.url);

/** Cores up to which the main thread alone, filling in place, is the faster default. */
const SINGLE_THREAD_CORES = 2;

/**
 * Default worker count of a run with `blocks` blocks on a machine of `cores` available cores:
 * 1 (the main thread fills in place, no worker thread) for runs of fewer than 2 blocks;
 * otherwise one per core, never more than the blocks. On up to SINGLE_THREAD_CORES cores the
 * main thread alone measured faster end to end (docs/performance.md): the file writes need
 * a core of their own.
 * @example [defaultWorkers(1, 8), defaultWorkers(10, 2), defaultWorkers(10, 8), defaultWorkers(3, 8)] // [1, 1, 8, 3]
 */
export function defaultWorkers(blocks: number, cores: number = availableParallelism()): number {
  return blocks < 2 || cores <= SINGLE_THREAD_CORES ? 1 : Math.min(cores, blocks);
}

/**
 * A fixed set of workers; request i goes to worker i mod size, and each answer resolves its own request.
 * @example
 * const pool = new BlockPool(2, { plan: built.plan, traced: built.users.map((u) => u.tracedEpochs), gainsPerSubframe: 2 * L });
 * const block = await pool.request(0, 8); // subframes 0-7, block.tensor in the worker's shared memory
 * await sink.writeRows(block.tensor);
 * block.release();
 * await pool.close();
 */
export class BlockPool {
  private readonly workers: Worker[];
  private readonly pending = new Map<number, { worker: Worker; resolve: (r: BlockReply) => void; reject: (e: Error) => void }>();
  private nextId = 0;
  private failure: Error | undefined;
  private readonly kernels = new Set<string>();

  constructor(count: number, data: BlockWorkerData) {
    if (!Number.isInteger(count) || count < 1) throw new RangeError(`BlockPool(): count must be an integer >= 1, got ${count}`);
    this.workers = Array.from({ length: count }, () => {
      const w = new Worker(FILL_WORKER_URL, { workerData: data });
      w.on('message', (reply: BlockReply) => this.settle(reply));
      w.on('error', (e) => this.fail(e));
      w.on('exit', (code) => {
        if (code !== 0) this.fail(new Error(`generate worker exited with code ${code}`));
      });
      return w;
    });
  }

  get size(): number {
    return this.workers.length;
  }

  /** The KERNEL_NAME of the workers that answered so far (comma-separated if they differ), undefined before the first answer. */
  get kernel(): string | undefined {
    return this.kernels.size === 0 ? undefined : [...this.kernels].sort().join(',');
  }

  /**
   * Ask for subframes [first, first + n); resolves with the block, to be released once used.
   * With `into` (a view over a SharedArrayBuffer, n subframes long) the worker fills that view
   * instead of a buffer of its own, and the block's release does nothing.
   */
  request(first: number, n: number, into?: Float32Array | Float64Array): Promise<FilledBlock> {
    if (this.failure !== undefined) return Promise.reject(this.failure);
    const id = this.nextId++;
    const worker = this.workers[id % this.workers.length]!;
    return new Promise((resolve, reject) => {
      this.pending.set(id, {
        worker,
        resolve: (r) => {
          if (r.error !== undefined) return reject(new Error(`generate worker: ${r.error}`));
          let released = false;
          const release = (): void => {
            if (released || this.failure !== undefined || r.slot === undefined) return;
            released = true;
            const message: BlockRequest = { kind: 'release', slot: r.slot };
            worker.postMessage(message);
          };
          resolve({ tensor: into ?? r.tensor!, gains: r.gains!, release });
        },
        reject,
      });
      const message: BlockRequest = { kind: 'fill', id, first, n, ...(into !== undefined ? { into } : {}) };
      worker.postMessage(message);
    });
  }

  /** Stop every worker (pending requests are rejected). */
  async close(): Promise<void> {
    this.fail(new Error('generate worker pool closed'));
    await Promise.all(this.workers.map((w) => w.terminate()));
  }

  private settle(reply: BlockReply): void {
    const p = this.pending.get(reply.id);
    this.pending.delete(reply.id);
    if (reply.kernel !== undefined) this.kernels.add(reply.kernel);
    p?.resolve(reply);
  }

  private fail(e: Error): void {
    this.failure ??= e;
    for (const p of this.pending.values()) p.reject(e);
    this.pending.clear();
  }
}
