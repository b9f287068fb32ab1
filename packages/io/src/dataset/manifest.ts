/**
 * Part manifests of a sharded run. `generate --shard I/N --out run.part-{index}-of-{count}.h5`
 * writes the part file `run.part-I-of-N.h5` (`--out` is the file written, with `{index}` and
 * `{count}` replaced) and, once that file is complete, a small JSON manifest beside it,
 * `run.part-I-of-N.h5.manifest.json`. Each part owns its own manifest, so any number of machines
 * can write theirs into one shared folder without a lock; each manifest is written atomically
 * (temporary file, fsync, rename), so a reader sees a whole manifest or none.
 *
 * A manifest says what its part holds (range, shape, dtype, sha256 of the tensor bytes in the
 * order written, scenario hash, seed, format, file name and size). A rerun skips a part whose
 * manifest verifies; `merge` checks every manifest and checksum before it writes anything that
 * could look complete.
 */
import { createHash } from 'node:crypto';
import { stat } from 'node:fs/promises';
import { basename } from 'node:path';
import { z } from 'zod';
import { writeFileAtomic } from '../formats/atomic.js';
import { bytesOf, DTYPE_BYTES } from '../formats/npy.js';
import { attributeOf, openDatasetReader, readRowBlocks, tensorOf, type DatasetReader } from '../formats/reader.js';
import { InputFileError, openRegularFile, readAt, readSmallFile } from '../formats/read-support.js';
import { outputEstimate, planScenario } from '../scenario/plan.js';
import { ScenarioError, parseScenarioText } from '../scenario/validate.js';
import type { OutputFormat } from '../formats/index.js';

/** Value of a manifest's `kind` field. @example MANIFEST_KIND // "pathweave-part-manifest" */
export const MANIFEST_KIND = 'pathweave-part-manifest';

/**
 * Version of the manifest layout; a reader refuses other versions. Version 2 added the sha256 of
 * the whole part file (and of a .npy's side file), which covers every array and attribute.
 * @example MANIFEST_VERSION // 2
 */
export const MANIFEST_VERSION = 2;

/** Bytes of tensor read at a time when checksumming a file. */
const HASH_BLOCK_BYTES = 16 * 2 ** 20;

const manifestSchema = z.object({
  kind: z.literal(MANIFEST_KIND),
  manifestVersion: z.literal(MANIFEST_VERSION),
  part: z.object({ index: z.number().int().min(0), count: z.number().int().min(1) }),
  range: z.tuple([z.number().int().min(0), z.number().int().min(1)]),
  subframesTotal: z.number().int().min(1),
  file: z.string().min(1),
  fileBytes: z.number().int().min(0),
  /** sha256 of the whole part file: every array and attribute, not only the tensor. */
  fileSha256: z.string().regex(/^[0-9a-f]{64}$/),
  /** sha256 of a .npy part's side file (`<part>.json`). */
  sideFileSha256: z
    .string()
    .regex(/^[0-9a-f]{64}$/)
    .optional(),
  format: z.enum(['npy', 'npz', 'h5']),
  tensor: z.object({
    name: z.enum(['H', 'h']),
    dtype: z.enum(['complex64', 'complex128']),
    shape: z.array(z.number().int().min(0)).min(3),
    sha256: z.string().regex(/^[0-9a-f]{64}$/),
  }),
  scenarioSha256: z.string().regex(/^[0-9a-f]{64}$/),
  seed: z.number().int().min(0),
  pathweaveVersion: z.string(),
  kernel: z.string(),
});

/**
 * What one part of a sharded run holds (the JSON document of its manifest file).
 * @example
 * await main(['generate', 'examples/street-corner-28ghz.json', '--shard', '0/2', '--out', 'run.part-{index}-of-{count}.h5']); // run.part-0-of-2.h5 and its manifest
 * const m: PartManifest = await readManifest('run.part-0-of-2.h5.manifest.json');
 * [m.part, m.range, m.tensor.shape, m.seed] // [{ index: 0, count: 2 }, [0, 100], [100, 64, 4, 32], 20261201]
 */
export type PartManifest = z.infer<typeof manifestSchema>;

/**
 * A manifest that cannot be read or is not one pathweave writes.
 * @example await readManifest('missing.json') // throws ManifestError "missing.json: cannot read the manifest (ENOENT)"
 */
export class ManifestError extends Error {
  override name = 'ManifestError';
}

/**
 * The file shard `index` of `count` writes for `--out out`: `out` itself, with `{index}` and
 * `{count}` replaced when it holds them, so one command line serves every task of a job array.
 * @example partPath('data/run.part-{index}-of-{count}.h5', 2, 8) // "data/run.part-2-of-8.h5"
 * @example partPath('data/shard-2.h5', 2, 8) // "data/shard-2.h5" (written as given)
 */
export function partPath(out: string, index: number, count: number): string {
  if (!(Number.isSafeInteger(count) && count >= 1 && Number.isSafeInteger(index) && index >= 0 && index < count)) {
    throw new RangeError(`partPath(): need integers 0 <= index < count, got index ${index}, count ${count}`);
  }
  return out.replaceAll('{index}', String(index)).replaceAll('{count}', String(count));
}

/** The manifest of a part file. @example manifestPathOf('data/run.part-2-of-8.h5') // "data/run.part-2-of-8.h5.manifest.json" */
export function manifestPathOf(partFile: string): string {
  return `${partFile}.manifest.json`;
}

/** JSON text with object keys sorted at every level (no spaces), for hashing. @example canonicalJson({ b: 1, a: [2, { d: 3, c: 4 }] }) // '{"a":[2,{"c":4,"d":3}],"b":1}' */
export function canonicalJson(value: unknown): string {
  if (Array.isArray(value)) return `[${value.map(canonicalJson).join(',')}]`;
  if (value !== null && typeof value === 'object') {
    const entries = Object.keys(value as Record<string, unknown>)
      .sort()
      .filter((k) => (value as Record<string, unknown>)[k] !== undefined)
      .map((k) => `${JSON.stringify(k)}:${canonicalJson((value as Record<string, unknown>)[k])}`);
    return `{${entries.join(',')}}`;
  }
  return JSON.stringify(value) ?? 'null';
}

/**
 * sha256 of a scenario's canonical JSON (keys sorted, no spaces): the same scenario written with
 * other spacing or key order has the same hash.
 * @example scenarioSha256('{"b": 1, "a": 2}') === scenarioSha256('{"a":2,"b":1}') // true
 */
export function scenarioSha256(scenarioText: string): string {
  return createHash('sha256')
    .update(canonicalJson(JSON.parse(scenarioText) as unknown))
    .digest('hex');
}

/**
 * Write a part's manifest atomically beside it (`manifestPathOf(partFile)`).
 * @example
 * await main(['generate', 'examples/street-corner-28ghz.json', '--shard', '0/2', '--out', 'run.part-{index}-of-{count}.h5']); // run.part-0-of-2.h5 and its manifest
 * const m = await readManifest('run.part-0-of-2.h5.manifest.json');
 * await writeManifest('run.part-0-of-2.h5', m) // "run.part-0-of-2.h5.manifest.json" (written again, atomically)
 * await writeManifest('other.h5', m) // throws RangeError 'writeManifest(): manifest.file must be "other.h5", got "run.part-0-of-2.h5"'
 */
export async function writeManifest(partFile: string, manifest: PartManifest): Promise<string> {
  if (manifest.file !== basename(partFile))
    throw new RangeError(`writeManifest(): manifest.file must be ${JSON.stringify(basename(partFile))}, got ${JSON.stringify(manifest.file)}`);
  const path = manifestPathOf(partFile);
  await writeFileAtomic(path, JSON.stringify(manifest, null, 2) + '\n');
  return path;
}

/**
 * Read and check a manifest file.
 * @example
 * await main(['generate', 'examples/street-corner-28ghz.json', '--shard', '0/2', '--out', 'run.part-{index}-of-{count}.h5']); // run.part-0-of-2.h5 and its manifest
 * (await readManifest('run.part-0-of-2.h5.manifest.json')).range // [0, 100]
 * @throws ManifestError when it is missing, not JSON, or not a pathweave part manifest.
 */
export async function readManifest(path: string): Promise<PartManifest> {
  let text: string;
  try {
    text = await readSmallFile(path, 'manifest');
  } catch (e) {
    const code = ((e as Error).cause as NodeJS.ErrnoException | undefined)?.code;
    throw new ManifestError(code !== undefined ? `${path}: cannot read the manifest (${code})` : (e as Error).message);
  }
  let doc: unknown;
  try {
    doc = JSON.parse(text);
  } catch (e) {
    throw new ManifestError(`${path}: not JSON (${(e as Error).message})`);
  }
  const version = (doc as { manifestVersion?: unknown } | null)?.manifestVersion;
  if (typeof version === 'number' && version < MANIFEST_VERSION) {
    throw new ManifestError(
      `${path}: a manifest of version ${version}, from an earlier pathweave, without the sha256 of the whole part; rerun its shard to write a version ${MANIFEST_VERSION} manifest`,
    );
  }
  const parsed = manifestSchema.safeParse(doc);
  if (!parsed.success) {
    const issue = parsed.error.issues[0]!;
    throw new ManifestError(`${path}: not a pathweave part manifest: ${issue.path.join('.') || '(root)'}: ${issue.message}`);
  }
  const m = parsed.data;
  if (!(m.part.index < m.part.count && m.range[0] < m.range[1] && m.range[1] <= m.subframesTotal && m.tensor.shape[0] === m.range[1] - m.range[0])) {
    throw new ManifestError(
      `${path}: inconsistent manifest: part ${m.part.index} of ${m.part.count}, range ${m.range[0]}:${m.range[1]} of ${m.subframesTotal}, shape [${m.tensor.shape.join(', ')}]`,
    );
  }
  return m;
}

/**
 * sha256 of a file's channel tensor bytes, in the order written (row-major, interleaved re/im,
 * little-endian), read back through formats/read.ts a block at a time.
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.h5', format: 'h5', range: [0, 4], checksum: true }); // H [4, 64, 4, 32]
 * (await tensorSha256OfFile('run.h5')).bytes // 262144: 4 x 64 x 4 x 32 x 8 bytes; its sha256 is the one the file records as tensorSha256 (it depends on the kernel, docs/conventions.md)
 */
export async function tensorSha256OfFile(path: string): Promise<{ sha256: string; bytes: number }> {
  const reader = await openDatasetReader(path);
  try {
    const tensor = tensorOf(reader);
    const rowBytes = DTYPE_BYTES[tensor.dtype as 'complex64' | 'complex128'] * tensor.shape.slice(1).reduce((a, b) => a * b, 1);
    const hash = createHash('sha256');
    let bytes = 0;
    for await (const block of readRowBlocks(reader, tensor.name, Math.max(1, Math.floor(HASH_BLOCK_BYTES / Math.max(1, rowBytes))))) {
      hash.update(bytesOf(block));
      bytes += block.byteLength;
    }
    return { sha256: hash.digest('hex'), bytes };
  } finally {
    await reader.close();
  }
}

/**
 * sha256 of a whole file's bytes, read 16 MiB at a time (regular files only); `signal` is
 * checked between reads, so a long check ends at a signal.
 * @example
 * await main(['generate', 'examples/street-corner-28ghz.json', '--shard', '0/2', '--out', 'run.part-{index}-of-{count}.h5']); // run.part-0-of-2.h5 and its manifest
 * (await fileSha256('run.part-0-of-2.h5')) === (await readManifest('run.part-0-of-2.h5.manifest.json')).fileSha256 // true
 */
export async function fileSha256(path: string, signal?: AbortSignal): Promise<string> {
  const { handle, size } = await openRegularFile(path, 'file');
  try {
    const hash = createHash('sha256');
    for (let at = 0; at < size; at += HASH_BLOCK_BYTES) {
      if (signal?.aborted) throw signal.reason ?? new Error('aborted');
      hash.update(await readAt(handle, at, Math.min(HASH_BLOCK_BYTES, size - at), path));
    }
    return hash.digest('hex');
  } finally {
    await handle.close();
  }
}

/**
 * Outcome of checking a part file against its manifest.
 * @example
 * await main(['generate', 'examples/street-corner-28ghz.json', '--shard', '0/2', '--out', 'run.part-{index}-of-{count}.h5']); // run.part-0-of-2.h5 and its manifest
 * const check: PartCheck = await verifyPart('run.part-0-of-2.h5', await readManifest('run.part-0-of-2.h5.manifest.json')); // { ok: true }
 */
export type PartCheck = { ok: true } | { ok: false; reason: string };

/**
 * Check a part file against its manifest: present, of the recorded size, and with tensor bytes
 * whose sha256 is the recorded one (re-read from the file). `full: false` stops after the size.
 * @example
 * await main(['generate', 'examples/street-corner-28ghz.json', '--shard', '0/2', '--out', 'run.part-{index}-of-{count}.h5']); // run.part-0-of-2.h5 and its manifest
 * const m = await readManifest('run.part-0-of-2.h5.manifest.json');
 * [await verifyPart('run.part-0-of-2.h5', m), await verifyPart('other.h5', m)]
 * // [{ ok: true }, { ok: false, reason: 'the manifest names run.part-0-of-2.h5, not other.h5' }]
 */
export async function verifyPart(partFile: string, manifest: PartManifest, options: { full?: boolean } = {}): Promise<PartCheck> {
  if (basename(partFile) !== manifest.file) return { ok: false, reason: `the manifest names ${manifest.file}, not ${basename(partFile)}` };
  const st = await stat(partFile).catch(() => undefined);
  if (st === undefined || !st.isFile()) return { ok: false, reason: `${partFile} is missing` };
  if (st.size !== manifest.fileBytes) return { ok: false, reason: `${partFile} is ${st.size} bytes, the manifest says ${manifest.fileBytes}` };
  if (options.full === false) return { ok: true };
  // The whole file first: it covers every array and attribute (scenario, version, side arrays, truth, paths).
  try {
    const whole = await fileSha256(partFile);
    if (whole !== manifest.fileSha256)
      return {
        ok: false,
        reason: `${partFile}: file sha256 ${whole} differs from the manifest's ${manifest.fileSha256} (an array or attribute was changed after it was written)`,
      };
    if (manifest.format === 'npy') {
      const side = await fileSha256(`${partFile}.json`).catch(() => undefined);
      if (side !== manifest.sideFileSha256)
        return {
          ok: false,
          reason: `${partFile}.json: the side file ${side === undefined ? 'is missing' : `has sha256 ${side}`}, the manifest says ${manifest.sideFileSha256 ?? 'none'}`,
        };
    }
  } catch (e) {
    return { ok: false, reason: `${partFile} cannot be read: ${(e as Error).message}` };
  }
  let sha: { sha256: string; bytes: number };
  try {
    sha = await tensorSha256OfFile(partFile);
  } catch (e) {
    return { ok: false, reason: `${partFile} cannot be read: ${(e as Error).message}` };
  }
  const expectBytes = manifest.tensor.shape.reduce((a, b) => a * b, 1) * DTYPE_BYTES[manifest.tensor.dtype];
  if (sha.bytes !== expectBytes) return { ok: false, reason: `${partFile} holds ${sha.bytes} tensor bytes, the manifest's shape needs ${expectBytes}` };
  if (sha.sha256 !== manifest.tensor.sha256)
    return { ok: false, reason: `${partFile}: tensor sha256 ${sha.sha256} differs from the manifest's ${manifest.tensor.sha256}` };
  return { ok: true };
}

/**
 * The facts of a finished part run that go into its manifest.
 * @example
 * const facts: PartFacts = { index: 0, count: 2, range: [0, 100], subframesTotal: 200, partFile: 'out/run.part-0-of-2.h5', fileBytes: 6656680,
 *   fileSha256: '1'.repeat(64), format: 'h5', tensorName: 'H', dtype: 'complex64', shape: [100, 64, 4, 32], sha256: '0'.repeat(64), scenarioText: '{"seed": 1}',
 *   seed: 1, pathweaveVersion: '0.1.0', kernel: 'js-float64' };
 * manifestOf(facts).part // { index: 0, count: 2 }
 */
export interface PartFacts {
  index: number;
  count: number;
  range: [number, number];
  subframesTotal: number;
  partFile: string;
  fileBytes: number;
  /** sha256 of the whole part file. */
  fileSha256: string;
  /** sha256 of a .npy part's side file. */
  sideFileSha256?: string;
  format: OutputFormat;
  tensorName: 'H' | 'h';
  dtype: 'complex64' | 'complex128';
  shape: number[];
  sha256: string;
  scenarioText: string;
  seed: number;
  pathweaveVersion: string;
  kernel: string;
}

/**
 * The manifest document of a finished part.
 * @example
 * const facts: PartFacts = { index: 0, count: 2, range: [0, 100], subframesTotal: 200, partFile: 'out/run.part-0-of-2.h5', fileBytes: 6656680,
 *   fileSha256: '1'.repeat(64), format: 'h5', tensorName: 'H', dtype: 'complex64', shape: [100, 64, 4, 32], sha256: '0'.repeat(64), scenarioText: '{"seed": 1}',
 *   seed: 1, pathweaveVersion: '0.1.0', kernel: 'js-float64' };
 * const m = manifestOf(facts);
 * [m.file, m.scenarioSha256 === scenarioSha256('{"seed":1}')] // ['run.part-0-of-2.h5', true]: the base name; the scenario hashed canonically
 */
export function manifestOf(f: PartFacts): PartManifest {
  return {
    kind: MANIFEST_KIND,
    manifestVersion: MANIFEST_VERSION,
    part: { index: f.index, count: f.count },
    range: [f.range[0], f.range[1]],
    subframesTotal: f.subframesTotal,
    file: basename(f.partFile),
    fileBytes: f.fileBytes,
    fileSha256: f.fileSha256,
    ...(f.sideFileSha256 !== undefined ? { sideFileSha256: f.sideFileSha256 } : {}),
    format: f.format,
    tensor: { name: f.tensorName, dtype: f.dtype, shape: [...f.shape], sha256: f.sha256 },
    scenarioSha256: scenarioSha256(f.scenarioText),
    seed: f.seed,
    pathweaveVersion: f.pathweaveVersion,
    kernel: f.kernel,
  };
}

/**
 * Whether an earlier part run can be kept for this request: its manifest exists, describes the
 * same request (scenario, seed, range, format) and the file verifies. Returns the reason when not.
 * @example
 * await reusablePart('run.part-0-of-4.h5', { scenarioText: '{}', seed: 1, range: [0, 50], format: 'h5' }) // { reusable: false, reason: 'no manifest yet' }
 */
export async function reusablePart(
  partFile: string,
  request: { scenarioText: string; seed: number; range: [number, number]; format: OutputFormat },
): Promise<{ reusable: true; manifest: PartManifest } | { reusable: false; reason: string }> {
  const path = manifestPathOf(partFile);
  if ((await stat(path).catch(() => undefined)) === undefined) return { reusable: false, reason: 'no manifest yet' };
  let m: PartManifest;
  try {
    m = await readManifest(path);
  } catch (e) {
    return { reusable: false, reason: (e as Error).message };
  }
  if (m.scenarioSha256 !== scenarioSha256(request.scenarioText)) return { reusable: false, reason: 'the manifest is of another scenario' };
  if (m.seed !== request.seed) return { reusable: false, reason: `the manifest is of seed ${m.seed}, not ${request.seed}` };
  if (m.range[0] !== request.range[0] || m.range[1] !== request.range[1])
    return { reusable: false, reason: `the manifest covers ${m.range[0]}:${m.range[1]}, not ${request.range[0]}:${request.range[1]}` };
  if (m.format !== request.format) return { reusable: false, reason: `the manifest is of format ${m.format}, not ${request.format}` };
  const check = await verifyPart(partFile, m);
  return check.ok ? { reusable: true, manifest: m } : { reusable: false, reason: check.reason };
}

/**
 * Check that a file's `scenario` attribute describes its tensor: a valid scenario whose tensor
 * shape (after the subframe axis) and precision are the file's. A file whose scenario was edited
 * (another band, array or precision) is refused with an InputFileError; a file without one passes.
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.h5', format: 'h5', range: [0, 4] }); // H [4, 64, 4, 32]
 * checkScenarioAttribute(await openDatasetReader('run.h5')) // passes: the scenario says 64 subcarriers, 4 x 32 ports
 */
export function checkScenarioAttribute(reader: DatasetReader): void {
  const text = attributeOf(reader, 'scenario');
  if (text === undefined) return;
  if (typeof text !== 'string') throw new InputFileError(reader.path, 'its scenario attribute is not text');
  let scenario;
  try {
    scenario = parseScenarioText(text, `${reader.path}: scenario attribute`).scenario;
  } catch (e) {
    if (e instanceof ScenarioError)
      throw new InputFileError(
        reader.path,
        `its scenario attribute is not a valid scenario (${e.problems.length} problem${e.problems.length === 1 ? '' : 's'}, the first: ${e.problems[0]?.path ?? ''} ${e.problems[0]?.message ?? ''})`,
        { cause: e },
      );
    throw e;
  }
  const tensor = tensorOf(reader);
  const domain = tensor.name === 'h' ? 'taps' : 'frequency';
  if ((domain === 'taps' ? scenario.taps : scenario.band) === undefined) {
    throw new InputFileError(
      reader.path,
      `its scenario attribute has no ${domain === 'taps' ? 'taps' : 'band'} section, but the file holds ${tensor.name}: the scenario or the tensor was changed`,
    );
  }
  const plan = planScenario(scenario, { domain });
  const expected = outputEstimate(plan, tensor.shape[0]).shape;
  const dtype = plan.precision;
  if (expected.length !== tensor.shape.length || expected.some((v, i) => v !== tensor.shape[i]) || dtype !== tensor.dtype) {
    throw new InputFileError(
      reader.path,
      `its scenario attribute describes ${tensor.name} ${dtype} [${expected.join(', ')}], but the file holds ${tensor.dtype} [${tensor.shape.join(', ')}]: the scenario or the tensor was changed`,
    );
  }
}
