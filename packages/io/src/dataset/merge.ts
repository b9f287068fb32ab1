/**
 * `merge`: the part files of a sharded run into one file, as if the run had not been sharded.
 * Every part's manifest (manifest.ts) is checked first (present, same scenario, seed, dtype and
 * shape, file size), the parts must tile subframes 0..S-1 with no gap and no overlap, and each
 * part's tensor sha256 is checked while it is copied; a refusal leaves nothing under the output
 * name (the sink writes a temporary file, removed on abort).
 *
 * Tensor layout: [S, (U,) (symbols,) K or count, Nr, Nt], complex interleaved, the parts'
 * rows in subframe order, so the merged tensor is byte for byte the unsharded run's. The
 * per-subframe side arrays (gains, subframeTimesS, truth/...) are concatenated along axis 0;
 * the others (frequenciesHz or tapDelaysS, paths/...) must be equal in every part and are kept
 * once. Memory: one block of tensor rows plus the side arrays.
 */
import { createHash } from 'node:crypto';
import { stat } from 'node:fs/promises';
import { basename } from 'node:path';
import { commitWithSideFile } from '../formats/atomic.js';
import { formatFromPath, openSink, type OutputFormat } from '../formats/index.js';
import { bytesOf, DTYPE_BYTES } from '../formats/npy.js';
import { openDatasetReader, tensorOf, attributeOf, InputFileError, NpyReader, type DatasetReader, type StoredArray } from '../formats/reader.js';
import type { ArrayData, Attribute, NamedArray } from '../formats/sink.js';
import { blockSubframes, RequestError } from './generate.js';
import { datasetArray, unitsOf } from './layout.js';
import { checkScenarioAttribute, fileSha256, manifestPathOf, readManifest, ManifestError, type PartManifest } from './manifest.js';

/**
 * Options of a merge.
 * @example
 * for (const shard of ['0/2', '1/2']) await main(['generate', 'examples/street-corner-28ghz.json', '--shard', shard, '--out', 'run.part-{index}-of-{count}.h5']);
 * // run.part-0-of-2.h5 (subframes 0:100 of 200) and run.part-1-of-2.h5 (100:200), each with its manifest
 * const done: number[] = [];
 * const options: MergeOptions = { format: 'npz', onProgress: (subframes) => done.push(subframes) };
 * (await merge(['run.part-0-of-2.h5', 'run.part-1-of-2.h5'], 'run.npz', options)).format // 'npz'; done is [100, 200]
 */
export interface MergeOptions {
  /** Output format; by default from the extension of `out`. */
  format?: OutputFormat;
  /** Called after each block with subframes copied and total. */
  onProgress?: (done: number, total: number) => void;
  /** Checked between blocks, also while the parts are checked; when aborted the temporary file is removed. */
  signal?: AbortSignal;
  /** Merge parts written by different pathweave versions (named in a warning); refused otherwise. */
  allowVersions?: boolean;
}

/**
 * What a merge wrote.
 * @example
 * for (const shard of ['0/2', '1/2']) await main(['generate', 'examples/street-corner-28ghz.json', '--shard', shard, '--out', 'run.part-{index}-of-{count}.h5']);
 * // run.part-0-of-2.h5 (subframes 0:100 of 200) and run.part-1-of-2.h5 (100:200), each with its manifest
 * const report: MergeReport = await merge(['run.part-0-of-2.h5', 'run.part-1-of-2.h5'], 'run.h5');
 * [report.shape, report.parts, report.warnings] // [[200, 64, 4, 32], 2, []]
 */
export interface MergeReport {
  out: string;
  format: OutputFormat;
  tensorName: 'H' | 'h';
  dtype: 'complex64' | 'complex128';
  shape: number[];
  parts: number;
  fileBytes: number;
  /** sha256 of the merged tensor bytes (equal to the tensorSha256 of the unsharded run made with `--checksum`). */
  sha256: string;
  seconds: number;
  warnings: string[];
}

/** Whether a side array has the subframe axis first (and is concatenated by merge), from the layout table. @example isPerSubframe('truth/delayS') // true */
export function isPerSubframe(name: string): boolean {
  return datasetArray(name)?.perSubframe === true;
}

interface Part {
  path: string;
  manifest: PartManifest;
  reader: DatasetReader;
  tensor: StoredArray;
}

function refuse(message: string): never {
  throw new RequestError(`merge: ${message}`);
}

function sameShape(a: readonly number[], b: readonly number[]): boolean {
  return a.length === b.length && a.every((v, i) => v === b[i]);
}

function concat(arrays: ArrayData[]): ArrayData {
  const total = arrays.reduce((n, a) => n + a.length, 0);
  const first = arrays[0]!;
  const out = new (first.constructor as new (n: number) => ArrayData)(total);
  let at = 0;
  for (const a of arrays) {
    (out as Float64Array).set(a as Float64Array, at);
    at += a.length;
  }
  return out;
}

function equalData(a: NamedArray, b: NamedArray): boolean {
  if (a.dtype !== b.dtype || !sameShape(a.shape, b.shape)) return false;
  if (a.dtype === 'string') return JSON.stringify(a.strings) === JSON.stringify(b.strings);
  return Buffer.from(bytesOf(a.data!)).equals(Buffer.from(bytesOf(b.data!)));
}

/** Check the manifests and the tiling of the parts; returns them sorted by first subframe. */
async function checkParts(partFiles: string[], options: MergeOptions, warnings: string[]): Promise<{ manifest: PartManifest; path: string }[]> {
  if (partFiles.length === 0) refuse('no part files given');
  const seen = new Set<string>();
  const parts: { manifest: PartManifest; path: string }[] = [];
  for (const path of partFiles) {
    if (seen.has(path)) refuse(`${path} is given twice`);
    seen.add(path);
    let manifest: PartManifest;
    try {
      manifest = await readManifest(manifestPathOf(path));
    } catch (e) {
      if (e instanceof ManifestError) refuse(`${e.message}; merge takes the part files that generate --shard wrote, each with its manifest beside it`);
      throw e;
    }
    if (manifest.file !== basename(path)) refuse(`${manifestPathOf(path)} describes ${manifest.file}, not ${basename(path)}`);
    parts.push({ manifest, path });
  }
  const ref = parts[0]!;
  for (const p of parts.slice(1)) {
    const a = ref.manifest,
      b = p.manifest;
    if (b.scenarioSha256 !== a.scenarioSha256)
      refuse(
        `${p.path} is of another scenario than ${ref.path} (scenario sha256 ${b.scenarioSha256.slice(0, 12)}... against ${a.scenarioSha256.slice(0, 12)}...)`,
      );
    if (b.seed !== a.seed) refuse(`${p.path} is of seed ${b.seed}, ${ref.path} of seed ${a.seed}`);
    if (b.subframesTotal !== a.subframesTotal) refuse(`${p.path} is of a run of ${b.subframesTotal} subframes, ${ref.path} of ${a.subframesTotal}`);
    if (b.format !== a.format)
      refuse(
        `${p.path} is a part in ${b.format}, ${ref.path} in ${a.format}: the parts of one run share one format (a mixed-format merge is refused); regenerate the odd parts or convert them`,
      );
    if (b.tensor.name !== a.tensor.name || b.tensor.dtype !== a.tensor.dtype || !sameShape(b.tensor.shape.slice(1), a.tensor.shape.slice(1))) {
      refuse(
        `${p.path} holds ${b.tensor.name} ${b.tensor.dtype} [${b.tensor.shape.join(', ')}], ${ref.path} holds ${a.tensor.name} ${a.tensor.dtype} [${a.tensor.shape.join(', ')}]`,
      );
    }
  }
  parts.sort((x, y) => x.manifest.range[0] - y.manifest.range[0] || x.manifest.range[1] - y.manifest.range[1]);
  const S = ref.manifest.subframesTotal;
  let next = 0;
  for (const p of parts) {
    const [a, b] = p.manifest.range;
    if (a > next) refuse(`subframes ${next}:${a} are in no part (a gap before ${p.path}); give every part of the run`);
    if (a < next) refuse(`${p.path} (subframes ${a}:${b}) overlaps the part before it, which ends at ${next}`);
    next = b;
  }
  if (next < S) refuse(`subframes ${next}:${S} are in no part (missing at the end); give every part of the run`);
  const versions = [...new Set(parts.map((p) => p.manifest.pathweaveVersion))];
  if (versions.length > 1) {
    const list = versions
      .map(
        (v) =>
          `${v} (${parts
            .filter((p) => p.manifest.pathweaveVersion === v)
            .map((p) => p.path)
            .join(', ')})`,
      )
      .join('; ');
    if (options.allowVersions !== true)
      refuse(
        `the parts were written by different pathweave versions: ${list}; regenerate them with one version, or give --allow-versions to merge them anyway`,
      );
    warnings.push(`the parts were written by different pathweave versions (${list}); merged as asked (--allow-versions)`);
  }
  // Every byte of every part (and of a .npy's side file) against its manifest, before anything is written.
  for (const p of parts) {
    if (options.signal?.aborted) throw options.signal.reason ?? new Error('aborted');
    const { size } = await stat(p.path).catch(() => refuse(`${p.path} is missing`));
    if (size !== p.manifest.fileBytes)
      refuse(`${p.path} is ${size} bytes, its manifest says ${p.manifest.fileBytes}: the part was changed or truncated after it was written`);
    const whole = await fileSha256(p.path, options.signal).catch((e: unknown) => {
      if (e instanceof InputFileError) refuse(e.message);
      throw e;
    });
    if (whole !== p.manifest.fileSha256)
      refuse(
        `${p.path}: file sha256 ${whole} differs from its manifest's ${p.manifest.fileSha256}: an array or attribute of the part was changed after it was written; regenerate it (rerun its shard)`,
      );
    if (p.manifest.format === 'npy') {
      const side = await fileSha256(`${p.path}.json`, options.signal).catch((e: Error) => refuse(`${p.path}.json: ${e.message}`));
      if (side !== p.manifest.sideFileSha256)
        refuse(`${p.path}.json: side file sha256 ${side} differs from its manifest's ${p.manifest.sideFileSha256 ?? '(none)'}; regenerate the part`);
    }
  }
  return parts;
}

/**
 * Merge the part files of a sharded run into `out`.
 * @throws RequestError (exit code 2) for refused input: a missing or foreign manifest, a gap, an
 * overlap, parts of another scenario or seed, a part whose size or tensor checksum differs
 * from its manifest (tampered or truncated).
 * @example
 * for (const shard of ['0/2', '1/2']) await main(['generate', 'examples/street-corner-28ghz.json', '--shard', shard, '--out', 'run.part-{index}-of-{count}.h5']);
 * // run.part-0-of-2.h5 (subframes 0:100 of 200) and run.part-1-of-2.h5 (100:200), each with its manifest
 * (await merge(['run.part-0-of-2.h5', 'run.part-1-of-2.h5'], 'run.h5')).sha256
 * // 'f367d319...': the tensorSha256 of the same 200 subframes generated in one run
 */
export async function merge(partFiles: string[], out: string, options: MergeOptions = {}): Promise<MergeReport> {
  const started = process.hrtime.bigint();
  const format = options.format ?? formatFromPath(out);
  if (format === undefined) refuse(`cannot tell the output format of ${out}; name it .npy, .npz or .h5`);
  const warnings: string[] = [];
  const checked = await checkParts(partFiles, options, warnings);
  const parts: Part[] = [];
  try {
    for (const { path, manifest } of checked) {
      const { size } = await stat(path).catch(() => refuse(`${path} is missing`));
      if (size !== manifest.fileBytes)
        refuse(`${path} is ${size} bytes, its manifest says ${manifest.fileBytes}: the part was changed or truncated after it was written`);
      const reader = await openDatasetReader(path);
      if (reader.format !== manifest.format) {
        await reader.close();
        refuse(`${path} is ${reader.format}, its manifest says ${manifest.format}`);
      }
      parts.push({ path, manifest, reader, tensor: tensorOf(reader) });
      checkScenarioAttribute(reader);
      const t = parts[parts.length - 1]!.tensor;
      if (t.name !== manifest.tensor.name && reader.format !== 'npy') refuse(`${path} holds ${t.name}, its manifest says ${manifest.tensor.name}`);
      if (t.dtype !== manifest.tensor.dtype || !sameShape(t.shape, manifest.tensor.shape)) {
        refuse(`${path} holds ${t.dtype} [${t.shape.join(', ')}], its manifest says ${manifest.tensor.dtype} [${manifest.tensor.shape.join(', ')}]`);
      }
      const attrSha = attributeOf(reader, 'tensorSha256');
      if (attrSha !== undefined && attrSha !== manifest.tensor.sha256)
        refuse(`${path} records tensor sha256 ${String(attrSha)}, its manifest ${manifest.tensor.sha256}`);
    }
    const formats = new Set(parts.map((p) => p.reader.format));
    if ((format === 'npy') !== (formats.has('npy') && formats.size === 1)) {
      refuse(
        format === 'npy'
          ? 'a .npy output needs .npy parts (NPZ and HDF5 parts carry side arrays a .npy cannot hold)'
          : `a .${format} output needs .npz or .h5 parts (.npy parts carry no side arrays)`,
      );
    }
    const kernels = [...new Set(parts.map((p) => p.manifest.kernel))];
    if (kernels.length > 1)
      warnings.push(`the parts were computed with different kernels (${kernels.join(', ')}); they agree to 1e-6 relative, not bit for bit`);
    return await write(parts, out, format, kernels, warnings, started, options);
  } finally {
    for (const p of parts) await p.reader.close().catch(() => undefined);
  }
}

async function write(
  parts: Part[],
  out: string,
  format: OutputFormat,
  kernels: string[],
  warnings: string[],
  started: bigint,
  options: MergeOptions,
): Promise<MergeReport> {
  const first = parts[0]!;
  const m = first.manifest;
  const S = m.subframesTotal;
  const shape = [S, ...m.tensor.shape.slice(1)];
  const bytesPerSubframe = DTYPE_BYTES[m.tensor.dtype] * shape.slice(1).reduce((a, b) => a * b, 1);
  const block = Math.min(S, blockSubframes(bytesPerSubframe));

  // Side arrays first (small): concatenated or checked equal, so a disagreement is refused
  // before any tensor byte is copied.
  const side: NamedArray[] = [];
  if (format !== 'npy') {
    for (const stored of first.reader.arrays) {
      if (stored === first.tensor) continue;
      const perPart: NamedArray[] = [];
      for (const p of parts) {
        if (options.signal?.aborted) throw options.signal.reason ?? new Error('aborted');
        const a = p.reader.arrays.find((x) => x.name === stored.name);
        if (a === undefined) refuse(`${p.path} has no array ${stored.name}, ${first.path} has`);
        perPart.push(await p.reader.readArray(stored.name));
      }
      const units = stored.units ?? unitsOf(stored.name);
      if (isPerSubframe(stored.name)) {
        perPart.forEach((a, i) => {
          const rows = parts[i]!.manifest.range[1] - parts[i]!.manifest.range[0];
          if (a.shape[0] !== rows || !sameShape(a.shape.slice(1), perPart[0]!.shape.slice(1)) || a.dtype !== perPart[0]!.dtype) {
            refuse(
              `${parts[i]!.path}: ${stored.name} is ${a.dtype} [${a.shape.join(', ')}], expected ${rows} rows like [${perPart[0]!.shape.slice(1).join(', ')}] per row`,
            );
          }
        });
        side.push({ name: stored.name, dtype: stored.dtype, shape: [S, ...stored.shape.slice(1)], data: concat(perPart.map((a) => a.data!)), units });
      } else {
        perPart.forEach((a, i) => {
          if (!equalData(a, perPart[0]!)) refuse(`${parts[i]!.path} and ${first.path} disagree on ${stored.name}, which is the same in every part of one run`);
        });
        side.push({ ...perPart[0]!, units });
      }
    }
  }

  const sink = await openSink(format, out);
  const total = createHash('sha256');
  try {
    await sink.beginTensor({ name: m.tensor.name, dtype: m.tensor.dtype, shape, units: '1', chunkRows: block });
    let done = 0;
    for (const p of parts) {
      const hash = createHash('sha256');
      const rows = p.manifest.range[1] - p.manifest.range[0];
      for (let r = 0; r < rows; r += block) {
        if (options.signal?.aborted) throw options.signal.reason ?? new Error('aborted');
        const data = (await p.reader.readRows(p.tensor.name, r, Math.min(rows, r + block))) as Float32Array | Float64Array;
        hash.update(bytesOf(data));
        total.update(bytesOf(data));
        await sink.writeRows(data);
        done += data.byteLength / bytesPerSubframe;
        options.onProgress?.(done, S);
      }
      const sha = hash.digest('hex');
      if (sha !== p.manifest.tensor.sha256)
        refuse(
          `${p.path}: tensor sha256 ${sha} differs from its manifest's ${p.manifest.tensor.sha256}: the part was changed after it was written; regenerate it (rerun its shard)`,
        );
    }
    const sha256 = total.digest('hex');
    for (const a of side) await sink.addArray(a);
    const attributes: Attribute[] = first.reader.attributes.map((a): Attribute => {
      if (a.name === 'subframeRange') return { name: a.name, dtype: 'string', value: `0:${S}` };
      if (a.name === 'tensorSha256') return { name: a.name, dtype: 'string', value: sha256 };
      if (a.name === 'kernel') return { name: a.name, dtype: 'string', value: kernels.join(',') };
      return a;
    });
    if (format !== 'npy') for (const a of attributes) await sink.setAttribute(a);
    // The side file first, restored should the .npy's commit fail (as generate does).
    const fileBytes =
      format === 'npy'
        ? await commitWithSideFile(`${out}.json`, sideFileText(first.reader as NpyReader, shape, S, sha256), () => sink.commit())
        : await sink.commit();
    const seconds = Number(process.hrtime.bigint() - started) / 1e9;
    return { out, format, tensorName: m.tensor.name, dtype: m.tensor.dtype, shape, parts: parts.length, fileBytes, sha256, seconds, warnings };
  } catch (e) {
    await sink.abort();
    throw e;
  }
}

/** The merged .npy's side file: the first part's, with the tensor fields of the whole run. */
function sideFileText(first: NpyReader, shape: number[], S: number, sha256: string): string {
  const doc = { ...(first.side ?? {}) };
  doc.tensor = { ...(doc.tensor ?? {}), shape, subframes: [0, S], subframesTotal: S, sha256 };
  return JSON.stringify(doc, null, 2) + '\n';
}
