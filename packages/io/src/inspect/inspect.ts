/**
 * `inspect`: a summary of a file pathweave wrote (.npy with its side file, .npz, .h5): the
 * arrays with shapes and dtypes, the scenario in brief, per-path powers and delays, the mean
 * channel power, and the conditioning of H: per sampled subframe and bin the singular values
 * of the Nr x Nt matrix, summarised as min / median / max over the samples.
 *
 * Tensor layout read: [S, (U,) (symbols,) K or count, Nr, Nt], complex interleaved; every axis
 * between S and Nr is a "bin" here (users, symbols, subcarriers or taps, flattened row-major).
 *
 * Singular values: core's complexSingularValues (the real 2Nr x 2Nt embedding
 * [[A, -B], [B, A]] of H = A + jB, whose singular values are those of H, each twice).
 */
import { stat } from 'node:fs/promises';
import { complexSingularValues } from '@pathweave/core';
import { DTYPE_BYTES } from '../formats/npy.js';
import { attributeOf, openDatasetReader, readRowBlocks, tensorOf, NpyReader, type DatasetReader, type StoredArray } from '../formats/reader.js';
import { formatBytes, RequestError } from '../dataset/generate.js';
import { planScenario } from '../scenario/plan.js';
import { safeParseScenario } from '../scenario/validate.js';

/**
 * Options of `inspectFile`.
 * @example const quick: InspectOptions = { subframeSamples: 2, binSamples: 4 }; // subframes [0, S-1], bins [0, 21, 42, 63] of 64: 8 SVDs
 */
export interface InspectOptions {
  /** Subframes sampled for the singular values (evenly spaced, first and last included). Default 16. */
  subframeSamples?: number;
  /** Bins (subcarriers, taps, users x symbols x subcarriers...) sampled per subframe, likewise. Default 8. */
  binSamples?: number;
}

/**
 * Summary of one file: text for people, data for --json.
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.h5', format: 'h5', range: [0, 4] }); // H [4, 64, 4, 32]
 * const summary: InspectSummary = await inspectFile('run.h5');
 * summary.text.split('\n')[0] // "run.h5: h5, 285.7 KiB (292568 bytes)"
 */
export interface InspectSummary {
  text: string;
  data: Record<string, unknown>;
}

/**
 * Min, median and max of a set of numbers.
 * @example const s: Spread = spreadOf([3, 1, 2]); // { min: 1, median: 2, max: 3 }
 */
export interface Spread {
  min: number;
  median: number;
  max: number;
}

/**
 * The conditioning of the sampled channel matrices.
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.h5', format: 'h5', range: [0, 4] }); // H [4, 64, 4, 32]
 * const reader = await openDatasetReader('run.h5');
 * const c: Conditioning = await conditioningOf(reader, tensorOf(reader), { subframeSamples: 2, binSamples: 2 });
 * [c.Nr, c.Nt, c.subframes, c.bins, c.conditionNumber.min] // [4, 32, [0, 3], [0, 63], 11.471]
 */
export interface Conditioning {
  Nr: number;
  Nt: number;
  /** Subframe indices (within the file) sampled. */
  subframes: number[];
  /** Bin indices (flattened axes between S and Nr) sampled in each. */
  bins: number[];
  /** s_max / s_min per matrix (Infinity when s_min is 0). */
  conditionNumber: Spread;
  /** Singular values above s_max * max(Nr, Nt) * eps of the dtype (numpy.linalg.matrix_rank's default). */
  rank: Spread;
  largestSingularValue: Spread;
  smallestSingularValue: Spread;
}

// The complex singular values live in core (with the rest of the signal path); re-exported here
// for the callers of io.
export { complexSingularValues };

/**
 * `count` indices evenly spaced over 0..n-1, first and last included (all of them when n <= count).
 * @example sampleIndices(100, 5) // [0, 25, 50, 74, 99]
 */
export function sampleIndices(n: number, count: number): number[] {
  if (!(Number.isSafeInteger(n) && n >= 0 && Number.isSafeInteger(count) && count >= 1))
    throw new RangeError(`sampleIndices(): need integers n >= 0 and count >= 1, got ${n}, ${count}`);
  if (n <= count) return Array.from({ length: n }, (_, i) => i);
  if (count === 1) return [0];
  return Array.from({ length: count }, (_, i) => Math.round((i * (n - 1)) / (count - 1)));
}

/** Min, median (mean of the middle two for an even count, as numpy.median) and max. @example spreadOf([3, 1, 2, 10]) // { min: 1, median: 2.5, max: 10 } */
export function spreadOf(values: readonly number[]): Spread {
  if (values.length === 0) throw new RangeError('spreadOf(): no values');
  const v = [...values].sort((a, b) => a - b);
  const mid = v.length >> 1;
  return { min: v[0]!, median: v.length % 2 === 1 ? v[mid]! : (v[mid - 1]! + v[mid]!) / 2, max: v[v.length - 1]! };
}

/** Mean |x|^2 over complex interleaved values. @example meanPower(Float32Array.of(3, 4, 0, 0)) // 12.5 */
export function meanPower(data: Float32Array | Float64Array): number {
  let sum = 0;
  for (let i = 0; i < data.length; i++) sum += data[i]! * data[i]!;
  return data.length === 0 ? 0 : sum / (data.length / 2);
}

/**
 * The conditioning of the sampled matrices of a file's tensor (one subframe in memory at a time).
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.h5', format: 'h5', range: [0, 4] }); // H [4, 64, 4, 32]
 * const reader = await openDatasetReader('run.h5');
 * (await conditioningOf(reader, tensorOf(reader))).rank // { min: 4, median: 4, max: 4 }: every sampled 4 x 32 matrix has full rank
 */
export async function conditioningOf(reader: DatasetReader, tensor: StoredArray, options: InspectOptions = {}): Promise<Conditioning> {
  const shape = tensor.shape;
  const Nr = shape[shape.length - 2]!,
    Nt = shape[shape.length - 1]!;
  const bins = shape.slice(1, -2).reduce((a, b) => a * b, 1);
  const subframes = sampleIndices(shape[0]!, options.subframeSamples ?? 16);
  const binIndices = sampleIndices(bins, options.binSamples ?? 8);
  const eps = tensor.dtype === 'complex64' ? 2 ** -23 : 2 ** -52;
  const cond: number[] = [],
    rank: number[] = [],
    largest: number[] = [],
    smallest: number[] = [];
  for (const s of subframes) {
    const row = (await reader.readRows(tensor.name, s, s + 1)) as Float32Array | Float64Array;
    for (const b of binIndices) {
      const sv = complexSingularValues(row, 2 * b * Nr * Nt, Nr, Nt);
      const top = sv[0]!,
        bottom = sv[sv.length - 1]!;
      cond.push(bottom > 0 ? top / bottom : Infinity);
      const tol = top * Math.max(Nr, Nt) * eps;
      rank.push(sv.filter((x) => x > tol).length);
      largest.push(top);
      smallest.push(bottom);
    }
  }
  return {
    Nr,
    Nt,
    subframes,
    bins: binIndices,
    conditionNumber: spreadOf(cond),
    rank: spreadOf(rank),
    largestSingularValue: spreadOf(largest),
    smallestSingularValue: spreadOf(smallest),
  };
}

interface PathRow {
  user: number;
  id: string;
  kind: string;
  delayS: number;
  powerDb: number;
}

/** Path rows (first geometry epoch of each user) from the paths/* arrays or an NPY side file. */
async function pathRows(reader: DatasetReader): Promise<{ rows: PathRow[]; epochs: number }> {
  if (reader instanceof NpyReader) {
    const side = reader.side;
    const users = side?.users ?? (side?.paths !== undefined ? [{ id: '0', paths: side.paths }] : []);
    return { rows: users.flatMap((u, user) => u.paths.map((p) => ({ user, id: p.id, kind: p.kind ?? '', delayS: p.delayS, powerDb: p.powerDb }))), epochs: 1 };
  }
  const has = (n: string): boolean => reader.arrays.some((a) => a.name === n);
  if (!has('paths/delayS') || !has('paths/powerDb')) return { rows: [], epochs: 1 };
  const delay = await reader.readArray('paths/delayS');
  const power = await reader.readArray('paths/powerDb');
  const ids = has('paths/id') ? ((await reader.readArray('paths/id')).strings ?? []) : [];
  const kinds = has('paths/kind') ? ((await reader.readArray('paths/kind')).strings ?? []) : [];
  const epochs = has('paths/epochTimesS') ? reader.arrays.find((a) => a.name === 'paths/epochTimesS')!.shape[0]! : 1;
  const L = delay.shape[delay.shape.length - 1]!;
  const users = delay.data!.length / (L * epochs);
  const rows: PathRow[] = [];
  for (let u = 0; u < users; u++) {
    for (let l = 0; l < L; l++) {
      const i = u * epochs * L + l; // epoch 0 of user u
      const d = (delay.data as Float64Array)[i]!,
        p = (power.data as Float64Array)[i]!;
      if (Number.isNaN(d) && (ids[u * L + l] ?? '') === '') continue;
      rows.push({ user: u, id: ids[u * L + l] ?? String(l), kind: kinds[u * L + l] ?? '', delayS: d, powerDb: p });
    }
  }
  return { rows, epochs };
}

/* eslint-disable @typescript-eslint/no-explicit-any -- a recorded scenario of any format version is read loosely, every field optional */
/** The scenario in one or two lines, from the `scenario` attribute. */
function scenarioBrief(text: string | undefined): { lines: string[]; data: Record<string, unknown> | undefined } {
  if (text === undefined) return { lines: ['  scenario     (not recorded in this file)'], data: undefined };
  let s: Record<string, any>;
  try {
    s = JSON.parse(text) as Record<string, any>;
  } catch {
    return { lines: ['  scenario     (recorded, but not JSON)'], data: undefined };
  }
  // A scenario this build validates is read through its plan (defaults applied as generate
  // applied them); one it does not (another version's) is read as recorded, key by key.
  const checked = safeParseScenario(s);
  const plan = checked.ok ? planScenario(checked.scenario) : undefined;
  const elements = (a: any): number =>
    a?.kind === 'upa' ? (a.rows ?? 1) * (a.columns ?? 1) : a?.kind === 'custom' ? (a.positions?.length ?? 0) : (a?.elements ?? 1);
  const layout = (a: any): string => (a?.kind === 'upa' ? `UPA ${a.rows}x${a.columns}` : a?.kind === 'custom' ? `custom ${elements(a)}` : `ULA ${a?.elements}`);
  const receivers: any[] = plan !== undefined ? plan.users.map((u) => u.config) : (s.receivers ?? (s.receiver !== undefined ? [s.receiver] : []));
  const spacingHz = plan?.grid.domain === 'frequency' ? plan.grid.spacingHz : s.band?.spacingHz;
  const grid =
    s.band !== undefined
      ? `${s.band.subcarriers} subcarriers x ${spacingHz / 1e3} kHz`
      : s.taps !== undefined
        ? `${s.taps.count} taps at ${s.taps.sampleRateHz / 1e6} MHz`
        : '';
  const source =
    s.scene !== undefined
      ? `scene of ${s.scene.walls?.length ?? 0} walls, ${s.scene.scatterers?.length ?? 0} scatterers (traced)`
      : `${s.paths?.length ?? 0} explicit paths`;
  const data = {
    name: s.name,
    carrierHz: s.carrierHz,
    subframes: s.timing?.subframes,
    subframeS: s.timing?.subframeS,
    grid,
    transmitterElements: plan !== undefined ? plan.transmitter.array.elements : elements(s.transmitter?.array),
    receiverElements: plan !== undefined ? plan.users.map((u) => u.array.elements) : receivers.map((r) => elements(r.array)),
    users: receivers.length,
    fading: s.fading?.model,
    seed: s.seed,
    paths: source,
  };
  return {
    lines: [
      `  scenario     ${s.name ?? '(unnamed)'}: ${(s.carrierHz / 1e9).toFixed(3)} GHz, ${s.timing?.subframes} subframes of ${s.timing?.subframeS * 1e3} ms, ${grid}, fading ${s.fading?.model}, seed ${s.seed}`,
      `               transmitter ${layout(s.transmitter?.array)}, ${receivers.length} receiver${receivers.length === 1 ? '' : 's'} ${[...new Set(receivers.map((r) => layout(r.array)))].join(', ')}; ${source}`,
    ],
    data,
  };
}
/* eslint-enable @typescript-eslint/no-explicit-any */

const finite = (x: number): number | null => (Number.isFinite(x) ? x : null);
const fmt = (x: number, digits = 4): string => (Number.isFinite(x) ? x.toPrecision(digits) : 'inf');
const db = (x: number, per = 10): string => (x > 0 && Number.isFinite(x) ? `${(per * Math.log10(x)).toFixed(1)} dB` : x === 0 ? '-inf dB' : 'inf');

/**
 * Summarise a file pathweave wrote.
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.h5', format: 'h5', range: [0, 4] }); // H [4, 64, 4, 32]
 * const { data } = await inspectFile('run.h5');
 * [data.meanPowerDb, data.conditioning.rank] // [-79.44, { min: 4, median: 4, max: 4 }]
 */
export async function inspectFile(file: string, options: InspectOptions = {}): Promise<InspectSummary> {
  const fileBytes = await stat(file).then(
    (s) => s.size,
    (e: NodeJS.ErrnoException) => {
      throw new RequestError(`inspect: cannot read ${file}: ${e.code ?? e.message}`);
    },
  );
  const reader = await openDatasetReader(file);
  try {
    const tensor = tensorOf(reader);
    const lines = [`${file}: ${reader.format}, ${formatBytes(fileBytes)} (${fileBytes} bytes)`];
    const brief = scenarioBrief(attributeOf(reader, 'scenario') as string | undefined);
    lines.push(...brief.lines);
    const range = attributeOf(reader, 'subframeRange');
    const total = attributeOf(reader, 'subframesTotal');
    if (range !== undefined) lines.push(`  subframes    ${range}${total !== undefined ? ` of ${total}` : ''}`);
    lines.push('  arrays');
    const width = Math.max(...reader.arrays.map((a) => a.name.length));
    for (const a of reader.arrays)
      lines.push(`    ${a.name.padEnd(width)}  ${a.dtype.padEnd(10)} [${a.shape.join(', ')}]${a.units !== undefined ? `  ${a.units}` : ''}`);
    const attributes = Object.fromEntries(reader.attributes.filter((a) => a.name !== 'scenario').map((a) => [a.name, a.value]));
    lines.push(
      `  attributes   ${
        Object.entries(attributes)
          .map(([k, v]) => `${k} ${String(v)}`)
          .join(', ') || '(none)'
      }`,
    );

    const { rows, epochs } = await pathRows(reader);
    if (rows.length > 0) {
      const multi = rows.some((r) => r.user > 0);
      lines.push(`  paths${epochs > 1 ? ` (geometry epoch 0 of ${epochs})` : ''}`);
      const idWidth = Math.max(4, ...rows.map((r) => r.id.length));
      lines.push(`    ${multi ? 'user  ' : ''}${'id'.padEnd(idWidth)}  ${'kind'.padEnd(12)} ${'delay ns'.padStart(10)} ${'power dB'.padStart(9)}`);
      for (const r of rows.slice(0, 40)) {
        lines.push(
          `    ${multi ? String(r.user).padEnd(6) : ''}${r.id.padEnd(idWidth)}  ${r.kind.padEnd(12)} ${(r.delayS * 1e9).toFixed(3).padStart(10)} ${r.powerDb.toFixed(2).padStart(9)}`,
        );
      }
      if (rows.length > 40) lines.push(`    ... ${rows.length - 40} more`);
    }

    // Mean power over the whole tensor, a block at a time.
    const rowBytes = DTYPE_BYTES[tensor.dtype as 'complex64' | 'complex128'] * tensor.shape.slice(1).reduce((a, b) => a * b, 1);
    let sum = 0,
      values = 0;
    for await (const block of readRowBlocks(reader, tensor.name, Math.max(1, Math.floor((16 << 20) / rowBytes)))) {
      const b = block as Float32Array | Float64Array;
      sum += meanPower(b) * (b.length / 2);
      values += b.length / 2;
    }
    const mean = values === 0 ? 0 : sum / values;
    lines.push(`  mean |${tensor.name}|^2 per entry: ${mean.toExponential(4)} (${db(mean)}) over all ${tensor.shape[0]} subframes`);

    const c = await conditioningOf(reader, tensor, options);
    const spread = (s: Spread, f: (x: number) => string): string => `min ${f(s.min)}, median ${f(s.median)}, max ${f(s.max)}`;
    lines.push(
      `  singular values of ${tensor.name} (${c.Nr} x ${c.Nt} per matrix), ${c.subframes.length} subframes x ${c.bins.length} bins sampled, evenly spaced with the first and last:`,
      `    condition number s_max/s_min   ${spread(c.conditionNumber, (x) => `${fmt(x)} (${db(x, 20)})`)}`,
      `    numerical rank (of ${Math.min(c.Nr, c.Nt)})         ${spread(c.rank, (x) => String(x))}  (s > s_max max(Nr, Nt) eps, eps of ${tensor.dtype === 'complex64' ? 'float32' : 'float64'})`,
      `    largest singular value         ${spread(c.largestSingularValue, (x) => fmt(x))}`,
      `    smallest singular value        ${spread(c.smallestSingularValue, (x) => fmt(x))}`,
      `    (from the real 2Nr x 2Nt embedding [[Re, -Im], [Im, Re]], whose singular values are those of ${tensor.name}, each twice)`,
    );
    const fin = (s: Spread): Record<string, number | null> => ({ min: finite(s.min), median: finite(s.median), max: finite(s.max) });
    const data: Record<string, unknown> = {
      file,
      format: reader.format,
      fileBytes,
      arrays: reader.arrays.map((a) => ({ name: a.name, dtype: a.dtype, shape: a.shape, ...(a.units !== undefined ? { units: a.units } : {}) })),
      attributes,
      scenario: brief.data ?? null,
      paths: rows,
      pathEpochs: epochs,
      meanPower: mean,
      meanPowerDb: mean > 0 ? 10 * Math.log10(mean) : null,
      conditioning: {
        Nr: c.Nr,
        Nt: c.Nt,
        subframes: c.subframes,
        bins: c.bins,
        conditionNumber: fin(c.conditionNumber),
        rank: c.rank,
        largestSingularValue: c.largestSingularValue,
        smallestSingularValue: c.smallestSingularValue,
        method:
          'singular values of the real embedding [[Re, -Im], [Im, Re]] (each singular value of H twice), every other kept; rank tolerance s_max * max(Nr, Nt) * eps of the dtype',
      },
    };
    return { text: lines.join('\n'), data };
  } finally {
    await reader.close();
  }
}
