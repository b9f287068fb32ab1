/**
 * Coverage files read back, the part manifests of a sharded coverage run, and their merge.
 * `pathweave coverage --shard I/N` computes grid rows floor(I R / N) to floor((I + 1) R / N) - 1
 * into its own part file and, once that is complete, writes `<part>.manifest.json` beside it
 * (kind COVERAGE_MANIFEST_KIND). `pathweave merge` of such parts checks every manifest (same
 * scenario, grid and format; the parts tile rows 0..R-1; each part file's size and sha256),
 * concatenates the maps along the row axis and writes them with the writer of an unsharded run,
 * so the merged .npy or .npz is byte for byte the unsharded one (HDF5 stamps times into its
 * object headers: there the arrays and attributes are equal).
 */
import { stat } from 'node:fs/promises';
import { basename } from 'node:path';
import { z } from 'zod';
import { writeFileAtomic } from '../formats/atomic.js';
import { formatFromPath, type OutputFormat } from '../formats/index.js';
import { readNpy } from '../formats/npy.js';
import { openDatasetReader } from '../formats/reader.js';
import { InputFileError, readSmallFile } from '../formats/read-support.js';
import type { ArrayData } from '../formats/sink.js';
import { PATHWEAVE_VERSION } from '../version.js';
import { COVERAGE_ARRAYS, emptyCoverageMaps, writeCoverage, type CoverageFacts, type CoverageGrid, type CoverageMaps } from './coverage.js';
import { RequestError } from './generate.js';
import { fileSha256, manifestPathOf, scenarioSha256 } from './manifest.js';

/** Value of a coverage part manifest's `kind` field. @example COVERAGE_MANIFEST_KIND // "pathweave-coverage-manifest" */
export const COVERAGE_MANIFEST_KIND = 'pathweave-coverage-manifest';

const coverageManifestSchema = z.strictObject({
  kind: z.literal(COVERAGE_MANIFEST_KIND),
  manifestVersion: z.literal(1),
  part: z.strictObject({ index: z.number().int().min(0), count: z.number().int().min(1) }),
  rowRange: z.tuple([z.number().int().min(0), z.number().int().min(1)]),
  rowsTotal: z.number().int().min(1),
  columns: z.number().int().min(1),
  /** The grid as the coverageGrid attribute holds it (JSON text). */
  grid: z.string(),
  file: z.string().min(1),
  fileBytes: z.number().int().min(0),
  fileSha256: z.string().regex(/^[0-9a-f]{64}$/),
  sideFileSha256: z
    .string()
    .regex(/^[0-9a-f]{64}$/)
    .optional(),
  format: z.enum(['npy', 'npz', 'h5']),
  scenarioSha256: z.string().regex(/^[0-9a-f]{64}$/),
  pathweaveVersion: z.string(),
});

/**
 * What one part of a sharded coverage run holds (the JSON document of its manifest).
 * @example const m: CoverageManifest = await coverageManifestOf('map.part-0-of-2.npz', { index: 0, count: 2 }, 'npz', maps, facts); // rows 0:3 of 6
 */
export type CoverageManifest = z.infer<typeof coverageManifestSchema>;

/**
 * The manifest of a complete coverage part file (its size and sha256 read from disk).
 * @example
 * const grid = coverageGridOf({ origin: [0, 0, 1.5], columns: 3, rows: 2, stepM: 1 });
 * const facts = { scenarioText: JSON.stringify(scenario), grid, rowsTotal: 2 };
 * await writeCoverage('part.npz', 'npz', emptyCoverageMaps([0, 1], 3), facts);
 * (await coverageManifestOf('part.npz', { index: 0, count: 2 }, 'npz', emptyCoverageMaps([0, 1], 3), facts)).rowRange // [0, 1]
 */
export async function coverageManifestOf(
  partFile: string,
  part: { index: number; count: number },
  format: OutputFormat,
  maps: CoverageMaps,
  facts: CoverageFacts,
): Promise<CoverageManifest> {
  return {
    kind: COVERAGE_MANIFEST_KIND,
    manifestVersion: 1,
    part,
    rowRange: maps.rowRange,
    rowsTotal: facts.rowsTotal,
    columns: maps.columns,
    grid: JSON.stringify(facts.grid),
    file: basename(partFile),
    fileBytes: (await stat(partFile)).size,
    fileSha256: await fileSha256(partFile),
    ...(format === 'npy' ? { sideFileSha256: await fileSha256(`${partFile}.json`) } : {}),
    format,
    scenarioSha256: scenarioSha256(facts.scenarioText),
    pathweaveVersion: PATHWEAVE_VERSION,
  };
}

/**
 * Write a coverage part's manifest atomically beside it; returns the manifest's path.
 * @example
 * const grid = coverageGridOf({ origin: [0, 0, 1.5], columns: 3, rows: 2, stepM: 1 });
 * const facts = { scenarioText: JSON.stringify(scenario), grid, rowsTotal: 2 };
 * const maps = emptyCoverageMaps([0, 1], 3);
 * await writeCoverage('part.npz', 'npz', maps, facts);
 * await writeCoverageManifest('part.npz', await coverageManifestOf('part.npz', { index: 0, count: 2 }, 'npz', maps, facts)) // "part.npz.manifest.json"
 */
export async function writeCoverageManifest(partFile: string, manifest: CoverageManifest): Promise<string> {
  const path = manifestPathOf(partFile);
  await writeFileAtomic(path, JSON.stringify(manifest, null, 2) + '\n');
  return path;
}

/**
 * True when the manifest beside `partFile` is a coverage manifest (merge then merges maps).
 * @example await isCoveragePart('run.part-0-of-2.h5') // false: a generate part (or no manifest)
 */
export async function isCoveragePart(partFile: string): Promise<boolean> {
  try {
    const doc = JSON.parse(await readSmallFile(manifestPathOf(partFile), 'manifest')) as { kind?: unknown };
    return doc?.kind === COVERAGE_MANIFEST_KIND;
  } catch {
    return false;
  }
}

function refuse(message: string): never {
  throw new RequestError(`merge: ${message}`);
}

async function readCoverageManifest(partFile: string): Promise<CoverageManifest> {
  const path = manifestPathOf(partFile);
  let doc: unknown;
  try {
    doc = JSON.parse(await readSmallFile(path, 'manifest'));
  } catch (e) {
    refuse(`${path}: cannot read the manifest (${e instanceof InputFileError ? e.message : (e as Error).message})`);
  }
  const parsed = coverageManifestSchema.safeParse(doc);
  if (!parsed.success)
    refuse(`${path}: not a coverage manifest (${parsed.error.issues.map((i) => `${i.path.join('.') || 'document'}: ${i.message}`).join('; ')})`);
  if (parsed.data.file !== basename(partFile)) refuse(`${path} describes ${parsed.data.file}, not ${basename(partFile)}`);
  return parsed.data;
}

/**
 * A coverage file read back: its maps and what it records. A .npy holds only `pathGainDb`
 * (the other maps come back invalid); its side file gives the rest.
 * @example
 * const grid = coverageGridOf({ origin: [0, 0, 1.5], columns: 3, rows: 2, stepM: 1 });
 * await writeCoverage('map.npz', 'npz', emptyCoverageMaps([0, 2], 3), { scenarioText: JSON.stringify(scenario), grid, rowsTotal: 2 });
 * (await readCoverage('map.npz')).maps.rowRange // [0, 2]
 */
export async function readCoverage(path: string): Promise<{ maps: CoverageMaps; facts: CoverageFacts; format: OutputFormat }> {
  const bad = (why: string): never => {
    throw new InputFileError(path, `is not a coverage file pathweave wrote: ${why}`);
  };
  const rangeOf = (text: unknown): [number, number] => {
    const m = typeof text === 'string' ? /^(\d+):(\d+)$/.exec(text) : null;
    if (m === null) return bad(`rowRange must be "a:b", got ${JSON.stringify(text)}`);
    return [Number(m[1]), Number(m[2])];
  };
  const gridOf = (text: unknown): CoverageGrid => {
    try {
      return JSON.parse(String(text)) as CoverageGrid;
    } catch {
      return bad('its coverageGrid is not JSON');
    }
  };
  if (formatFromPath(path) === 'npy') {
    const npy = await readNpy(path);
    let side: Record<string, unknown>;
    try {
      side = JSON.parse(await readSmallFile(`${path}.json`, 'side file')) as Record<string, unknown>;
    } catch (e) {
      return bad(`its side file ${path}.json cannot be read (${(e as Error).message})`);
    }
    if (side.product !== 'coverage') bad(`its side file says product ${JSON.stringify(side.product)}, not "coverage"`);
    const rowRange = rangeOf(side.rowRange);
    const grid = gridOf(side.coverageGrid);
    const maps = emptyCoverageMaps(rowRange, grid.columns);
    if (npy.dtype !== 'float64' || npy.shape.length !== 2 || npy.shape[0] !== rowRange[1] - rowRange[0] || npy.shape[1] !== grid.columns)
      bad(`it holds ${npy.dtype} [${npy.shape.join(', ')}], expected float64 [${rowRange[1] - rowRange[0]}, ${grid.columns}]`);
    maps.pathGainDb.set(npy.data as Float64Array);
    return { maps, facts: { scenarioText: JSON.stringify(side.scenario), grid, rowsTotal: Number(side.rowsTotal) }, format: 'npy' };
  }
  const reader = await openDatasetReader(path);
  try {
    const attr = (name: string): string | number | undefined => reader.attributes.find((a) => a.name === name)?.value;
    if (attr('product') !== 'coverage') bad(`its product attribute is ${JSON.stringify(attr('product'))}, not "coverage"`);
    const rowRange = rangeOf(attr('rowRange'));
    const grid = gridOf(attr('coverageGrid'));
    const maps = emptyCoverageMaps(rowRange, grid.columns);
    for (const a of COVERAGE_ARRAYS) {
      if (!reader.arrays.some((s) => s.name === a.name)) bad(`it has no array ${a.name}`);
      const stored = await reader.readArray(a.name);
      const target = maps[a.name] as ArrayData;
      if (stored.dtype !== a.dtype || stored.data === undefined || stored.data.length !== target.length)
        bad(`${a.name} is ${stored.dtype} [${stored.shape.join(', ')}], expected ${a.dtype} with ${target.length} values`);
      (target as Float64Array).set(stored.data as Float64Array);
    }
    return { maps, facts: { scenarioText: String(attr('scenario')), grid, rowsTotal: Number(attr('rowsTotal')) }, format: reader.format };
  } finally {
    await reader.close();
  }
}

/**
 * What a coverage merge wrote.
 * @example const report: CoverageMergeReport = { out: 'map.npz', format: 'npz', rows: 6, columns: 3, parts: 2, fileBytes: 5021, sha256: 'f3a1...' };
 */
export interface CoverageMergeReport {
  out: string;
  format: OutputFormat;
  rows: number;
  columns: number;
  parts: number;
  fileBytes: number;
  /** sha256 of the merged file. */
  sha256: string;
}

/**
 * Merge the part files of a sharded coverage run into `out` (same format as the parts).
 * @throws RequestError (exit code 2): a missing or foreign manifest, parts of another scenario,
 * grid or format, a gap or an overlap of rows, a part changed after it was written.
 * @example
 * const grid = coverageGridOf({ origin: [0, 0, 1.5], columns: 3, rows: 2, stepM: 1 });
 * const facts = { scenarioText: JSON.stringify(scenario), grid, rowsTotal: 2 };
 * for (const [i, maps] of [emptyCoverageMaps([0, 1], 3), emptyCoverageMaps([1, 2], 3)].entries()) {
 *   await writeCoverage(`p${i}.npz`, 'npz', maps, facts);
 *   await writeCoverageManifest(`p${i}.npz`, await coverageManifestOf(`p${i}.npz`, { index: i, count: 2 }, 'npz', maps, facts));
 * }
 * (await mergeCoverage(['p0.npz', 'p1.npz'], 'whole.npz')).rows // 2
 */
export async function mergeCoverage(partFiles: string[], out: string, options: { signal?: AbortSignal } = {}): Promise<CoverageMergeReport> {
  if (partFiles.length === 0) refuse('no part files given');
  const parts: { path: string; manifest: CoverageManifest }[] = [];
  const seen = new Set<string>();
  for (const path of partFiles) {
    if (seen.has(path)) refuse(`${path} is given twice`);
    seen.add(path);
    parts.push({ path, manifest: await readCoverageManifest(path) });
  }
  const ref = parts[0]!;
  for (const p of parts.slice(1)) {
    const a = ref.manifest,
      b = p.manifest;
    if (b.scenarioSha256 !== a.scenarioSha256) refuse(`${p.path} is a coverage map of another scenario than ${ref.path}`);
    if (b.grid !== a.grid) refuse(`${p.path} is a coverage map of another grid than ${ref.path} (${b.grid} against ${a.grid})`);
    if (b.format !== a.format) refuse(`${p.path} is a part in ${b.format}, ${ref.path} in ${a.format}: the parts of one run share one format`);
    if (b.pathweaveVersion !== a.pathweaveVersion)
      refuse(`${p.path} was written by pathweave ${b.pathweaveVersion}, ${ref.path} by ${a.pathweaveVersion}; recompute the parts with one version`);
  }
  const format = formatFromPath(out);
  if (format !== ref.manifest.format) refuse(`the parts are ${ref.manifest.format} files; name the merged file .${ref.manifest.format}, got ${out}`);
  parts.sort((x, y) => x.manifest.rowRange[0] - y.manifest.rowRange[0]);
  const R = ref.manifest.rowsTotal;
  let next = 0;
  for (const p of parts) {
    const [a, b] = p.manifest.rowRange;
    if (a > next) refuse(`grid rows ${next}:${a} are in no part (a gap before ${p.path}); give every part of the run`);
    if (a < next) refuse(`${p.path} (rows ${a}:${b}) overlaps the part before it, which ends at row ${next}`);
    next = b;
  }
  if (next < R) refuse(`grid rows ${next}:${R} are in no part (missing at the end); give every part of the run`);
  for (const p of parts) {
    if (options.signal?.aborted) throw options.signal.reason ?? new Error('aborted');
    const { size } = await stat(p.path).catch(() => refuse(`${p.path} is missing`));
    if (size !== p.manifest.fileBytes) refuse(`${p.path} is ${size} bytes, its manifest says ${p.manifest.fileBytes}: the part was changed or truncated`);
    if ((await fileSha256(p.path)) !== p.manifest.fileSha256)
      refuse(`${p.path}: its sha256 differs from its manifest's: the part was changed after it was written; recompute it (rerun its shard)`);
    if (p.manifest.format === 'npy' && (await fileSha256(`${p.path}.json`).catch(() => undefined)) !== p.manifest.sideFileSha256)
      refuse(`${p.path}.json: its sha256 differs from its manifest's (or it is missing); recompute the part`);
  }
  const read = [];
  for (const p of parts) read.push(await readCoverage(p.path));
  const columns = ref.manifest.columns;
  const whole = emptyCoverageMaps([0, R], columns);
  for (const { maps } of read) {
    const offset = maps.rowRange[0] * columns;
    for (const a of COVERAGE_ARRAYS) (whole[a.name] as Float64Array).set(maps[a.name] as Float64Array, a.name === 'pointsM' ? 3 * offset : offset);
  }
  const facts = read[0]!.facts;
  const fileBytes = await writeCoverage(out, format, whole, { ...facts, rowsTotal: R });
  const sha256 = await fileSha256(out);
  return { out, format, rows: R, columns, parts: parts.length, fileBytes, sha256 };
}
