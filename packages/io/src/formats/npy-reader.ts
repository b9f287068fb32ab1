/** Reading a .npy (with the side file `<file>.json` generate writes beside it). */
import type { FileHandle } from 'node:fs/promises';
import { dtypeOfDescr, parseNpyHeader, DTYPE_BYTES, type NpyHeaderInfo } from './npy.js';
import { elementCount } from './npz.js';
import type { ArrayData, Attribute, DType, NamedArray } from './sink.js';
import {
  arrayBytes,
  checkRows,
  InputFileError,
  READ_LIMITS,
  readAt,
  readSmallFile,
  typedArrayOf,
  type DatasetReader,
  type StoredArray,
} from './read-support.js';

/** An NPY header read from a file, a refusal named after the file (and entry). */
/** @internal */
export function npyHeaderOf(
  path: string,
  what: string,
  bytes: Uint8Array,
): NpyHeaderInfo & { dtype: Exclude<DType, 'string'> | 'string'; unicodeWidth: number } {
  let info: NpyHeaderInfo;
  try {
    info = parseNpyHeader(bytes);
  } catch (e) {
    throw new InputFileError(path, `${what}: ${(e as Error).message.replace(/^parseNpyHeader\(\): /, '')}`, { cause: e });
  }
  if (info.dataOffset - 10 > READ_LIMITS.npyHeaderBytes)
    throw new InputFileError(path, `${what}: an NPY header of ${info.dataOffset} bytes, more than the ${READ_LIMITS.npyHeaderBytes} allowed`);
  if (info.fortranOrder) throw new InputFileError(path, `${what} is Fortran-ordered; pathweave writes C order`);
  const unicode = /^<U([0-9]+)$/.exec(info.descr);
  if (unicode !== null) {
    const width = Number(unicode[1]);
    if (!(width >= 1 && width <= READ_LIMITS.attributeChars))
      throw new InputFileError(path, `${what}: strings of ${unicode[1]} characters; at most ${READ_LIMITS.attributeChars} are read`);
    return { ...info, dtype: 'string', unicodeWidth: width };
  }
  let dtype: Exclude<DType, 'string'>;
  try {
    dtype = dtypeOfDescr(info.descr);
  } catch (e) {
    throw new InputFileError(path, `${what}: dtype ${JSON.stringify(info.descr)} is not one pathweave writes`, { cause: e });
  }
  return { ...info, dtype, unicodeWidth: 0 };
}

/** The side file's shape, checked field by field (a wrong type is refused, naming the field). */
function checkSideFile(path: string, doc: unknown): NpySideFile {
  const fail = (what: string): never => {
    throw new InputFileError(path, `not a pathweave side file: ${what}`);
  };
  if (doc === null || typeof doc !== 'object' || Array.isArray(doc)) fail('the document is not a JSON object');
  const d = doc as Record<string, unknown>;
  const str = (k: string, v: unknown): void => {
    if (v !== undefined && (typeof v !== 'string' || v.length > READ_LIMITS.attributeChars))
      fail(`${k} must be a string of at most ${READ_LIMITS.attributeChars} characters`);
  };
  const int = (k: string, v: unknown): void => {
    if (v !== undefined && !(Number.isSafeInteger(v) && (v as number) >= 0)) fail(`${k} must be an integer >= 0, got ${JSON.stringify(v)}`);
  };
  str('pathweaveVersion', d.pathweaveVersion);
  str('kernel', d.kernel);
  int('seed', d.seed);
  if (d.formatVersion !== undefined && typeof d.formatVersion !== 'string') int('formatVersion', d.formatVersion);
  if (d.scenario !== undefined && (d.scenario === null || typeof d.scenario !== 'object' || Array.isArray(d.scenario))) fail('scenario must be a JSON object');
  const t = d.tensor;
  if (t !== undefined) {
    if (t === null || typeof t !== 'object' || Array.isArray(t)) fail('tensor must be a JSON object');
    const tt = t as Record<string, unknown>;
    if (tt.name !== undefined && tt.name !== 'H' && tt.name !== 'h') fail(`tensor.name must be "H" or "h", got ${JSON.stringify(tt.name)}`);
    str('tensor.dtype', tt.dtype);
    if (tt.shape !== undefined && !(Array.isArray(tt.shape) && tt.shape.every((v) => Number.isSafeInteger(v) && v >= 0)))
      fail('tensor.shape must be a list of integers >= 0');
    if (
      tt.subframes !== undefined &&
      !(Array.isArray(tt.subframes) && tt.subframes.length === 2 && tt.subframes.every((v) => Number.isSafeInteger(v) && v >= 0))
    )
      fail('tensor.subframes must be [first, end]');
    int('tensor.subframesTotal', tt.subframesTotal);
    if (tt.sha256 !== undefined && !(typeof tt.sha256 === 'string' && /^[0-9a-f]{64}$/.test(tt.sha256))) fail('tensor.sha256 must be 64 hexadecimal digits');
  }
  return d as NpySideFile;
}

/**
 * The side file `<file>.json` generate writes beside a .npy (see generate.ts).
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.npy', format: 'npy', range: [0, 4] }); // run.npy and run.npy.json
 * const side: NpySideFile = JSON.parse(readFileSync('run.npy.json', 'utf8'));
 * side.tensor // { name: 'H', dtype: 'complex64', shape: [4, 64, 4, 32], subframes: [0, 4], subframesTotal: 200 } (and sha256 'b68c65c0...' with `checksum: true`)
 */
export interface NpySideFile {
  pathweaveVersion?: string;
  tensor?: { name?: string; dtype?: string; shape?: number[]; subframes?: [number, number]; subframesTotal?: number; sha256?: string };
  seed?: number;
  users?: { id: string; paths: { id: string; delayS: number; powerDb: number; aodDeg?: number[]; aoaDeg?: number[]; kind?: string }[] }[];
  paths?: { id: string; delayS: number; powerDb: number; aodDeg?: number[]; aoaDeg?: number[]; kind?: string }[];
  scenario?: unknown;
  [key: string]: unknown;
}

/**
 * A .npy read through the DatasetReader interface; `side` is its side file when present.
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.npy', format: 'npy', range: [0, 4] }); // run.npy and run.npy.json
 * const reader = await openDatasetReader('run.npy');
 * [reader instanceof NpyReader, reader.arrays[0]!.name] // [true, 'H']: the name comes from run.npy.json
 * await reader.close();
 */
export class NpyReader implements DatasetReader {
  readonly format = 'npy' as const;

  private constructor(
    readonly path: string,
    private readonly handle: FileHandle,
    private readonly dataOffset: number,
    readonly arrays: StoredArray[],
    readonly attributes: Attribute[],
    readonly side: NpySideFile | undefined,
  ) {}

  /** Open `path` (its handle already open) and its side file. */
  static async open(path: string, handle: FileHandle): Promise<NpyReader> {
    const { size } = await handle.stat();
    const info = npyHeaderOf(path, 'the NPY header', await readAt(handle, 0, Math.min(size, 12 + READ_LIMITS.npyHeaderBytes), path));
    if (info.dtype === 'string') throw new InputFileError(path, 'holds strings, not a channel tensor');
    const dtype = info.dtype;
    const need = info.dataOffset + arrayBytes(path, 'the array', info.shape, DTYPE_BYTES[dtype]);
    if (size !== need)
      throw new InputFileError(
        path,
        `is ${size} bytes, its header [${info.shape.join(', ')}] ${dtype} needs ${need}: the file is ${size < need ? 'truncated' : 'longer than its header says'}`,
      );
    let side: NpySideFile | undefined;
    let sideText: string | undefined;
    try {
      sideText = await readSmallFile(`${path}.json`, 'side file');
    } catch (e) {
      if (!(e instanceof InputFileError && (e.cause as NodeJS.ErrnoException | undefined)?.code === 'ENOENT')) throw e;
    }
    if (sideText !== undefined) {
      let doc: unknown;
      try {
        doc = JSON.parse(sideText);
      } catch (e) {
        throw new InputFileError(`${path}.json`, `the side file is not JSON (${(e as Error).message})`, { cause: e });
      }
      side = checkSideFile(`${path}.json`, doc);
      const t = side.tensor;
      if (t?.shape !== undefined && (t.shape.length !== info.shape.length || t.shape.some((v, i) => v !== info.shape[i]))) {
        throw new InputFileError(`${path}.json`, `the side file says the tensor is [${t.shape.join(', ')}], ${path} holds [${info.shape.join(', ')}]`);
      }
      if (t?.dtype !== undefined && t.dtype !== dtype) throw new InputFileError(`${path}.json`, `the side file says ${t.dtype}, ${path} holds ${dtype}`);
    }
    const name = side?.tensor?.name === 'H' || side?.tensor?.name === 'h' ? side.tensor.name : 'tensor';
    const attributes: Attribute[] = [];
    if (side !== undefined) {
      if (side.scenario !== undefined) attributes.push({ name: 'scenario', dtype: 'string', value: JSON.stringify(side.scenario) });
      if (typeof side.pathweaveVersion === 'string') attributes.push({ name: 'pathweaveVersion', dtype: 'string', value: side.pathweaveVersion });
      if (typeof side.seed === 'number') attributes.push({ name: 'seed', dtype: 'int64', value: side.seed });
      const t = side.tensor;
      if (t?.subframes !== undefined) attributes.push({ name: 'subframeRange', dtype: 'string', value: `${t.subframes[0]}:${t.subframes[1]}` });
      if (typeof t?.subframesTotal === 'number') attributes.push({ name: 'subframesTotal', dtype: 'int64', value: t.subframesTotal });
      if (typeof t?.sha256 === 'string') attributes.push({ name: 'tensorSha256', dtype: 'string', value: t.sha256 });
      for (const key of ['kernel', 'formatVersion'] as const) {
        const v = side[key];
        if (typeof v === 'string') attributes.push({ name: key, dtype: 'string', value: v });
        else if (typeof v === 'number') attributes.push({ name: key, dtype: 'int32', value: v });
      }
    }
    return new NpyReader(path, handle, info.dataOffset, [{ name, dtype, shape: info.shape, units: undefined }], attributes, side);
  }

  private find(fn: string, name: string): StoredArray {
    const array = this.arrays.find((a) => a.name === name);
    if (!array) throw new RangeError(`${fn}(): no array ${JSON.stringify(name)} in ${this.path}; it has ${this.arrays[0]!.name}`);
    return array;
  }

  async readArray(name: string): Promise<NamedArray> {
    const array = this.find('NpyReader.readArray', name);
    const rows = array.shape[0] ?? 1;
    return { name, dtype: array.dtype, shape: array.shape, data: await this.readRows(name, 0, rows), units: '' };
  }

  async readRows(name: string, start: number, end: number): Promise<ArrayData> {
    const fn = 'NpyReader.readRows';
    const array = this.find(fn, name);
    checkRows(fn, array, start, end);
    const dtype = array.dtype as Exclude<DType, 'string'>;
    const rowBytes = elementCount(array.shape.slice(1)) * DTYPE_BYTES[dtype];
    const bytes = await readAt(this.handle, this.dataOffset + start * rowBytes, (end - start) * rowBytes, this.path);
    return typedArrayOf(dtype, bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer);
  }

  async close(): Promise<void> {
    await this.handle.close();
  }
}
