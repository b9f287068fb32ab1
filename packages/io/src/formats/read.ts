/**
 * Readers of the .npy, .npz and .h5 files the sinks write (for `inspect` and `merge`): list the named
 * arrays and root attributes, read an array whole, or read rows [start, end) of axis 0 without
 * loading the rest (a tensor can be larger than memory).
 *
 * Layouts as written: row-major; complex arrays come back interleaved re/im (Float32Array for
 * complex64, Float64Array for complex128), whether the file holds numpy complex NPY entries or
 * the HDF5 r/i compound. Strings come back as `strings`.
 *
 * NPZ: the zip central directory is read (ZIP64 records included, PKWARE APPNOTE.TXT 4.3.14-16,
 * 4.5.3); each `<name>.npy` entry is an array, a 0-d entry is a root attribute (the NPZ sink
 * stores attributes so), stored entries are read in place and deflated ones are inflated as a
 * stream. NPZ keeps no units: `units` is undefined there.
 * HDF5: through h5wasm, loaded on the first HDF5 file opened (reading .npy or .npz never pays for
 * its start-up); every dataset's `units` attribute and the root attributes are read.
 * NPY: the one array is the tensor; its name ("H" or "h") and the root attributes come from the
 * side file `<file>.json` that generate writes beside it (without one the array is "tensor").
 */
import { open, readFile, type FileHandle } from 'node:fs/promises';
import { createReadStream } from 'node:fs';
import { createInflateRaw } from 'node:zlib';
import { dtypeOfDescr, parseNpyHeader, DTYPE_BYTES } from './npy.js';
import { elementCount } from './npz.js';
import type { ArrayData, Attribute, DType, NamedArray } from './sink.js';

/**
 * One array as listed by a reader.
 * @example const H: StoredArray = { name: 'H', dtype: 'complex64', shape: [4, 64, 4, 32], units: '1' }; // tensorOf() of the .h5 in openDatasetReader's example
 */
export interface StoredArray {
  name: string;
  dtype: DType;
  shape: number[];
  /** The dataset's `units` attribute (HDF5); undefined for NPZ. */
  units: string | undefined;
}

/**
 * An open file written by pathweave.
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.h5', format: 'h5', range: [0, 4] }); // H [4, 64, 4, 32]
 * const reader: DatasetReader = await openDatasetReader('run.h5');
 * [reader.format, reader.arrays.length, reader.attributes.length] // ['h5', 23, 7]: no tensorSha256 without `checksum`
 * await reader.close();
 */
export interface DatasetReader {
  readonly path: string;
  readonly format: 'npy' | 'npz' | 'h5';
  /** Every named array, the tensor included (NPZ: archive order; HDF5: sorted by path). */
  readonly arrays: readonly StoredArray[];
  /** Root attributes with their dtypes. */
  readonly attributes: readonly Attribute[];
  /** An array read whole (units "" where the file has none). */
  readArray(name: string): Promise<NamedArray>;
  /** Rows [start, end) of axis 0 of a numeric array, in its typed-array form. */
  readRows(name: string, start: number, end: number): Promise<ArrayData>;
  /** Release the file. */
  close(): Promise<void>;
}

const ZIP_MAGIC = 0x04034b50;
const NPY_MAGIC = Buffer.from([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59]);
const HDF5_MAGIC = Buffer.from([0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a]);

/**
 * Open a .npy, .npz or .h5 written by the sinks; the format is told by the first bytes.
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.h5', format: 'h5', range: [0, 4] }); // H [4, 64, 4, 32]
 * const reader = await openDatasetReader('run.h5');
 * reader.arrays.map((a) => a.name); // ['H', 'frequenciesHz', 'gains', 'paths/aoaDeg', ... 23 names]
 * const first = await reader.readRows('H', 0, 1); // Float32Array(16384): one subframe, 64 x 4 x 32 complex, re/im interleaved
 * await reader.close();
 */
export async function openDatasetReader(path: string): Promise<DatasetReader> {
  const handle = await open(path, 'r');
  let keep = false;
  try {
    const head = Buffer.alloc(8);
    await handle.read(head, 0, 8, 0);
    if (head.readUInt32LE(0) === ZIP_MAGIC) {
      const reader = await NpzReader.open(path, handle);
      keep = true;
      return reader;
    }
    if (head.subarray(0, 6).equals(NPY_MAGIC)) {
      const reader = await NpyReader.open(path, handle);
      keep = true;
      return reader;
    }
    if (head.equals(HDF5_MAGIC)) return await Hdf5Reader.open(path);
    throw new RangeError(`openDatasetReader(): ${path} is neither an NPY, a zip (.npz) nor an HDF5 file (first bytes ${head.toString('hex')})`);
  } finally {
    if (!keep) await handle.close();
  }
}

function typedArrayOf(dtype: Exclude<DType, 'string'>, buffer: ArrayBuffer): ArrayData {
  if (dtype === 'complex64' || dtype === 'float32') return new Float32Array(buffer);
  if (dtype === 'complex128' || dtype === 'float64') return new Float64Array(buffer);
  if (dtype === 'int32') return new Int32Array(buffer);
  if (dtype === 'int64') return new BigInt64Array(buffer);
  return new Uint8Array(buffer);
}

function checkRows(fn: string, array: StoredArray, start: number, end: number): void {
  if (array.dtype === 'string') throw new TypeError(`${fn}(): ${array.name} holds strings; read it with readArray()`);
  const rows = array.shape[0];
  if (rows === undefined) throw new RangeError(`${fn}(): ${array.name} is 0-d; read it with readArray()`);
  if (!(Number.isSafeInteger(start) && Number.isSafeInteger(end) && start >= 0 && start <= end && end <= rows)) {
    throw new RangeError(`${fn}(): rows [${start}, ${end}) must lie in [0, ${rows}] of ${array.name}`);
  }
}

function safeNumber(fn: string, name: string, v: bigint): number {
  const n = Number(v);
  if (!Number.isSafeInteger(n)) throw new RangeError(`${fn}(): attribute ${name} = ${v} is beyond 2^53 and cannot be a number`);
  return n;
}

/**
 * Rows [0, rows) of a numeric array in blocks of at most `blockRows` rows, in order, so a
 * tensor larger than memory can be streamed.
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.h5', format: 'h5', range: [0, 4] }); // H [4, 64, 4, 32]
 * const reader = await openDatasetReader('run.h5'), lengths: number[] = [];
 * for await (const block of readRowBlocks(reader, 'H', 3)) lengths.push(block.length);
 * lengths // [49152, 16384]: 3 subframes, then the last one (64 x 4 x 32 complex each)
 */
export async function* readRowBlocks(reader: DatasetReader, name: string, blockRows: number): AsyncGenerator<ArrayData> {
  if (!(Number.isSafeInteger(blockRows) && blockRows >= 1)) throw new RangeError(`readRowBlocks(): blockRows must be an integer >= 1, got ${blockRows}`);
  const array = reader.arrays.find((a) => a.name === name);
  if (array === undefined) throw new RangeError(`readRowBlocks(): no array ${JSON.stringify(name)} in ${reader.path}`);
  const rows = array.shape[0] ?? 0;
  for (let r = 0; r < rows; r += blockRows) yield await reader.readRows(name, r, Math.min(rows, r + blockRows));
}

/**
 * The channel tensor of a file pathweave wrote: "H" (frequency domain) or "h" (tap-delay), or an NPY's only array.
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.h5', format: 'h5', range: [0, 4] }); // H [4, 64, 4, 32]
 * tensorOf(await openDatasetReader('run.h5')) // { name: 'H', dtype: 'complex64', shape: [4, 64, 4, 32], units: '1' }
 */
export function tensorOf(reader: DatasetReader): StoredArray {
  const t = reader.arrays.find((a) => a.name === 'H') ?? reader.arrays.find((a) => a.name === 'h') ?? (reader.format === 'npy' ? reader.arrays[0] : undefined);
  if (t === undefined || (t.dtype !== 'complex64' && t.dtype !== 'complex128')) {
    throw new RangeError(`tensorOf(): ${reader.path} holds no complex channel tensor H or h; it has ${reader.arrays.map((a) => a.name).join(', ') || 'no arrays'}`);
  }
  return t;
}

/**
 * A root attribute's value by name (undefined when absent).
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.h5', format: 'h5', range: [0, 4] }); // H [4, 64, 4, 32]
 * const reader = await openDatasetReader('run.h5');
 * [attributeOf(reader, 'seed'), attributeOf(reader, 'subframeRange'), attributeOf(reader, 'nothing')] // [20261201, '0:4', undefined]
 */
export function attributeOf(reader: DatasetReader, name: string): string | number | undefined {
  return reader.attributes.find((a) => a.name === name)?.value;
}

// ---------------------------------------------------------------------------------------------
// NPY (with its side file)

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

// ---------------------------------------------------------------------------------------------
// NPZ

interface ZipEntry {
  name: string;
  method: number;
  compressedSize: number;
  size: number;
  localHeaderOffset: number;
  /** Offset of the entry's data in the file (after the local header). */
  dataOffset: number;
}

interface NpzArray extends StoredArray {
  entry: ZipEntry;
  /** Offset of the array data inside the (uncompressed) entry. */
  npyDataOffset: number;
  /** Width of one '<U' cell in code points (strings only). */
  unicodeWidth: number;
}

/** Read bytes [from, from + length) of a file. */
async function readAt(handle: FileHandle, from: number, length: number): Promise<Buffer> {
  const out = Buffer.alloc(length);
  let done = 0;
  while (done < length) {
    const { bytesRead } = await handle.read(out, done, length - done, from + done);
    if (bytesRead === 0) throw new RangeError(`readAt(): file ends at ${from + done}, wanted ${from + length}`);
    done += bytesRead;
  }
  return out;
}

function u64(b: Buffer, at: number): number {
  const v = b.readBigUInt64LE(at);
  if (v > BigInt(Number.MAX_SAFE_INTEGER)) throw new RangeError(`NpzReader: zip field ${v} beyond 2^53`);
  return Number(v);
}

/** The central directory of a zip file (APPNOTE 4.3.12-16), ZIP64 aware. */
async function readCentralDirectory(path: string, handle: FileHandle): Promise<ZipEntry[]> {
  const { size } = await handle.stat();
  const tailLength = Math.min(size, 22 + 0xffff + 20);
  const tail = await readAt(handle, size - tailLength, tailLength);
  let eocd = -1;
  for (let i = tailLength - 22; i >= 0; i--) {
    if (tail.readUInt32LE(i) === 0x06054b50) {
      eocd = i;
      break;
    }
  }
  if (eocd < 0) throw new RangeError(`NpzReader: ${path} has no end of central directory record`);
  let count = tail.readUInt16LE(eocd + 10);
  let cdSize = tail.readUInt32LE(eocd + 12);
  let cdOffset = tail.readUInt32LE(eocd + 16);
  if (eocd >= 20 && tail.readUInt32LE(eocd - 20) === 0x07064b50) {
    // ZIP64 locator (4.3.15) -> ZIP64 end of central directory record (4.3.14).
    const recordOffset = u64(tail, eocd - 20 + 8);
    const record = await readAt(handle, recordOffset, 56);
    if (record.readUInt32LE(0) !== 0x06064b50) throw new RangeError(`NpzReader: ${path} has a bad ZIP64 end of central directory record`);
    count = u64(record, 32);
    cdSize = u64(record, 40);
    cdOffset = u64(record, 48);
  }
  const cd = await readAt(handle, cdOffset, cdSize);
  const entries: ZipEntry[] = [];
  let at = 0;
  for (let k = 0; k < count; k++) {
    if (cd.readUInt32LE(at) !== 0x02014b50) throw new RangeError(`NpzReader: ${path} central directory entry ${k} is damaged`);
    const method = cd.readUInt16LE(at + 10);
    let compressedSize = cd.readUInt32LE(at + 20);
    let uncompressed = cd.readUInt32LE(at + 24);
    const nameLength = cd.readUInt16LE(at + 28);
    const extraLength = cd.readUInt16LE(at + 30);
    const commentLength = cd.readUInt16LE(at + 32);
    let localHeaderOffset = cd.readUInt32LE(at + 42);
    const name = cd.toString('utf8', at + 46, at + 46 + nameLength);
    // ZIP64 extended information (4.5.3): present fields in the order size, compressed, offset.
    for (let e = at + 46 + nameLength; e < at + 46 + nameLength + extraLength; ) {
      const id = cd.readUInt16LE(e);
      const len = cd.readUInt16LE(e + 2);
      if (id === 0x0001) {
        let f = e + 4;
        if (uncompressed === 0xffffffff) (uncompressed = u64(cd, f)), (f += 8);
        if (compressedSize === 0xffffffff) (compressedSize = u64(cd, f)), (f += 8);
        if (localHeaderOffset === 0xffffffff) localHeaderOffset = u64(cd, f);
      }
      e += 4 + len;
    }
    const local = await readAt(handle, localHeaderOffset, 30);
    if (local.readUInt32LE(0) !== ZIP_MAGIC) throw new RangeError(`NpzReader: ${path} local header of ${name} is damaged`);
    const dataOffset = localHeaderOffset + 30 + local.readUInt16LE(26) + local.readUInt16LE(28);
    entries.push({ name, method, compressedSize, size: uncompressed, localHeaderOffset, dataOffset });
    at += 46 + nameLength + extraLength + commentLength;
  }
  return entries;
}

class NpzReader implements DatasetReader {
  readonly format = 'npz' as const;

  private constructor(
    readonly path: string,
    private readonly handle: FileHandle,
    readonly arrays: NpzArray[],
    readonly attributes: Attribute[],
  ) {}

  static async open(path: string, handle: FileHandle): Promise<NpzReader> {
    const arrays: NpzArray[] = [];
    const zeroD: NpzArray[] = [];
    for (const entry of await readCentralDirectory(path, handle)) {
      if (!entry.name.endsWith('.npy')) continue;
      if (entry.method !== 0 && entry.method !== 8) throw new RangeError(`NpzReader: ${entry.name} uses zip method ${entry.method}; only 0 and 8 are read`);
      const head = await NpzReader.entryBytes(path, handle, entry, 0, Math.min(entry.size, 12 + 0x10000));
      const info = parseNpyHeader(head);
      if (info.fortranOrder) throw new RangeError(`NpzReader: ${entry.name} is Fortran-ordered; pathweave writes C order`);
      const unicode = /^<U(\d+)$/.exec(info.descr);
      const array: NpzArray = {
        name: entry.name.slice(0, -4),
        dtype: unicode ? 'string' : dtypeOfDescr(info.descr),
        shape: info.shape,
        units: undefined,
        entry,
        npyDataOffset: info.dataOffset,
        unicodeWidth: unicode ? Number(unicode[1]) : 0,
      };
      (array.shape.length === 0 ? zeroD : arrays).push(array);
    }
    const reader = new NpzReader(path, handle, arrays, []);
    for (const a of zeroD) {
      const value = await reader.readWhole(a);
      if (a.dtype === 'string') reader.attributes.push({ name: a.name, dtype: 'string', value: (value.strings as string[])[0] as string });
      else if (a.dtype === 'int64') reader.attributes.push({ name: a.name, dtype: 'int64', value: safeNumber('NpzReader', a.name, (value.data as BigInt64Array)[0] as bigint) });
      else if (a.dtype === 'int32' || a.dtype === 'float64') reader.attributes.push({ name: a.name, dtype: a.dtype, value: (value.data as Int32Array | Float64Array)[0] as number });
      else reader.arrays.push(a); // other 0-d arrays are not attributes the sink writes
    }
    return reader;
  }

  /** Bytes [from, to) of an entry's uncompressed content. */
  private static async entryBytes(path: string, handle: FileHandle, entry: ZipEntry, from: number, to: number): Promise<Buffer> {
    if (entry.method === 0) return readAt(handle, entry.dataOffset + from, to - from);
    const out = Buffer.alloc(to - from);
    if (to === from) return out;
    let position = 0;
    const source = createReadStream(path, { start: entry.dataOffset, end: entry.dataOffset + entry.compressedSize - 1 });
    const inflate = createInflateRaw();
    source.pipe(inflate);
    try {
      for await (const piece of inflate as AsyncIterable<Buffer>) {
        const lo = Math.max(from - position, 0);
        const hi = Math.min(to - position, piece.length);
        if (hi > lo) piece.copy(out, position + lo - from, lo, hi);
        position += piece.length;
        if (position >= to) break;
      }
    } finally {
      source.destroy();
      inflate.destroy();
    }
    if (position < to) throw new RangeError(`NpzReader: ${entry.name} inflates to ${position} bytes, wanted ${to}`);
    return out;
  }

  private find(fn: string, name: string): NpzArray {
    const array = this.arrays.find((a) => a.name === name);
    if (!array) throw new RangeError(`${fn}(): no array ${JSON.stringify(name)} in ${this.path}; it has ${this.arrays.map((a) => a.name).join(', ')}`);
    return array;
  }

  private async readWhole(array: NpzArray): Promise<NamedArray> {
    const count = elementCount(array.shape);
    if (array.dtype === 'string') {
      const bytes = await NpzReader.entryBytes(this.path, this.handle, array.entry, array.npyDataOffset, array.npyDataOffset + count * array.unicodeWidth * 4);
      const strings: string[] = [];
      for (let cell = 0; cell < count; cell++) {
        let s = '';
        for (let c = 0; c < array.unicodeWidth; c++) {
          const cp = bytes.readUInt32LE((cell * array.unicodeWidth + c) * 4);
          if (cp === 0) break;
          s += String.fromCodePoint(cp);
        }
        strings.push(s);
      }
      return { name: array.name, dtype: 'string', shape: array.shape, strings, units: '' };
    }
    const bytes = await NpzReader.entryBytes(this.path, this.handle, array.entry, array.npyDataOffset, array.npyDataOffset + count * DTYPE_BYTES[array.dtype]);
    const data = typedArrayOf(array.dtype, bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer);
    return { name: array.name, dtype: array.dtype, shape: array.shape, data, units: '' };
  }

  async readArray(name: string): Promise<NamedArray> {
    return this.readWhole(this.find('NpzReader.readArray', name));
  }

  async readRows(name: string, start: number, end: number): Promise<ArrayData> {
    const fn = 'NpzReader.readRows';
    const array = this.find(fn, name);
    checkRows(fn, array, start, end);
    const dtype = array.dtype as Exclude<DType, 'string'>;
    const rowBytes = elementCount(array.shape.slice(1)) * DTYPE_BYTES[dtype];
    const from = array.npyDataOffset + start * rowBytes;
    const bytes = await NpzReader.entryBytes(this.path, this.handle, array.entry, from, from + (end - start) * rowBytes);
    return typedArrayOf(dtype, bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer);
  }

  async close(): Promise<void> {
    await this.handle.close();
  }
}

// ---------------------------------------------------------------------------------------------
// HDF5

type H5Wasm = typeof import('h5wasm/node').default;
type H5Module = Awaited<H5Wasm['ready']>;
type H5File = InstanceType<H5Wasm['File']>;
type H5Dataset = InstanceType<H5Wasm['Dataset']>;
type H5Metadata = H5Dataset['metadata'];

let h5wasmLoaded: Promise<H5Wasm> | undefined;
/** h5wasm, imported once, when the first HDF5 file is opened. */
const loadH5wasm = (): Promise<H5Wasm> => (h5wasmLoaded ??= import('h5wasm/node').then((m) => m.default));

/** Our DType of an HDF5 type as the sink writes them, or undefined for anything else. */
function dtypeOfMetadata(module: H5Module, m: H5Metadata): DType | undefined {
  const cls = module.H5T_class_t;
  if (m.type === cls.H5T_STRING.value) return 'string';
  if (m.type === cls.H5T_FLOAT.value) return m.size === 4 ? 'float32' : m.size === 8 ? 'float64' : undefined;
  if (m.type === cls.H5T_INTEGER.value) {
    if (m.size === 1 && !m.signed) return 'uint8';
    if (m.size === 4 && m.signed) return 'int32';
    if (m.size === 8 && m.signed) return 'int64';
    return undefined;
  }
  if (m.type === cls.H5T_COMPOUND.value && m.compound_type) {
    const [r, i] = m.compound_type.members;
    const isPart = (p: typeof r, name: string, offset: number): boolean =>
      p !== undefined && p.name === name && p.type === cls.H5T_FLOAT.value && p.offset === offset && p.size * 2 === m.size;
    if (m.compound_type.nmembers === 2 && isPart(r, 'r', 0) && isPart(i, 'i', m.size / 2)) {
      return m.size === 8 ? 'complex64' : m.size === 16 ? 'complex128' : undefined;
    }
  }
  return undefined;
}

class Hdf5Reader implements DatasetReader {
  readonly format = 'h5' as const;

  private constructor(
    readonly path: string,
    private readonly module: H5Module,
    private readonly file: H5File,
    readonly arrays: StoredArray[],
    readonly attributes: Attribute[],
  ) {}

  static async open(path: string): Promise<Hdf5Reader> {
    const h5wasm = await loadH5wasm();
    const module = await h5wasm.ready;
    const file = new h5wasm.File(path, 'r');
    try {
      const arrays: StoredArray[] = [];
      for (const p of file.paths().sort()) {
        const ds = file.get(p);
        if (!(ds instanceof h5wasm.Dataset)) continue;
        const dtype = dtypeOfMetadata(module, ds.metadata);
        if (dtype === undefined) throw new RangeError(`Hdf5Reader: dataset ${p} has a type pathweave does not write (${JSON.stringify(ds.dtype)})`);
        const units = ds.attrs.units === undefined ? undefined : String(ds.get_attribute('units', true));
        arrays.push({ name: p.replace(/^\//, ''), dtype, shape: (ds.shape ?? []).map(Number), units });
      }
      const attributes: Attribute[] = [];
      for (const [name, attr] of Object.entries(file.attrs)) {
        const dtype = dtypeOfMetadata(module, attr.metadata);
        const value = attr.value;
        if (dtype === 'string' && typeof value === 'string') attributes.push({ name, dtype: 'string', value });
        else if (dtype === 'float64' && typeof value === 'number') attributes.push({ name, dtype: 'float64', value });
        else if (dtype === 'int32' && typeof value === 'number') attributes.push({ name, dtype: 'int32', value });
        else if (dtype === 'int64' && typeof value === 'bigint') attributes.push({ name, dtype: 'int64', value: safeNumber('Hdf5Reader', name, value) });
        else throw new RangeError(`Hdf5Reader: root attribute ${name} has a type pathweave does not write (${JSON.stringify(attr.dtype)})`);
      }
      return new Hdf5Reader(path, module, file, arrays, attributes);
    } catch (err) {
      file.close();
      throw err;
    }
  }

  private find(fn: string, name: string): StoredArray {
    const array = this.arrays.find((a) => a.name === name);
    if (!array) throw new RangeError(`${fn}(): no array ${JSON.stringify(name)} in ${this.path}; it has ${this.arrays.map((a) => a.name).join(', ')}`);
    return array;
  }

  /** Raw bytes of a hyperslab (whole rows), through the heap: compound and plain types alike. */
  private hyperslab(array: StoredArray, start: number, end: number): ArrayData {
    const dtype = array.dtype as Exclude<DType, 'string'>;
    const rest = array.shape.slice(1);
    const nbytes = (end - start) * elementCount(rest) * DTYPE_BYTES[dtype];
    const buffer = new ArrayBuffer(nbytes);
    if (nbytes === 0) return typedArrayOf(dtype, buffer);
    const ptr = this.module._malloc(nbytes);
    if (ptr === 0) throw new RangeError(`Hdf5Reader.readRows(): the WebAssembly heap has no room for ${nbytes} bytes`);
    try {
      const count = array.shape.length === 0 ? null : [BigInt(end - start), ...rest.map(BigInt)];
      const offset = array.shape.length === 0 ? null : [BigInt(start), ...rest.map(() => 0n)];
      const strides = array.shape.length === 0 ? null : array.shape.map(() => 1n);
      const status = this.module.get_dataset_data(this.file.file_id, `/${array.name}`, count, offset, strides, BigInt(ptr));
      if (status < 0) throw new Error(`Hdf5Reader: H5Dread of ${array.name} rows [${start}, ${end}) failed (status ${status})`);
      new Uint8Array(buffer).set(this.module.HEAPU8.subarray(ptr, ptr + nbytes));
    } finally {
      this.module._free(ptr);
    }
    return typedArrayOf(dtype, buffer);
  }

  async readArray(name: string): Promise<NamedArray> {
    const array = this.find('Hdf5Reader.readArray', name);
    const units = array.units ?? '';
    if (array.dtype === 'string') {
      const ds = this.file.get(`/${name}`) as H5Dataset;
      const value = ds.value;
      const strings = (Array.isArray(value) ? value : [value]).map(String);
      return { name, dtype: 'string', shape: array.shape, strings, units };
    }
    const rows = array.shape[0] ?? 1;
    return { name, dtype: array.dtype, shape: array.shape, data: this.hyperslab(array, 0, rows), units };
  }

  async readRows(name: string, start: number, end: number): Promise<ArrayData> {
    const fn = 'Hdf5Reader.readRows';
    const array = this.find(fn, name);
    checkRows(fn, array, start, end);
    return this.hyperslab(array, start, end);
  }

  async close(): Promise<void> {
    this.file.close();
  }
}
