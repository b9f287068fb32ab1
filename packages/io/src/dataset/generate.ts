/**
 * `generate`: stream a scenario's channel tensor to a file, one block of subframes at a time,
 * so memory stays bounded by a few blocks whatever S is (plus the small per-subframe side
 * arrays: gains and ground truth, S x U x L values). The file appears under its name only when
 * complete (temporary file, then rename). Between blocks the run yields to the event loop, so a
 * signal handler of the calling thread runs within about one block's time.
 *
 * Tensor layout: [S, (U,) (symbols,) K or count, Nr, Nt], complex interleaved; users follow S.
 */
import { createHash, type Hash } from 'node:crypto';
import { totalmem } from 'node:os';
import { allocateKernelArray, KERNEL_NAME, subcarrierOffsetsHz, subframeTimesS, tapDelaysS } from '@pathweave/core';
import { degFromVector } from '@pathweave/geometry';
import { commitWithSideFile } from '../formats/atomic.js';
import { buildPlan, traceUsers, type BuiltScenario } from '../scenario/build.js';
import { estimatedPathCount, outputEstimate, planScenario, sideArrayBytes, workingMemoryEstimate, type Domain, type ScenarioPlan } from '../scenario/plan.js';
import { openSink, type OutputFormat } from '../formats/index.js';
import { bytesOf } from '../formats/npy.js';
import type { DatasetSink, NamedArray } from '../formats/sink.js';
import type { Scenario } from '../scenario/schema.js';
import { sideFilePaths } from '../scenario/paths.js';
import { PATHWEAVE_VERSION } from '../version.js';
import { arrayShape, DATASET_ATTRIBUTES, datasetArray, unitsOf, type LayoutAxes } from './layout.js';
import { fillBlock, maxPathCount } from './workers/fill.js';
import { HashThread } from './workers/hash.js';
import { BlockPool, defaultWorkers, sharedBlockArray, type FilledBlock } from './workers/pool.js';

/**
 * Default refusal threshold for one output file, bytes (raise with --max-bytes).
 * @example formatBytes(DEFAULT_MAX_OUTPUT_BYTES) // "64.0 GiB"
 */
export const DEFAULT_MAX_OUTPUT_BYTES = 64 * 2 ** 30;

/**
 * Target size of one streamed block of subframes, bytes. Small enough that a signal is served
 * within a fraction of a second (the run yields between blocks) and that the blocks in flight
 * stay well under the 300 MB a run may take; large enough that a block costs far more than the
 * per-block overhead (a kernel call per subframe, a message to a worker, a file write).
 * @example BLOCK_TARGET_BYTES / 2 ** 20 // 8 (MiB)
 */
export const BLOCK_TARGET_BYTES = 8 * 2 ** 20;

/**
 * Options of a generate run.
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * const options: GenerateOptions = { out: 'run.h5', format: 'h5', range: [0, 4], checksum: true };
 * (await generate(scenario, text, options)).sha256!.length // 64: hex SHA-256 of the tensor bytes, also the file's tensorSha256 (89f37562... with kernel wasm-fma128, b68c65c0... with PATHWEAVE_KERNEL=simd)
 */
export interface GenerateOptions {
  out: string;
  format: OutputFormat;
  /** Half-open range [first, end) of subframes. */
  range?: [number, number];
  seed?: number;
  domain?: Domain;
  maxBytes?: number;
  /** Deflate level 0-9 of the tensor (HDF5 and NPZ). */
  deflate?: number;
  /**
   * Compute the SHA-256 of the tensor bytes (in the order written) and record it as the
   * `tensorSha256` attribute (a .npy: `tensor.sha256` of its side file) and in the report.
   * Shard runs need it (their manifests and `merge` verify parts by it); otherwise it is an
   * integrity check a run pays for (about 1 GB/s of hashing). Default false.
   */
  checksum?: boolean;
  /** Called after each block with subframes done and total. */
  onProgress?: (done: number, total: number) => void;
  /** Checked between blocks; when aborted the temporary file is removed and the run rejects with its reason. */
  signal?: AbortSignal;
  /**
   * Threads that compute blocks of subframes (worker_threads; the main thread then writes, and
   * hashes with `checksum`). 1 computes on the main thread, in place into the kernel's own
   * memory (with `checksum` and two blocks or more, a thread of its own hashes meanwhile).
   * Default `defaultWorkers(blocks)`: 1 on machines of up to 2 cores and for runs of fewer than
   * two blocks, else one per available core. The tensor bytes are the same for every count.
   */
  workers?: number;
}

/**
 * What a run wrote.
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * const report: GenerateReport = await generate(scenario, text, { out: 'run.npy', format: 'npy', range: [0, 4] });
 * [report.tensorName, report.shape, report.fileBytes, report.sha256, report.kernel]
 * // ['H', [4, 64, 4, 32], 262272, undefined, 'wasm-fma128']: a 128-byte header and 262144 tensor bytes; no checksum asked
 */
export interface GenerateReport {
  out: string;
  format: OutputFormat;
  tensorName: 'H' | 'h';
  dtype: 'complex64' | 'complex128';
  shape: number[];
  range: [number, number];
  fileBytes: number;
  tensorBytes: number;
  /** Hex SHA-256 of the tensor bytes; only with `checksum`. */
  sha256?: string;
  /** The accumulation kernel that computed the tensor (`KERNEL_NAME` of the threads that filled it). */
  kernel: string;
  seconds: number;
  warnings: string[];
  built: BuiltScenario;
}

/**
 * A refusal of the request itself (exit code 2).
 * @example new RequestError('the output would be 80.0 GiB').name // "RequestError" (the CLI exits with 2)
 */
export class RequestError extends Error {
  override name = 'RequestError';
}

/**
 * Human-readable byte count (binary units, one decimal).
 * @example [formatBytes(512), formatBytes(1536), formatBytes(2 ** 31)] // ["512 B", "1.5 KiB", "2.0 GiB"]
 */
export function formatBytes(n: number): string {
  const units = ['B', 'KiB', 'MiB', 'GiB', 'TiB', 'PiB'];
  let u = 0;
  let v = n;
  while (v >= 1024 && u < units.length - 1) {
    v /= 1024;
    u++;
  }
  return u === 0 ? `${n} B` : `${v.toFixed(1)} ${units[u]}`;
}

/**
 * Refuse up front what cannot be done, in one place for every command: a range outside the run,
 * output over the limit, memory beyond the machine, and (with `sideArrays`) per-subframe side
 * arrays beyond a quarter of it. `pathCount` defaults to the plan's estimate before tracing.
 * @example
 * const { scenario } = await loadScenario('examples/street-corner-28ghz.json');
 * checkRequest(planScenario(scenario), [0, 200], 2 ** 20, { pathCount: 8 })
 * // throws RequestError "the output would be 12.5 MiB (13107200 bytes, shape [200, 64, 4, 32]), over the limit of 1.0 MiB; raise it with --max-bytes 13107200 or ask for fewer subframes"
 */
export function checkRequest(
  plan: ScenarioPlan,
  range: [number, number],
  maxBytes: number,
  options: { pathCount?: number; sideArrays?: 'whole-run' | 'per-file' } = {},
): void {
  const S = plan.timing.subframes;
  if (!(range[0] >= 0 && range[1] <= S && range[0] < range[1])) {
    throw new RequestError(`--subframes ${range[0]}:${range[1]} must be a non-empty range within 0:${S}`);
  }
  const pathCount = options.pathCount ?? estimatedPathCount(plan);
  const est = outputEstimate(plan, range[1] - range[0]);
  if (est.bytes > maxBytes) {
    throw new RequestError(
      `the output would be ${formatBytes(est.bytes)} (${est.bytes} bytes, shape [${est.shape.join(', ')}]), over the limit of ${formatBytes(maxBytes)}; ` +
        `raise it with --max-bytes ${est.bytes} or ask for fewer subframes`,
    );
  }
  const budget = totalmem() / 2;
  const need = workingMemoryEstimate(plan, pathCount) + 2 * est.bytesPerSubframe;
  if (need > budget) {
    throw new RequestError(
      `the run would need about ${formatBytes(need)} of memory (one subframe is ${formatBytes(est.bytesPerSubframe)}), more than the ${formatBytes(budget)} this machine can spare; use fewer elements, subcarriers or paths`,
    );
  }
  if (options.sideArrays === undefined) return;
  // The side arrays (gains, ground truth) stay in memory until the commit.
  const count = range[1] - range[0];
  const side = sideArrayBytes(plan, count, pathCount);
  if (side > totalmem() / 4) {
    throw new RequestError(
      options.sideArrays === 'whole-run'
        ? `the per-subframe side arrays (gains and ground truth) would need at least ${formatBytes(side)} of memory; generate the run in shards (--shard)`
        : `the per-subframe side arrays (gains and ground truth) would need at least ${formatBytes(side)} of memory for ${count} subframes; generate fewer subframes per file (--subframes or --shard)`,
    );
  }
}

/**
 * Subframes per streamed block for a given subframe size (at least one).
 * @example [blockSubframes(64 * 4 * 32 * 8), blockSubframes(2 ** 24)] // [128, 1]: 64 KiB subframes, then one larger than a block
 */
export function blockSubframes(bytesPerSubframe: number): number {
  return Math.max(1, Math.floor(BLOCK_TARGET_BYTES / Math.max(1, bytesPerSubframe)));
}

export { fillBlock, maxPathCount } from './workers/fill.js';

/** Requests waiting or computing per worker thread while the main thread writes a block. */
const IN_FLIGHT_PER_WORKER = 2;

/** Let timers, I/O callbacks and signal handlers run (one turn of the event loop). */
const yieldToEventLoop = (): Promise<void> => new Promise((resolve) => setImmediate(resolve));

/**
 * Run a generate request: build the scenario, stream the tensor block by block, add the side
 * arrays and attributes, commit (a .npy's side file is written first, then the .npy renamed).
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * const report = await generate(scenario, text, { out: 'run.h5', format: 'h5', range: [0, 4] });
 * [report.shape, report.tensorBytes, report.fileBytes] // [[4, 64, 4, 32], 262144, 292568]: the tensor plus side arrays and attributes
 */
export async function generate(scenario: Scenario, scenarioText: string, options: GenerateOptions): Promise<GenerateReport> {
  const started = process.hrtime.bigint();
  const plan = planScenario(scenario, { domain: options.domain, seed: options.seed });
  const range = options.range ?? [0, plan.timing.subframes];
  const maxBytes = options.maxBytes ?? DEFAULT_MAX_OUTPUT_BYTES;
  // Cheap size checks before any tracing or allocation, then again with the traced path count.
  checkRequest(plan, range, maxBytes);
  // The set-up (tracing every geometry update) yields between updates, so a signal is served
  // within one update's trace, not after the whole set-up; an abort then leaves no file at all.
  const between = async (): Promise<void> => {
    await yieldToEventLoop();
    if (options.signal?.aborted) throw options.signal.reason ?? new Error('aborted');
  };
  const traced = await traceUsers(plan, between);
  await between();
  const built = buildPlan(plan, { traced });
  checkRequest(plan, range, maxBytes, { pathCount: maxPathCount(built) });
  const [first, end] = range;
  const count = end - first;
  const shape = [count, ...plan.tensor.shape.slice(1)];
  const tensorName = plan.tensor.name;
  const bytesPerSubframe = plan.tensor.bytesPerSubframe;
  const block = blockSubframes(bytesPerSubframe);
  const blocks = Math.ceil(count / block);
  const workers = options.workers ?? defaultWorkers(blocks);
  if (!Number.isInteger(workers) || workers < 1) throw new RangeError(`generate(): options.workers must be an integer >= 1, got ${workers}`);
  const seed = plan.seed;
  const gainShape = arrayShape('gains', { S: count, L: maxPathCount(built) }, layoutAxes(built));
  const gains = new Float64Array(2 * gainShape.reduce((a, b) => a * b, 1));
  const gainsPerSubframe = gains.length / count;
  const job: TensorJob = {
    built,
    first,
    end,
    block,
    blocks,
    workers,
    gains,
    gainsPerSubframe,
    values: 2 * Math.min(block, count) * built.valuesPerSubframe,
    hash: options.checksum === true ? createHash('sha256') : undefined,
    pool: { plan, traced: built.users.map((u) => u.tracedEpochs), gainsPerSubframe },
    between,
    ...(options.onProgress !== undefined ? { onProgress: options.onProgress } : {}),
  };

  const sink = await openSink(options.format, options.out);
  try {
    await sink.beginTensor({
      name: tensorName,
      dtype: plan.precision,
      shape,
      units: unitsOf(tensorName),
      chunkRows: Math.min(block, count),
      ...(options.deflate ? { deflate: options.deflate } : {}),
    });
    const { sha256, kernel } = await streamTensor(sink, job);
    await job.between(); // a signal during the last block is served before the commit
    for (const a of sideArrays(built, first, count, gains, gainShape)) await sink.addArray(a);
    const formatVersion = plan.formatVersion;
    const values: Record<string, string | number | undefined> = {
      scenario: scenarioText,
      pathweaveVersion: PATHWEAVE_VERSION,
      seed,
      subframeRange: `${first}:${end}`,
      subframesTotal: plan.timing.subframes,
      tensorSha256: sha256,
      kernel,
      formatVersion,
    };
    // The attribute list and dtypes of dataset/layout.ts, in its order.
    for (const a of DATASET_ATTRIBUTES) {
      const value = values[a.name];
      if (value === undefined) {
        if (a.optional === true) continue;
        throw new Error(`generate(): no value for attribute ${a.name}`);
      }
      await sink.setAttribute(
        a.dtype === 'string' ? { name: a.name, dtype: a.dtype, value: String(value) } : { name: a.name, dtype: a.dtype, value: Number(value) },
      );
    }
    // A .npy's side file goes under its name before the .npy does, and is restored should the
    // .npy's commit fail (atomic.ts, commitWithSideFile).
    const fileBytes =
      options.format === 'npy'
        ? await commitWithSideFile(
            `${options.out}.json`,
            npySideFileText(built, { first, end, shape, tensorName, sha256, seed, scenarioText, kernel, formatVersion }),
            () => sink.commit(),
          )
        : await sink.commit();
    const seconds = Number(process.hrtime.bigint() - started) / 1e9;
    return {
      out: options.out,
      format: options.format,
      tensorName,
      dtype: plan.precision,
      shape,
      range,
      fileBytes,
      tensorBytes: count * bytesPerSubframe,
      ...(sha256 !== undefined ? { sha256 } : {}),
      kernel,
      seconds,
      warnings: built.warnings,
      built,
    };
  } catch (e) {
    await sink.abort();
    throw e;
  }
}

/** What streamTensor needs of a run. */
interface TensorJob {
  built: BuiltScenario;
  first: number;
  end: number;
  /** Subframes per block, and blocks in the range. */
  block: number;
  blocks: number;
  workers: number;
  /** Gains of the whole range, [count, (U,) (steps,) Lmax] complex128, filled as blocks arrive. */
  gains: Float64Array;
  gainsPerSubframe: number;
  /** Float values of one block buffer (the largest block). */
  values: number;
  /** The running SHA-256 of the tensor, when asked for. */
  hash: Hash | undefined;
  pool: ConstructorParameters<typeof BlockPool>[1];
  /** Awaited before each block: yields to the event loop, then throws when the run was aborted. */
  between: () => Promise<void>;
  onProgress?: (done: number, total: number) => void;
}

/**
 * Fill and write every block of the tensor in order. Returns the digest (when hashing) and the
 * kernel that computed the blocks. On a failure no write is in flight when it rethrows, so the
 * sink can be aborted at once.
 */
async function streamTensor(sink: DatasetSink, job: TensorJob): Promise<{ sha256: string | undefined; kernel: string }> {
  const { built, first, end, block, blocks, gains, gainsPerSubframe } = job;
  const count = end - first;
  const perSubframe = 2 * built.valuesPerSubframe;
  const Tensor = built.plan.precision === 'complex64' ? Float32Array : Float64Array;
  // File writes go one at a time, in order, on libuv's thread pool, overlapping the next fill;
  // `writes` settles when the last write asked for is done.
  let writes: Promise<void> = Promise.resolve();
  const write = (s: number, n: number, view: Float32Array | Float64Array): Promise<void> => {
    writes = writes.then(() => sink.writeRows(view)).then(() => job.onProgress?.(s + n - first, count));
    writes.catch(() => undefined); // awaited before the buffer is reused, and at the end
    return writes;
  };
  const gainsOf = (s: number, n: number): Float64Array => gains.subarray((s - first) * gainsPerSubframe, (s - first + n) * gainsPerSubframe);

  try {
    if (job.workers === 1 && (job.hash === undefined || blocks === 1)) {
      // The main thread fills in place: arrays from allocateKernelArray live in the kernel's own
      // WebAssembly memory, so the kernel writes there and the file write reads there, no copy.
      // Two buffers: one is written while the other is filled.
      const buffers = Array.from({ length: Math.min(blocks, 2) }, () => allocateKernelArray(job.values, Tensor));
      const free: Array<Promise<void>> = buffers.map(() => Promise.resolve());
      for (let s = first, b = 0; s < end; s += block, b++) {
        await job.between();
        const n = Math.min(block, end - s);
        const i = b % buffers.length;
        await free[i];
        const view = buffers[i]!.subarray(0, n * perSubframe);
        fillBlock(built, view, s, n, gainsOf(s, n));
        job.hash?.update(bytesOf(view));
        free[i] = write(s, n, view);
      }
      await writes;
      return { sha256: job.hash?.digest('hex'), kernel: KERNEL_NAME };
    }
    if (job.workers === 1) {
      // Hashing (about 1.1 GB/s) is slower than the kernel: a thread of its own hashes each block
      // while the next is filled, and the file write overlaps both. A buffer is filled again once
      // its hash and its write are done; three buffers keep all three busy. The hash thread reads
      // the blocks in place: they live in the kernel's shared memory, filled there.
      const hasher = new HashThread();
      try {
        const buffers = [0, 1, 2].map((): Float32Array | Float64Array => sharedBlockArray(job.values, Tensor));
        const free: Array<Promise<unknown>> = buffers.map(() => Promise.resolve());
        try {
          for (let s = first, b = 0; s < end; s += block, b++) {
            await job.between();
            const n = Math.min(block, end - s);
            const i = b % buffers.length;
            await free[i];
            const view = buffers[i]!.subarray(0, n * perSubframe);
            fillBlock(built, view, s, n, gainsOf(s, n));
            free[i] = Promise.all([hasher.update(view), write(s, n, view)]);
            free[i]!.catch(() => undefined); // awaited when the buffer comes round again, or below
          }
          await Promise.all(free);
        } catch (e) {
          await Promise.allSettled(free); // no write in flight when the sink is aborted
          throw e;
        }
        return { sha256: await hasher.digest(), kernel: KERNEL_NAME };
      } finally {
        await hasher.close();
      }
    }
    // Worker threads fill, each into block buffers of its own in shared memory; this thread
    // writes (and hashes) from there, no copy. IN_FLIGHT_PER_WORKER requests per worker wait or
    // compute while one block is written; a block is released to its worker once written.
    const pool = new BlockPool(Math.min(job.workers, blocks), job.pool);
    try {
      const depth = Math.min(blocks, IN_FLIGHT_PER_WORKER * pool.size + 1);
      const inFlight: Array<Promise<FilledBlock>> = [];
      const ask = (b: number): void => {
        const s = first + b * block;
        inFlight[b] = pool.request(s, Math.min(block, end - s));
        inFlight[b].catch(() => undefined); // awaited in order below; avoid an unhandled rejection meanwhile
      };
      for (let b = 0; b < depth; b++) ask(b);
      let next = depth;
      let previous: FilledBlock | undefined;
      for (let b = 0; b < blocks; b++) {
        await job.between();
        const s = first + b * block;
        const n = Math.min(block, end - s);
        const done = await inFlight[b]!;
        delete inFlight[b];
        gainsOf(s, n).set(done.gains);
        const view = done.tensor;
        job.hash?.update(bytesOf(view));
        await writes; // the previous block is on disk: its buffer goes back to its worker
        previous?.release();
        if (next < blocks) ask(next++);
        void write(s, n, view); // awaited through `writes`, before the next block and at the end
        previous = done;
      }
      await writes;
      return { sha256: job.hash?.digest('hex'), kernel: pool.kernel ?? KERNEL_NAME };
    } finally {
      await pool.close();
    }
  } catch (e) {
    await writes.catch(() => undefined); // no write in flight when the sink is aborted
    throw e;
  }
}

function padded(rows: number, L: number, value: (row: number, l: number) => number | undefined, width = 1): Float64Array {
  const out = new Float64Array(rows * L * width).fill(NaN);
  for (let r = 0; r < rows; r++) for (let l = 0; l < L; l++) for (let w = 0; w < width; w++) out[(r * L + l) * width + w] = value(r, l * width + w) ?? NaN;
  return out;
}

/**
 * The named side arrays of docs/datasets.md ("What a file holds") for subframes [first, first + count):
 * gains, the grid, subframe times, the path table (rows per user and per geometry update when
 * the geometry moves; NaN where a path is absent) and ground truth per subframe (truth/...).
 * @example
 * const { scenario } = await loadScenario('examples/street-corner-28ghz.json');
 * const built = buildScenario(scenario);
 * const side = sideArrays(built, 0, 4, new Float64Array(2 * 4 * 8), [4, 8]); // 8 paths
 * [side.length, side[2]!.name, side[2]!.data] // [22, 'subframeTimesS', Float64Array [0, 0.001, 0.002, 0.003]]
 */
export function sideArrays(built: BuiltScenario, first: number, count: number, gains: Float64Array, gainShape: number[]): NamedArray[] {
  const plan = built.plan;
  const users = built.users;
  const Lmax = maxPathCount(built);
  const out: NamedArray[] = [];
  const array = (name: string, shape: number[], data: NamedArray['data'] | string[]): NamedArray =>
    Array.isArray(data)
      ? { name, dtype: 'string', shape, strings: data, units: unitsOf(name) }
      : { name, dtype: datasetArrayDtype(name), shape, data: data!, units: unitsOf(name) };
  out.push({ ...array('gains', gainShape, gains), dtype: 'complex128' });
  const g = plan.grid;
  if (g.domain === 'frequency') out.push(array('frequenciesHz', [g.subcarriers], subcarrierOffsetsHz(g.subcarriers, g.spacingHz)));
  else out.push(array('tapDelaysS', [g.count], tapDelaysS(g.count, g.sampleRateHz)));
  out.push(array('subframeTimesS', [count], subframeTimesS(first, count, plan.timing.subframeS)));

  // Path table: [(U,) (E,) L]; the epoch axis appears when the geometry moves (timelines that
  // state their epochs and are not constant).
  const epochs = users.map((u) =>
    u.timeline.epochs !== undefined && !u.timeline.constant ? u.timeline.epochs.map((m) => u.timeline.ids.map((id) => m.get(id))) : undefined,
  );
  const E = Math.max(1, ...epochs.map((e) => e?.length ?? 1));
  const moving = epochs.some((e) => e !== undefined);
  const axes: LayoutAxes = { ...layoutAxes(built), epochs: moving ? E : undefined };
  const rows = users.length * (moving ? E : 1);
  const cell = (row: number, l: number): { delayS: number; powerDb: number; aodDeg: number[]; aoaDeg: number[] } | undefined => {
    const u = Math.floor(row / (moving ? E : 1));
    const e = row % (moving ? E : 1);
    const user = users[u]!;
    const ep = epochs[u];
    if (ep !== undefined) {
      const p = ep[Math.min(e, ep.length - 1)]?.[l];
      return e < ep.length && p !== undefined ? p : undefined;
    }
    return user.paths[l];
  };
  const sizes = { L: Lmax };
  out.push(
    array(
      'paths/delayS',
      arrayShape('paths/delayS', sizes, axes),
      padded(rows, Lmax, (r, l) => cell(r, l)?.delayS),
    ),
  );
  out.push(
    array(
      'paths/powerDb',
      arrayShape('paths/powerDb', sizes, axes),
      padded(rows, Lmax, (r, l) => cell(r, l)?.powerDb),
    ),
  );
  out.push(
    array(
      'paths/aodDeg',
      arrayShape('paths/aodDeg', sizes, axes),
      padded(rows, Lmax, (r, i) => cell(r, Math.floor(i / 2))?.aodDeg[i % 2], 2),
    ),
  );
  out.push(
    array(
      'paths/aoaDeg',
      arrayShape('paths/aoaDeg', sizes, axes),
      padded(rows, Lmax, (r, i) => cell(r, Math.floor(i / 2))?.aoaDeg[i % 2], 2),
    ),
  );
  const idRows = users.map((u) => Array.from({ length: Lmax }, (_, l) => u.timeline.ids[l] ?? ''));
  const kindRows = users.map((u) => Array.from({ length: Lmax }, (_, l) => u.timeline.kinds[l] ?? ''));
  out.push(array('paths/kind', arrayShape('paths/kind', sizes, axes), kindRows.flat()));
  out.push(array('paths/id', arrayShape('paths/id', sizes, axes), idRows.flat()));
  if (moving)
    out.push(
      array(
        'paths/epochTimesS',
        [E],
        Float64Array.from({ length: E }, (_, e) => e * plan.timing.geometryUpdateS),
      ),
    );

  out.push(...truthArrays(built, first, count));
  return out;
}

/** The optional axes of a built run's arrays (users, symbols; no epoch axis). */
function layoutAxes(built: BuiltScenario): LayoutAxes {
  return {
    users: built.multiUser ? built.users.length : undefined,
    symbols: built.plan.timing.symbolAxis ? built.plan.timing.stepsPerSubframe : undefined,
    epochs: undefined,
  };
}

/** The stored dtype of a side array of the layout table. */
function datasetArrayDtype(name: string): Exclude<NamedArray['dtype'], 'string'> {
  const dtype = datasetArray(name)?.dtype;
  if (dtype === undefined || dtype === 'tensor' || dtype === 'string')
    throw new Error(`generate(): "${name}" is not a numeric side array of the dataset layout`);
  return dtype;
}

/**
 * Ground truth per subframe (at each subframe's start), for learning and positioning studies:
 * positions, velocities and orientations of both ends, line of sight, and per path delay,
 * power, Doppler and both directions (NaN where a path is absent).
 * @example
 * const { scenario } = await loadScenario('examples/street-corner-28ghz.json');
 * const truth = truthArrays(buildScenario(scenario), 0, 4);
 * [truth.length, truth[3]!.name, truth[3]!.data!.slice(0, 3), truth[6]!.data]
 * // [12, 'truth/receiverPosition', Float64Array [22, 9, 1.5], Uint8Array [1, 1, 1, 1]]: the receiver at subframe 0, line of sight in all 4
 */
export function truthArrays(built: BuiltScenario, first: number, count: number): NamedArray[] {
  const users = built.users;
  const U = users.length;
  const Lmax = maxPathCount(built);
  const txPos = new Float64Array(3 * count),
    txVel = new Float64Array(3 * count),
    txOri = new Float64Array(3 * count);
  const rxPos = new Float64Array(3 * count * U),
    rxVel = new Float64Array(3 * count * U),
    rxOri = new Float64Array(3 * count * U);
  const los = new Uint8Array(count * U);
  const delay = new Float64Array(count * U * Lmax).fill(NaN);
  const power = new Float64Array(count * U * Lmax).fill(NaN);
  const doppler = new Float64Array(count * U * Lmax).fill(NaN);
  const aod = new Float64Array(2 * count * U * Lmax).fill(NaN);
  const aoa = new Float64Array(2 * count * U * Lmax).fill(NaN);
  const p: [number, number, number] = [0, 0, 0];
  const setOrientation = (dst: Float64Array, at: number, o: { yawDeg?: number; pitchDeg?: number; rollDeg?: number }): void => {
    dst[at] = o.yawDeg ?? 0;
    dst[at + 1] = o.pitchDeg ?? 0;
    dst[at + 2] = o.rollDeg ?? 0;
  };
  for (let s = 0; s < count; s++) {
    users.forEach((user, u) => {
      const g = user.generator;
      const step = (first + s) * g.stepsPerSubframe;
      const t = g.clock.timeS(step);
      const txm = user.spec.transmitter.motion!,
        rxm = user.spec.receiver.motion!;
      if (u === 0) {
        txPos.set(txm.positionAt(t, p), 3 * s);
        txVel.set(txm.velocityAt(t, p), 3 * s);
        setOrientation(txOri, 3 * s, txm.orientationAt(t));
      }
      const r = 3 * (s * U + u);
      rxPos.set(rxm.positionAt(t, p), r);
      rxVel.set(rxm.velocityAt(t, p), r);
      setOrientation(rxOri, r, rxm.orientationAt(t));
      const frame = g.frameAtStep(step);
      los[s * U + u] = frame.lineOfSight ? 1 : 0;
      const scale = user.spec.amplitudeScale ?? 1;
      for (let l = 0; l < g.pathCount; l++) {
        if (frame.visibility[l] === 0) continue;
        const i = (s * U + u) * Lmax + l;
        delay[i] = frame.delayS[l]!;
        power[i] = 10 * Math.log10((frame.amplitude[2 * l]! ** 2 + frame.amplitude[2 * l + 1]! ** 2) * scale * scale);
        doppler[i] = frame.dopplerHz[l]!;
        const [daz, del] = degFromVector([frame.departure[3 * l]!, frame.departure[3 * l + 1]!, frame.departure[3 * l + 2]!]);
        const [aaz, ael] = degFromVector([frame.arrival[3 * l]!, frame.arrival[3 * l + 1]!, frame.arrival[3 * l + 2]!]);
        aod[2 * i] = daz;
        aod[2 * i + 1] = del;
        aoa[2 * i] = aaz;
        aoa[2 * i + 1] = ael;
      }
    });
  }
  // Shapes, dtypes and units from the layout table.
  const axes = layoutAxes(built);
  const sizes = { S: count, L: Lmax };
  const row = (name: string, data: Float64Array | Uint8Array): NamedArray => ({
    name,
    dtype: datasetArrayDtype(name),
    shape: arrayShape(name, sizes, axes),
    data,
    units: unitsOf(name),
  });
  return [
    row('truth/transmitterPosition', txPos),
    row('truth/transmitterVelocity', txVel),
    row('truth/transmitterOrientationDeg', txOri),
    row('truth/receiverPosition', rxPos),
    row('truth/receiverVelocity', rxVel),
    row('truth/receiverOrientationDeg', rxOri),
    row('truth/lineOfSight', los),
    row('truth/delayS', delay),
    row('truth/powerDb', power),
    row('truth/dopplerHz', doppler),
    row('truth/aodDeg', aod),
    row('truth/aoaDeg', aoa),
  ];
}

/**
 * The side file of a .npy (`<file>.npy.json`): the tensor's description (with its sha256 when
 * computed), the format version and kernel, seed, users, paths and scenario.
 */
function npySideFileText(
  built: BuiltScenario,
  info: {
    first: number;
    end: number;
    shape: number[];
    tensorName: string;
    sha256: string | undefined;
    seed: number;
    scenarioText: string;
    kernel: string;
    formatVersion: number;
  },
): string {
  const doc = {
    formatVersion: info.formatVersion,
    pathweaveVersion: PATHWEAVE_VERSION,
    kernel: info.kernel,
    tensor: {
      name: info.tensorName,
      dtype: built.plan.precision,
      shape: info.shape,
      subframes: [info.first, info.end],
      subframesTotal: built.plan.timing.subframes,
      ...(info.sha256 !== undefined ? { sha256: info.sha256 } : {}),
    },
    seed: info.seed,
    users: built.users.map((u) => ({ id: u.id, paths: sideFilePaths(u.paths) })),
    paths: sideFilePaths(built.paths),
    scenario: JSON.parse(info.scenarioText) as unknown,
  };
  return JSON.stringify(doc, null, 2) + '\n';
}
