/** Reading a .npy (with the side file `<file>.json` generate writes beside it). */
import { readFile, type FileHandle } from 'node:fs/promises';
import { dtypeOfDescr, parseNpyHeader, DTYPE_BYTES } from './npy.js';
import { elementCount } from './npz.js';
import type { ArrayData, Attribute, DType, NamedArray } from './sink.js';
import { checkRows, readAt, typedArrayOf, type DatasetReader, type StoredArray } from './read-support.js';


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
    const info = parseNpyHeader(await readAt(handle, 0, Math.min(size, 12 + 0x10000)));
    if (info.fortranOrder) throw new RangeError(`NpyReader: ${path} is Fortran-ordered; pathweave writes C order`);
    const dtype = dtypeOfDescr(info.descr);
    const need = info.dataOffset + elementCount(info.shape) * DTYPE_BYTES[dtype];
    if (size < need) throw new RangeError(`NpyReader: ${path} is ${size} bytes, its header needs ${need}: the file is truncated`);
    let side: NpySideFile | undefined;
    try {
      side = JSON.parse(await readFile(`${path}.json`, 'utf8')) as NpySideFile;
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'ENOENT') throw new RangeError(`NpyReader: side file ${path}.json cannot be read: ${(e as Error).message}`);
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
    const bytes = await readAt(this.handle, this.dataOffset + start * rowBytes, (end - start) * rowBytes);
    return typedArrayOf(dtype, bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer);
  }

  async close(): Promise<void> {
    await this.handle.close();
  }
}
