/**
 * `generate`: stream a scenario's channel tensor to a file, one block of subframes at a time,
 * so memory stays bounded by one block whatever S is (plus the small per-subframe side arrays:
 * gains and ground truth, S x U x L values). The file appears under its name only when complete
 * (temporary file, then rename).
 *
 * Tensor layout: [S, (U,) (symbols,) K or count, Nr, Nt], complex interleaved; users follow S.
 */
import { createHash } from 'node:crypto';
import { totalmem } from 'node:os';
import { allocateKernelArray, KERNEL_NAME, subcarrierOffsetsHz, subframeTimesS, tapDelaysS, TracedTimeline } from '@pathweave/core';
import { degFromVector } from '@pathweave/geometry';
import { writeFileAtomic } from './atomic.js';
import { buildScenario, chooseDomain, outputEstimate, spacingOf, type BuiltScenario, type Domain } from './build.js';
import { openSink, type OutputFormat } from './formats/index.js';
import { bytesOf } from './formats/npy.js';
import type { NamedArray } from './formats/sink.js';
import type { Scenario } from './schema.js';
import { PATHWEAVE_VERSION } from './version.js';
import { fillBlock, maxPathCount } from './workers/fill.js';
import { HashThread } from './workers/hash.js';
import { BlockPool, defaultWorkers } from './workers/pool.js';

/** Default refusal threshold for one output file, bytes (raise with --max-bytes). */
export const DEFAULT_MAX_OUTPUT_BYTES = 64 * 2 ** 30;

/** Target size of one streamed block of subframes, bytes. */
export const BLOCK_TARGET_BYTES = 16 * 2 ** 20;

/** Options of a generate run. */
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
  /** Called after each block with subframes done and total. */
  onProgress?: (done: number, total: number) => void;
  /** Checked between blocks; when aborted the temporary file is removed. */
  signal?: AbortSignal;
  /**
   * Threads that compute blocks of subframes (worker_threads; the main thread then hashes and
   * writes). 1 computes on the main thread (with two blocks or more, a thread of its own hashes
   * the tensor for `tensorSha256` meanwhile). Default: one per available core, 1 for runs of
   * fewer than two blocks. The tensor bytes are the same for every count.
   */
  workers?: number;
}

/** What a run wrote. */
export interface GenerateReport {
  out: string;
  format: OutputFormat;
  tensorName: 'H' | 'h';
  dtype: 'complex64' | 'complex128';
  shape: number[];
  range: [number, number];
  fileBytes: number;
  tensorBytes: number;
  sha256: string;
  seconds: number;
  warnings: string[];
  built: BuiltScenario;
}

/** A refusal of the request itself (exit code 2). */
export class RequestError extends Error {
  override name = 'RequestError';
}

/** Human-readable byte count. @example formatBytes(1536) // "1.5 KiB" */
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

/** Working memory a run needs besides its block buffer, bytes (an estimate). */
export function workingMemoryEstimate(scenario: Scenario, domain: Domain, pathCount: number): number {
  const { shape } = outputEstimate(scenario, domain, 1);
  const n = shape.length;
  const Nr = shape[n - 2] ?? 0, Nt = shape[n - 1] ?? 0, bins = shape[n - 3] ?? 0;
  const users = scenario.receivers?.length ?? 1;
  const squint = domain === 'frequency' && scenario.band?.beamSquint === true;
  const perPath = squint ? 16 * bins * (Nr + Nt) : 16 * Nr * Nt;
  return users * (pathCount * perPath + 48 * bins * pathCount + 16 * Nr * Nt);
}

/** Refuse up front what cannot be done: output over the limit, memory beyond the machine. */
export function checkRequest(scenario: Scenario, domain: Domain, range: [number, number], maxBytes: number, pathCount: number): void {
  const S = scenario.timing.subframes;
  if (!(range[0] >= 0 && range[1] <= S && range[0] < range[1])) {
    throw new RequestError(`--subframes ${range[0]}:${range[1]} must be a non-empty range within 0:${S}`);
  }
  const est = outputEstimate(scenario, domain, range[1] - range[0]);
  if (est.bytes > maxBytes) {
    throw new RequestError(
      `the output would be ${formatBytes(est.bytes)} (${est.bytes} bytes, shape [${est.shape.join(', ')}]), over the limit of ${formatBytes(maxBytes)}; ` +
        `raise it with --max-bytes ${est.bytes} or ask for fewer subframes`,
    );
  }
  const budget = totalmem() / 2;
  const need = workingMemoryEstimate(scenario, domain, pathCount) + 2 * est.bytesPerSubframe;
  if (need > budget) {
    throw new RequestError(`the run would need about ${formatBytes(need)} of memory (one subframe is ${formatBytes(est.bytesPerSubframe)}), more than the ${formatBytes(budget)} this machine can spare; use fewer elements, subcarriers or paths`);
  }
}

/** Subframes per streamed block for a given subframe size. */
export function blockSubframes(bytesPerSubframe: number): number {
  return Math.max(1, Math.floor(BLOCK_TARGET_BYTES / Math.max(1, bytesPerSubframe)));
}

export { fillBlock, maxPathCount } from './workers/fill.js';

/** Run a generate request. */
export async function generate(scenario: Scenario, scenarioText: string, options: GenerateOptions): Promise<GenerateReport> {
  const started = process.hrtime.bigint();
  const domain = chooseDomain(scenario, options.domain);
  const range = options.range ?? [0, scenario.timing.subframes];
  const maxBytes = options.maxBytes ?? DEFAULT_MAX_OUTPUT_BYTES;
  // Cheap size checks before any tracing or allocation.
  checkRequest(scenario, domain, range, maxBytes, scenario.paths?.length ?? 1);
  const built = buildScenario(scenario, { domain, ...(options.seed !== undefined ? { seed: options.seed } : {}) });
  checkRequest(scenario, domain, range, maxBytes, maxPathCount(built));
  const g = built.generator;
  const [first, end] = range;
  const count = end - first;
  const shape = [count, ...built.shape.slice(1)];
  const tensorName = domain === 'frequency' ? 'H' : 'h';
  const bytesPerSubframe = built.valuesPerSubframe * g.bytesPerValue;
  const block = blockSubframes(bytesPerSubframe);
  const seed = options.seed ?? scenario.seed;
  const hash = createHash('sha256');
  const gainShape = [count, ...(built.multiUser ? [built.users.length] : []), ...(g.stepsPerSubframe > 1 || scenario.timing.symbolsPerSubframe !== undefined || scenario.timing.numerology !== undefined ? [g.stepsPerSubframe] : []), maxPathCount(built)];
  const gains = new Float64Array(2 * gainShape.reduce((a, b) => a * b, 1));
  const gainsPerSubframe = gains.length / count;

  const sink = await openSink(options.format, options.out);
  try {
    await sink.beginTensor({ name: tensorName, dtype: g.precision, shape, units: '1', chunkRows: Math.min(block, count), ...(options.deflate ? { deflate: options.deflate } : {}) });
    const values = 2 * Math.min(block, count) * built.valuesPerSubframe;
    const Tensor = g.precision === 'complex64' ? Float32Array : Float64Array;
    const blocks = Math.ceil(count / block);
    const workers = options.workers ?? defaultWorkers(blocks);
    if (!Number.isInteger(workers) || workers < 1) throw new RangeError(`generate(): options.workers must be an integer >= 1, got ${workers}`);
    // The file write of one block (on libuv's thread pool) overlaps the hashing and filling of
    // the next: at most one write is pending, and a buffer is reused only once its write is done.
    let pendingWrite: Promise<void> = Promise.resolve();
    const write = async (s: number, n: number, view: Float32Array | Float64Array): Promise<void> => {
      hash.update(bytesOf(view));
      await pendingWrite;
      pendingWrite = sink.writeRows(view).then(() => options.onProgress?.(s + n - first, count));
      pendingWrite.catch(() => undefined); // awaited before the next write and at the end
    };
    let digest: (() => Promise<string>) | undefined;
    if (workers === 1 && blocks === 1) {
      // One block: the kernel writes in place (WebAssembly memory with the SIMD kernel), hashed here.
      const view = allocateKernelArray(2 * count * built.valuesPerSubframe, Tensor);
      fillBlock(built, view, first, count, gains);
      await write(first, count, view);
    } else if (workers === 1) {
      // The main thread fills; a thread of its own hashes each block (SHA-256 is slower than the
      // kernel) while the next is filled, and the file write overlaps both. A buffer is filled
      // again once its hash and its write are done; three buffers keep all three busy.
      const hasher = new HashThread();
      digest = () => hasher.digest().finally(() => hasher.close());
      const buffers = [0, 1, 2].map((): Float32Array | Float64Array => (g.precision === 'complex64' ? new Float32Array(new SharedArrayBuffer(4 * values)) : new Float64Array(new SharedArrayBuffer(8 * values))));
      const free: Array<Promise<void>> = buffers.map(() => Promise.resolve());
      try {
        let writes: Promise<void> = Promise.resolve();
        for (let s = first, b = 0; s < end; s += block, b++) {
          if (options.signal?.aborted) throw options.signal.reason ?? new Error('aborted');
          const n = Math.min(block, end - s);
          const i = b % buffers.length;
          await free[i];
          const view = buffers[i]!.subarray(0, 2 * n * built.valuesPerSubframe) as Float32Array | Float64Array;
          fillBlock(built, view, s, n, gains.subarray((s - first) * gainsPerSubframe, (s - first + n) * gainsPerSubframe));
          const hashed = hasher.update(view);
          writes = writes.then(() => sink.writeRows(view)).then(() => options.onProgress?.(s + n - first, count));
          free[i] = Promise.all([hashed, writes]).then(() => undefined);
          free[i]!.catch(() => undefined); // awaited when the buffer comes round again, or below
        }
        await Promise.all(free);
      } catch (e) {
        await Promise.allSettled(free); // no write in flight when the sink is aborted
        await hasher.close();
        throw e;
      }
    } else {
      // Two blocks in flight per worker (one computing while the main thread hashes the other),
      // plus the one being written.
      const pool = new BlockPool(Math.min(workers, blocks), { scenario, domain, seed: options.seed, gainsPerSubframe });
      try {
        const depth = 2 * pool.size;
        const inFlight: Array<Promise<{ tensor: ArrayBuffer; gains: ArrayBuffer }>> = [];
        const ask = (b: number, tensor: ArrayBuffer, gainBuffer: ArrayBuffer): void => {
          const s = first + b * block;
          inFlight[b] = pool.request(s, Math.min(block, end - s), tensor, gainBuffer);
          inFlight[b].catch(() => undefined); // awaited in order below; avoid an unhandled rejection meanwhile
        };
        const fresh = (): [ArrayBuffer, ArrayBuffer] => [new ArrayBuffer(values * Tensor.BYTES_PER_ELEMENT), new ArrayBuffer(8 * block * gainsPerSubframe)];
        for (let b = 0; b < Math.min(depth, blocks); b++) ask(b, ...fresh());
        let spare: [ArrayBuffer, ArrayBuffer] | undefined = blocks > depth ? fresh() : undefined;
        for (let b = 0; b < blocks; b++) {
          if (options.signal?.aborted) throw options.signal.reason ?? new Error('aborted');
          const s = first + b * block;
          const n = Math.min(block, end - s);
          const done = await inFlight[b]!;
          delete inFlight[b];
          gains.set(new Float64Array(done.gains, 0, n * gainsPerSubframe), (s - first) * gainsPerSubframe);
          // write() returns once the previous block's write is done: its buffers are free again.
          await write(s, n, new Tensor(done.tensor, 0, 2 * n * built.valuesPerSubframe));
          if (b + depth < blocks && spare !== undefined) ask(b + depth, ...spare);
          spare = [done.tensor, done.gains];
        }
      } finally {
        await pendingWrite.catch(() => undefined);
        await pool.close();
      }
    }
    await pendingWrite;
    const sha256 = digest !== undefined ? await digest() : hash.digest('hex');
    for (const a of sideArrays(built, first, count, gains, gainShape)) await sink.addArray(a);
    await sink.setAttribute({ name: 'scenario', dtype: 'string', value: scenarioText });
    await sink.setAttribute({ name: 'pathweaveVersion', dtype: 'string', value: PATHWEAVE_VERSION });
    await sink.setAttribute({ name: 'seed', dtype: 'int64', value: seed });
    await sink.setAttribute({ name: 'subframeRange', dtype: 'string', value: `${first}:${end}` });
    await sink.setAttribute({ name: 'subframesTotal', dtype: 'int64', value: scenario.timing.subframes });
    await sink.setAttribute({ name: 'tensorSha256', dtype: 'string', value: sha256 });
    await sink.setAttribute({ name: 'kernel', dtype: 'string', value: KERNEL_NAME });
    await sink.setAttribute({ name: 'formatVersion', dtype: 'int32', value: scenario.formatVersion ?? 1 });
    const fileBytes = await sink.commit();
    if (options.format === 'npy') await writeNpySideFile(options.out, built, { first, end, shape, tensorName, sha256, seed, scenarioText });
    const seconds = Number(process.hrtime.bigint() - started) / 1e9;
    return { out: options.out, format: options.format, tensorName, dtype: g.precision, shape, range, fileBytes, tensorBytes: count * bytesPerSubframe, sha256, seconds, warnings: built.warnings, built };
  } catch (e) {
    await sink.abort();
    throw e;
  }
}

function padded(rows: number, L: number, value: (row: number, l: number) => number | undefined, width = 1): Float64Array {
  const out = new Float64Array(rows * L * width).fill(NaN);
  for (let r = 0; r < rows; r++) for (let l = 0; l < L; l++) for (let w = 0; w < width; w++) out[(r * L + l) * width + w] = value(r, l * width + w) ?? NaN;
  return out;
}

/**
 * The named side arrays of design.md ("Output files") for subframes [first, first + count):
 * gains, the grid, subframe times, the path table (rows per user and per geometry update when
 * the geometry moves; NaN where a path is absent) and ground truth per subframe (truth/...).
 */
export function sideArrays(built: BuiltScenario, first: number, count: number, gains: Float64Array, gainShape: number[]): NamedArray[] {
  const s = built.scenario;
  const users = built.users;
  const U = users.length;
  const Lmax = maxPathCount(built);
  const userAxis = built.multiUser ? [U] : [];
  const out: NamedArray[] = [];
  out.push({ name: 'gains', dtype: 'complex128', shape: gainShape, data: gains, units: '1' });
  if (built.domain === 'frequency') out.push({ name: 'frequenciesHz', dtype: 'float64', shape: [s.band!.subcarriers], data: subcarrierOffsetsHz(s.band!.subcarriers, spacingOf(s)), units: 'Hz' });
  else out.push({ name: 'tapDelaysS', dtype: 'float64', shape: [s.taps!.count], data: tapDelaysS(s.taps!.count, s.taps!.sampleRateHz), units: 's' });
  out.push({ name: 'subframeTimesS', dtype: 'float64', shape: [count], data: subframeTimesS(first, count, s.timing.subframeS), units: 's' });

  // Path table: [(U,) (E,) L]; the epoch axis appears when the geometry moves.
  const epochs = users.map((u) => (u.timeline instanceof TracedTimeline && !u.timeline.constant ? u.timeline.epochs.map((m) => u.timeline.ids.map((id) => m.get(id))) : undefined));
  const E = Math.max(1, ...epochs.map((e) => e?.length ?? 1));
  const moving = epochs.some((e) => e !== undefined);
  const rows = U * (moving ? E : 1);
  const tableShape = [...userAxis, ...(moving ? [E] : []), Lmax];
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
  out.push({ name: 'paths/delayS', dtype: 'float64', shape: tableShape, data: padded(rows, Lmax, (r, l) => cell(r, l)?.delayS), units: 's' });
  out.push({ name: 'paths/powerDb', dtype: 'float64', shape: tableShape, data: padded(rows, Lmax, (r, l) => cell(r, l)?.powerDb), units: 'dB' });
  out.push({ name: 'paths/aodDeg', dtype: 'float64', shape: [...tableShape, 2], data: padded(rows, Lmax, (r, i) => cell(r, Math.floor(i / 2))?.aodDeg[i % 2], 2), units: 'deg' });
  out.push({ name: 'paths/aoaDeg', dtype: 'float64', shape: [...tableShape, 2], data: padded(rows, Lmax, (r, i) => cell(r, Math.floor(i / 2))?.aoaDeg[i % 2], 2), units: 'deg' });
  const idRows = users.map((u) => Array.from({ length: Lmax }, (_, l) => u.timeline.ids[l] ?? ''));
  const kindRows = users.map((u) => Array.from({ length: Lmax }, (_, l) => u.timeline.kinds[l] ?? ''));
  out.push({ name: 'paths/kind', dtype: 'string', shape: [...userAxis, Lmax], strings: kindRows.flat(), units: '1' });
  out.push({ name: 'paths/id', dtype: 'string', shape: [...userAxis, Lmax], strings: idRows.flat(), units: '1' });
  if (moving) out.push({ name: 'paths/epochTimesS', dtype: 'float64', shape: [E], data: Float64Array.from({ length: E }, (_, e) => e * (s.timing.geometryUpdateS ?? s.timing.subframeS)), units: 's' });

  out.push(...truthArrays(built, first, count));
  return out;
}

/** Ground truth per subframe (at each subframe's start), for learning and positioning studies. */
export function truthArrays(built: BuiltScenario, first: number, count: number): NamedArray[] {
  const users = built.users;
  const U = users.length;
  const Lmax = maxPathCount(built);
  const userAxis = built.multiUser ? [U] : [];
  const txPos = new Float64Array(3 * count), txVel = new Float64Array(3 * count), txOri = new Float64Array(3 * count);
  const rxPos = new Float64Array(3 * count * U), rxVel = new Float64Array(3 * count * U), rxOri = new Float64Array(3 * count * U);
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
      const txm = user.spec.transmitter.motion!, rxm = user.spec.receiver.motion!;
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
  const pathShape = [count, ...userAxis, Lmax];
  return [
    { name: 'truth/transmitterPosition', dtype: 'float64', shape: [count, 3], data: txPos, units: 'm' },
    { name: 'truth/transmitterVelocity', dtype: 'float64', shape: [count, 3], data: txVel, units: 'm/s' },
    { name: 'truth/transmitterOrientationDeg', dtype: 'float64', shape: [count, 3], data: txOri, units: 'deg' },
    { name: 'truth/receiverPosition', dtype: 'float64', shape: [count, ...userAxis, 3], data: rxPos, units: 'm' },
    { name: 'truth/receiverVelocity', dtype: 'float64', shape: [count, ...userAxis, 3], data: rxVel, units: 'm/s' },
    { name: 'truth/receiverOrientationDeg', dtype: 'float64', shape: [count, ...userAxis, 3], data: rxOri, units: 'deg' },
    { name: 'truth/lineOfSight', dtype: 'uint8', shape: [count, ...userAxis], data: los, units: '1' },
    { name: 'truth/delayS', dtype: 'float64', shape: pathShape, data: delay, units: 's' },
    { name: 'truth/powerDb', dtype: 'float64', shape: pathShape, data: power, units: 'dB' },
    { name: 'truth/dopplerHz', dtype: 'float64', shape: pathShape, data: doppler, units: 'Hz' },
    { name: 'truth/aodDeg', dtype: 'float64', shape: [...pathShape, 2], data: aod, units: 'deg' },
    { name: 'truth/aoaDeg', dtype: 'float64', shape: [...pathShape, 2], data: aoa, units: 'deg' },
  ];
}

async function writeNpySideFile(
  out: string,
  built: BuiltScenario,
  info: { first: number; end: number; shape: number[]; tensorName: string; sha256: string; seed: number; scenarioText: string },
): Promise<void> {
  const doc = {
    pathweaveVersion: PATHWEAVE_VERSION,
    tensor: { name: info.tensorName, dtype: built.generator.precision, shape: info.shape, subframes: [info.first, info.end], subframesTotal: built.scenario.timing.subframes, sha256: info.sha256 },
    seed: info.seed,
    users: built.users.map((u) => ({ id: u.id, paths: u.paths })),
    paths: built.paths,
    scenario: JSON.parse(info.scenarioText) as unknown,
  };
  await writeFileAtomic(`${out}.json`, JSON.stringify(doc, null, 2) + '\n');
}
