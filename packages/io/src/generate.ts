/**
 * `generate`: stream a scenario's channel tensor to a file, one block of subframes at a time,
 * so memory stays bounded by one block whatever S is. The file appears under its name only
 * when complete (temporary file, then rename).
 */
import { createHash } from 'node:crypto';
import { totalmem } from 'node:os';
import { subcarrierOffsetsHz, subframeTimesS, tapDelaysS } from '@pathweave/core';
import { writeFileAtomic } from './atomic.js';
import { buildScenario, chooseDomain, outputEstimate, type BuiltScenario, type Domain } from './build.js';
import { openSink, type OutputFormat } from './formats/index.js';
import { bytesOf } from './formats/npy.js';
import type { NamedArray } from './formats/sink.js';
import type { Scenario } from './schema.js';
import { ScenarioError } from './validate.js';
import { PATHWEAVE_VERSION } from './version.js';

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
  /** Called after each block with subframes done and total. */
  onProgress?: (done: number, total: number) => void;
  /** Checked between blocks; when aborted the temporary file is removed. */
  signal?: AbortSignal;
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
  const pairs = (shape[2] ?? 0) * (shape[3] ?? 0);
  const bins = shape[1] ?? 0;
  const squint = domain === 'frequency' && scenario.band?.beamSquint === true;
  const perPath = squint ? 16 * bins * ((shape[2] ?? 0) + (shape[3] ?? 0)) : 16 * pairs;
  return pathCount * perPath + 32 * bins * pathCount + 16 * pairs;
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
    throw new RequestError(`the run would need about ${formatBytes(need)} of memory (one subframe is ${formatBytes(est.bytesPerSubframe)}), more than the ${formatBytes(budget)} this machine can spare`);
  }
}

/** Subframes per streamed block for a given subframe size. */
export function blockSubframes(bytesPerSubframe: number): number {
  return Math.max(1, Math.floor(BLOCK_TARGET_BYTES / Math.max(1, bytesPerSubframe)));
}

/** Run a generate request. */
export async function generate(scenario: Scenario, scenarioText: string, options: GenerateOptions): Promise<GenerateReport> {
  const started = process.hrtime.bigint();
  const domain = chooseDomain(scenario, options.domain);
  const range = options.range ?? [0, scenario.timing.subframes];
  const maxBytes = options.maxBytes ?? DEFAULT_MAX_OUTPUT_BYTES;
  // Cheap size checks before any tracing or allocation.
  checkRequest(scenario, domain, range, maxBytes, scenario.paths?.length ?? 1);
  const built = buildScenario(scenario, { domain, ...(options.seed !== undefined ? { seed: options.seed } : {}) });
  checkRequest(scenario, domain, range, maxBytes, built.generator.pathCount);
  const g = built.generator;
  const [first, end] = range;
  const count = end - first;
  const shape = [count, g.shape[1], g.shape[2], g.shape[3]];
  const tensorName = domain === 'frequency' ? 'H' : 'h';
  const bytesPerSubframe = g.valuesPerSubframe * g.bytesPerValue;
  const block = blockSubframes(bytesPerSubframe);
  const seed = options.seed ?? scenario.seed;
  const hash = createHash('sha256');

  const sink = await openSink(options.format, options.out);
  try {
    await sink.beginTensor({ name: tensorName, dtype: g.precision, shape, units: '1', chunkRows: Math.min(block, count) });
    const buffer = g.allocate(Math.min(block, count));
    for (let s = first; s < end; s += block) {
      if (options.signal?.aborted) throw options.signal.reason ?? new Error('aborted');
      const n = Math.min(block, end - s);
      const view = buffer.subarray(0, 2 * n * g.valuesPerSubframe) as Float32Array | Float64Array;
      g.fill(view, s, n);
      hash.update(bytesOf(view));
      await sink.writeRows(view);
      options.onProgress?.(s + n - first, count);
    }
    const sha256 = hash.digest('hex');
    for (const a of sideArrays(built, first, count)) await sink.addArray(a);
    await sink.setAttribute({ name: 'scenario', dtype: 'string', value: scenarioText });
    await sink.setAttribute({ name: 'pathweaveVersion', dtype: 'string', value: PATHWEAVE_VERSION });
    await sink.setAttribute({ name: 'seed', dtype: 'int64', value: seed });
    await sink.setAttribute({ name: 'subframeRange', dtype: 'string', value: `${first}:${end}` });
    await sink.setAttribute({ name: 'tensorSha256', dtype: 'string', value: sha256 });
    const fileBytes = await sink.commit();
    if (options.format === 'npy') await writeNpySideFile(options.out, built, { first, end, shape, tensorName, sha256, seed, scenarioText });
    const seconds = Number(process.hrtime.bigint() - started) / 1e9;
    return { out: options.out, format: options.format, tensorName, dtype: g.precision, shape, range, fileBytes, tensorBytes: count * bytesPerSubframe, sha256, seconds, warnings: built.warnings, built };
  } catch (e) {
    await sink.abort();
    if (e instanceof ScenarioError) throw e;
    throw e;
  }
}

/** The named side arrays of design.md ("Output files") for subframes [first, first + count). */
export function sideArrays(built: BuiltScenario, first: number, count: number): NamedArray[] {
  const g = built.generator;
  const s = built.scenario;
  const L = g.pathCount;
  const out: NamedArray[] = [];
  out.push({ name: 'gains', dtype: 'complex128', shape: [count, L], data: g.gains(first, count), units: '1' });
  if (built.domain === 'frequency') out.push({ name: 'frequenciesHz', dtype: 'float64', shape: [s.band!.subcarriers], data: subcarrierOffsetsHz(s.band!.subcarriers, s.band!.spacingHz), units: 'Hz' });
  else out.push({ name: 'tapDelaysS', dtype: 'float64', shape: [s.taps!.count], data: tapDelaysS(s.taps!.count, s.taps!.sampleRateHz), units: 's' });
  out.push({ name: 'subframeTimesS', dtype: 'float64', shape: [count], data: subframeTimesS(first, count, s.timing.subframeS), units: 's' });
  const p = built.paths;
  out.push({ name: 'paths/delayS', dtype: 'float64', shape: [L], data: Float64Array.from(p, (r) => r.delayS), units: 's' });
  out.push({ name: 'paths/powerDb', dtype: 'float64', shape: [L], data: Float64Array.from(p, (r) => r.powerDb), units: 'dB' });
  out.push({ name: 'paths/aodDeg', dtype: 'float64', shape: [L, 2], data: Float64Array.from(p.flatMap((r) => r.aodDeg)), units: 'deg' });
  out.push({ name: 'paths/aoaDeg', dtype: 'float64', shape: [L, 2], data: Float64Array.from(p.flatMap((r) => r.aoaDeg)), units: 'deg' });
  out.push({ name: 'paths/kind', dtype: 'string', shape: [L], strings: p.map((r) => r.kind), units: '1' });
  out.push({ name: 'paths/id', dtype: 'string', shape: [L], strings: p.map((r) => r.id), units: '1' });
  return out;
}

async function writeNpySideFile(
  out: string,
  built: BuiltScenario,
  info: { first: number; end: number; shape: number[]; tensorName: string; sha256: string; seed: number; scenarioText: string },
): Promise<void> {
  const doc = {
    pathweaveVersion: PATHWEAVE_VERSION,
    tensor: { name: info.tensorName, dtype: built.generator.precision, shape: info.shape, subframes: [info.first, info.end], sha256: info.sha256 },
    seed: info.seed,
    paths: built.paths,
    scenario: JSON.parse(info.scenarioText) as unknown,
  };
  await writeFileAtomic(`${out}.json`, JSON.stringify(doc, null, 2) + '\n');
}
