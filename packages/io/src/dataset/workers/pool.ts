/**
 * A pool of worker threads that fill blocks of subframes for `generate` (docs/conventions.md,
 * Reproducibility: the same tensor bytes with any worker count). Every worker builds the
 * scenario itself and runs ChannelGenerator.fill over the subframe range it is given, which is
 * bit-identical whatever range a call covers (gain streams keyed by (seed, path id, block) and
 * phase recurrences re-anchored at absolute indices), so the pool only decides who computes a
 * block, never what is in it. Blocks come back in request order through `take`.
 *
 * Layouts: a block's tensor is [n, (U,) (symbols,) K or count, Nr, Nt] complex interleaved, its
 * gains [n, (U,) (symbols,) Lmax] complex128, exactly as `fillBlock` writes them.
 */
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import type { Domain } from '../../scenario/build.js';
import type { Scenario } from '../../scenario/schema.js';

/** What each worker is started with. */
export interface BlockWorkerData {
  scenario: Scenario;
  domain: Domain;
  seed?: number | undefined;
  /** Float64 values of gains per subframe (2 x complex count). */
  gainsPerSubframe: number;
}

/** One block request (buffers are transferred to the worker and back). */
export interface BlockRequest {
  id: number;
  first: number;
  n: number;
  tensor: ArrayBuffer;
  gains: ArrayBuffer;
}

interface BlockReply {
  id: number;
  tensor?: ArrayBuffer;
  gains?: ArrayBuffer;
  kernel?: string;
  error?: string;
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
 * 1 (the main thread fills in place, no worker thread) for runs of fewer than 2 blocks and on
 * machines of up to 2 cores; otherwise one per core, never more than the blocks. A pool worker
 * fills through a copy out of the kernel's memory (about 35 % more per block than in place) and
 * starts in about 0.25 s; on 2 cores two workers measured no faster than the main thread alone
 * (docs/performance.md), so they pay off only with more cores.
 * @example [defaultWorkers(1, 8), defaultWorkers(10, 2), defaultWorkers(10, 8), defaultWorkers(3, 8)] // [1, 1, 8, 3]
 */
export function defaultWorkers(blocks: number, cores: number = availableParallelism()): number {
  return blocks < 2 || cores <= SINGLE_THREAD_CORES ? 1 : Math.min(cores, blocks);
}

/**
 * A fixed set of workers; request i goes to worker i mod size, and each answer resolves its own request.
 * @example
 * const pool = new BlockPool(2, { scenario, domain: 'frequency', gainsPerSubframe: 2 * L });
 * const { tensor } = await pool.request(0, 8, new ArrayBuffer(bytes), new ArrayBuffer(16 * 8 * L)); // subframes 0-7
 * await pool.close();
 */
export class BlockPool {
  private readonly workers: Worker[];
  private readonly pending = new Map<number, { resolve: (r: BlockReply) => void; reject: (e: Error) => void }>();
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

  /** Ask for subframes [first, first + n) into `tensor` and `gains`; resolves with the filled buffers. */
  request(first: number, n: number, tensor: ArrayBuffer, gains: ArrayBuffer): Promise<{ tensor: ArrayBuffer; gains: ArrayBuffer }> {
    if (this.failure !== undefined) return Promise.reject(this.failure);
    const id = this.nextId++;
    const worker = this.workers[id % this.workers.length]!;
    return new Promise((resolve, reject) => {
      this.pending.set(id, {
        resolve: (r) => (r.error !== undefined ? reject(new Error(`generate worker: ${r.error}`)) : resolve({ tensor: r.tensor!, gains: r.gains! })),
        reject,
      });
      const message: BlockRequest = { id, first, n, tensor, gains };
      worker.postMessage(message, [tensor, gains]);
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
