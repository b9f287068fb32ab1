/**
 * NPZ writer: one zip archive that numpy.load opens, holding every named array as `<name>.npy`
 * (a name with "/" stays a zip entry path: `paths/delayS.npy`, key "paths/delayS" in numpy).
 *
 * Tensor layout: the streamed tensor ("H" [S, K, Nr, Nt] or "h" [S, count, Nr, Nt], docs/conventions.md)
 * is row-major, complex interleaved re/im, exactly numpy's complex64 / complex128 bytes, so the
 * NPY entry body is the caller's blocks written in order. Its size is known from the header, so
 * the entry is streamed into the zip (yazl addReadStreamLazy with `size`) and memory stays
 * bounded by about one block.
 *
 * Container choices:
 * - Entries are stored (method 0) unless a deflate level 1-9 is asked for.
 * - Every entry carries the fixed timestamp 1980-02-01 00:00:00 ({@link NPZ_ENTRY_TIME})
 *   as a DOS date only (no Info-ZIP "UT" field, whose UTC seconds would depend on the time zone),
 *   and mode 0644, so the same inputs in the same order give the same bytes on any machine.
 * - ZIP64 records appear where sizes need them, or always with `forceZip64`.
 * - Root attributes become 0-d arrays under their own names (`seed` -> `seed.npy`, int64), since
 *   NPZ has no attribute slot; `units` are not stored in NPZ (HDF5 keeps them).
 * - dtype "string" arrays become fixed-width unicode NPY (`<U{n}`, UTF-32LE, n the longest
 *   string in code points, at least 1), which numpy reads as str arrays.
 *
 * The archive is written to a temporary file beside the target and renamed on commit.
 */
import { createRequire } from 'node:module';
import { endianness } from 'node:os';
import { Readable } from 'node:stream';
import type * as Yazl from 'yazl';
import { AtomicFile } from './atomic.js';
import { NPY_DESCR, npyHeader } from './npy.js';
import type { ArrayData, Attribute, DatasetSink, DType, NamedArray, StreamedArrayHeader } from './sink.js';

/**
 * The timestamp of every zip entry, as local date-time parts: 1980-02-01 00:00:00. The Date is
 * built from these parts at each write (yazl encodes DOS fields from local time), so the entry
 * reads DOS date 0x0041, time 0x0000 whatever the time zone. A month after the DOS epoch, as
 * reproducible-archive tools do (common practice): yazl clamps dates before its own 1980-01-01,
 * taken in the time zone of its load, which would shift an epoch timestamp by the zone offset.
 * @example NPZ_ENTRY_TIME // [1980, 1, 1, 0, 0, 0]
 */
const NPZ_ENTRY_TIME: readonly [number, number, number, number, number, number] = [1980, 1, 1, 0, 0, 0];

/** Options of {@link openNpzSink}. */
export interface NpzSinkOptions {
  /**
   * Deflate level 0-9 for every entry (0, the default: stored). The streamed tensor uses its
   * header's `deflate` when given.
   */
  deflate?: number;
  /** Write ZIP64 records (entries and end of central directory) even when no size needs them. */
  forceZip64?: boolean;
}

// ---------------------------------------------------------------------------------------------
// Shared checks of the sink inputs (also used by the HDF5 sink).

/** Bytes per element of each numeric DType (complex: both parts). @internal */
export const ITEM_BYTES: Readonly<Record<Exclude<DType, 'string'>, number>> = {
  complex64: 8,
  complex128: 16,
  float32: 4,
  float64: 8,
  int32: 4,
  uint8: 1,
  int64: 8,
};

const DATA_CLASS: Readonly<Record<Exclude<DType, 'string'>, { name: string; is: (d: unknown) => boolean; perElement: number }>> = {
  complex64: { name: 'Float32Array', is: (d) => d instanceof Float32Array, perElement: 2 },
  complex128: { name: 'Float64Array', is: (d) => d instanceof Float64Array, perElement: 2 },
  float32: { name: 'Float32Array', is: (d) => d instanceof Float32Array, perElement: 1 },
  float64: { name: 'Float64Array', is: (d) => d instanceof Float64Array, perElement: 1 },
  int32: { name: 'Int32Array', is: (d) => d instanceof Int32Array, perElement: 1 },
  uint8: { name: 'Uint8Array', is: (d) => d instanceof Uint8Array, perElement: 1 },
  int64: { name: 'BigInt64Array', is: (d) => d instanceof BigInt64Array, perElement: 1 },
};

/** Product of a shape's extents (1 for a 0-d shape). @internal */
export function elementCount(shape: readonly number[]): number {
  let n = 1;
  for (const extent of shape) n *= extent;
  return n;
}

/** Throw unless `shape` is a list of non-negative safe integers. @internal */
function checkShape(fn: string, what: string, shape: unknown): asserts shape is number[] {
  if (!Array.isArray(shape) || !shape.every((e) => Number.isSafeInteger(e) && (e as number) >= 0)) {
    throw new RangeError(`${fn}(): ${what} must be a list of non-negative integers, got ${JSON.stringify(shape)}`);
  }
}

const NAME_SEGMENT = /^[A-Za-z0-9_][A-Za-z0-9_.-]*$/;

/** Throw unless `name` is "/"-separated segments of [A-Za-z0-9_.-] (no empty, "." or ".." segment). @internal */
function checkName(fn: string, name: unknown): asserts name is string {
  if (typeof name !== 'string' || !name.split('/').every((seg) => NAME_SEGMENT.test(seg))) {
    throw new RangeError(
      `${fn}(): name must be "/"-separated segments of letters, digits, "_", "." and "-" (not starting with "." or "-"), got ${JSON.stringify(name)}`,
    );
  }
}

/** Throw unless the NamedArray's data (or strings) match its dtype and shape. @internal */
export function checkNamedArray(fn: string, array: NamedArray): void {
  checkName(fn, array.name);
  checkShape(fn, `${array.name}.shape`, array.shape);
  if (typeof array.units !== 'string') throw new TypeError(`${fn}(): ${array.name}.units must be a string, got ${typeof array.units}`);
  const count = elementCount(array.shape);
  if (array.dtype === 'string') {
    const s = array.strings;
    if (!Array.isArray(s) || !s.every((x) => typeof x === 'string')) {
      throw new TypeError(`${fn}(): ${array.name}.strings must be an array of strings for dtype "string"`);
    }
    if (s.length !== count) {
      throw new RangeError(`${fn}(): ${array.name}.strings has ${s.length} entries, shape [${array.shape.join(', ')}] needs ${count}`);
    }
    return;
  }
  const cls = DATA_CLASS[array.dtype];
  if (cls === undefined)
    throw new TypeError(`${fn}(): ${array.name}.dtype must be one of ${Object.keys(ITEM_BYTES).join(', ')}, string; got ${String(array.dtype)}`);
  if (!cls.is(array.data)) {
    throw new TypeError(
      `${fn}(): ${array.name}.data must be a ${cls.name} for dtype ${array.dtype}, got ${array.data?.constructor.name ?? String(array.data)}`,
    );
  }
  const data = array.data as ArrayData;
  if (data.length !== count * cls.perElement) {
    throw new RangeError(
      `${fn}(): ${array.name}.data has ${data.length} values, shape [${array.shape.join(', ')}] of ${array.dtype} needs ${count * cls.perElement}`,
    );
  }
}

/** Throw unless the attribute's value fits its explicit dtype. @internal */
export function checkAttribute(fn: string, attribute: Attribute): void {
  checkName(fn, attribute.name);
  if (attribute.name.includes('/')) throw new RangeError(`${fn}(): attribute names have no "/", got ${JSON.stringify(attribute.name)}`);
  const { dtype, value } = attribute;
  if (dtype === 'string') {
    if (typeof value !== 'string') throw new TypeError(`${fn}(): attribute ${attribute.name} of dtype string needs a string value, got ${typeof value}`);
  } else if (dtype === 'float64') {
    if (typeof value !== 'number') throw new TypeError(`${fn}(): attribute ${attribute.name} of dtype float64 needs a number, got ${typeof value}`);
  } else if (dtype === 'int64') {
    if (!Number.isSafeInteger(value)) {
      throw new RangeError(`${fn}(): attribute ${attribute.name} of dtype int64 needs a safe integer (|v| < 2^53), got ${String(value)}`);
    }
  } else if (dtype === 'int32') {
    if (!Number.isInteger(value) || value < -(2 ** 31) || value >= 2 ** 31) {
      throw new RangeError(`${fn}(): attribute ${attribute.name} of dtype int32 needs an integer in [-2^31, 2^31), got ${String(value)}`);
    }
  } else {
    throw new TypeError(`${fn}(): attribute ${(attribute as Attribute).name} dtype must be string, float64, int64 or int32, got ${String(dtype)}`);
  }
}

/** Throw unless the streamed tensor's header is usable. @internal */
export function checkTensorHeader(fn: string, header: StreamedArrayHeader): void {
  checkName(fn, header.name);
  if (header.dtype !== 'complex64' && header.dtype !== 'complex128') {
    throw new TypeError(`${fn}(): tensor dtype must be complex64 or complex128, got ${String(header.dtype)}`);
  }
  checkShape(fn, 'tensor shape', header.shape);
  if (header.shape.length < 1) throw new RangeError(`${fn}(): tensor shape needs at least the subframe axis, got []`);
  if (typeof header.units !== 'string') throw new TypeError(`${fn}(): tensor units must be a string, got ${typeof header.units}`);
  if (header.deflate !== undefined && !(Number.isInteger(header.deflate) && header.deflate >= 0 && header.deflate <= 9)) {
    throw new RangeError(`${fn}(): deflate must be an integer 0-9, got ${String(header.deflate)}`);
  }
  if (header.chunkRows !== undefined && !(Number.isSafeInteger(header.chunkRows) && header.chunkRows >= 1)) {
    throw new RangeError(`${fn}(): chunkRows must be a positive integer, got ${String(header.chunkRows)}`);
  }
}

/** The row-by-row bookkeeping of a streamed tensor, common to both sinks. @internal */
export class RowCounter {
  readonly rowValues: number;
  readonly totalRows: number;
  rowsWritten = 0;
  constructor(readonly header: StreamedArrayHeader) {
    this.totalRows = header.shape[0] as number;
    this.rowValues = 2 * elementCount(header.shape.slice(1));
  }
  /** Validate a block and return its row count. */
  accept(fn: string, data: Float32Array | Float64Array): number {
    const want = this.header.dtype === 'complex64' ? Float32Array : Float64Array;
    if (!(data instanceof want)) {
      throw new TypeError(`${fn}(): rows of a ${this.header.dtype} tensor must be a ${want.name}, got ${(data as object)?.constructor?.name ?? String(data)}`);
    }
    if (this.rowValues === 0 ? data.length !== 0 : data.length % this.rowValues !== 0) {
      throw new RangeError(`${fn}(): block of ${data.length} values is not whole rows of ${this.rowValues} values (re/im interleaved)`);
    }
    const rows = this.rowValues === 0 ? 0 : data.length / this.rowValues;
    if (this.rowsWritten + rows > this.totalRows) {
      throw new RangeError(`${fn}(): ${this.rowsWritten} + ${rows} rows exceed the tensor's ${this.totalRows} subframes`);
    }
    return rows;
  }
  get complete(): boolean {
    return this.rowsWritten === this.totalRows;
  }
}

function checkLittleEndianHost(fn: string): void {
  // Typed arrays are in host order; every format here is little-endian.
  if (endianness() !== 'LE') throw new RangeError(`${fn}(): needs a little-endian host, got ${endianness()}`);
}

// ---------------------------------------------------------------------------------------------
// NPY entries (headers from ./npy.ts).

/** Code points of the longest string (at least 1, numpy's width of an empty '<U'). */
function unicodeWidth(strings: readonly string[]): number {
  let width = 1;
  for (const s of strings) {
    let n = 0;
    for (const _ of s) n++;
    if (n > width) width = n;
  }
  return width;
}

/** Encode strings as fixed-width UTF-32LE cells of `width` code points, NUL-padded. */
function encodeUnicode(strings: readonly string[], width: number): Buffer {
  const out = Buffer.alloc(strings.length * width * 4);
  let cell = 0;
  for (const s of strings) {
    let at = cell;
    for (const ch of s) {
      out.writeUInt32LE(ch.codePointAt(0) as number, at);
      at += 4;
    }
    cell += width * 4;
  }
  return out;
}

/** The whole NPY file of a small array, as one Buffer. @internal */
function encodeNpy(array: NamedArray): Buffer {
  if (array.dtype === 'string') {
    const strings = array.strings as string[];
    const width = unicodeWidth(strings);
    return Buffer.concat([npyHeader(`<U${width}`, array.shape), encodeUnicode(strings, width)]);
  }
  const data = array.data as ArrayData;
  const body = Buffer.from(data.buffer, data.byteOffset, data.byteLength);
  return Buffer.concat([npyHeader(NPY_DESCR[array.dtype], array.shape), body]);
}

function attributeAsArray(attribute: Attribute): NamedArray {
  if (attribute.dtype === 'string') return { name: attribute.name, dtype: 'string', shape: [], strings: [attribute.value], units: '' };
  if (attribute.dtype === 'int64') return { name: attribute.name, dtype: 'int64', shape: [], data: BigInt64Array.of(BigInt(attribute.value)), units: '' };
  if (attribute.dtype === 'int32') return { name: attribute.name, dtype: 'int32', shape: [], data: Int32Array.of(attribute.value), units: '' };
  return { name: attribute.name, dtype: 'float64', shape: [], data: Float64Array.of(attribute.value), units: '' };
}

// ---------------------------------------------------------------------------------------------
// The sink.

function checkLevel(fn: string, what: string, level: unknown): number {
  if (level === undefined) return 0;
  if (!(Number.isInteger(level) && (level as number) >= 0 && (level as number) <= 9)) {
    throw new RangeError(`${fn}(): ${what} must be an integer 0-9, got ${String(level)}`);
  }
  return level as number;
}

type SinkState = 'open' | 'committing' | 'committed' | 'aborted';

/** yazl, loaded when the first .npz is opened: a .npy or HDF5 run does not load it (start-up). */
const requireHere = createRequire(import.meta.url);
let yazlModule: typeof Yazl | undefined;
const loadYazl = (): typeof Yazl => (yazlModule ??= requireHere('yazl') as typeof Yazl);

/** Bytes handed to the zip writer at a time (bounds the memory held in its pipeline). */
const NPZ_PIECE_BYTES = 1 << 20;

class NpzSink implements DatasetSink {
  private readonly zip = new (loadYazl().ZipFile)();
  private readonly names = new Set<string>();
  private state: SinkState = 'open';
  private failure: Error | undefined;
  /** Copies the zip output into the file, in order, with backpressure; settles when it ends. */
  private readonly pumped: Promise<void>;
  private tensor: { rows: RowCounter; stream: Readable } | undefined;
  /** Resolves the writeRows waiting for the consumer to ask for more. */
  private wakeWriter: (() => void) | undefined;

  constructor(
    private readonly file: AtomicFile,
    private readonly level: number,
    private readonly forceZip64: boolean,
  ) {
    const fail = (err: Error): void => {
      this.failure ??= err;
      this.wakeWriter?.();
    };
    this.zip.on('error', fail);
    const output = this.zip.outputStream as Readable;
    this.pumped = (async () => {
      for await (const chunk of output) await file.write(chunk as Buffer);
    })().catch(fail);
  }

  private entryOptions(level: number): Partial<Yazl.Options> {
    const options: Partial<Yazl.Options> = {
      mtime: new Date(...NPZ_ENTRY_TIME),
      mode: 0o100644,
      compress: level > 0,
      forceZip64Format: this.forceZip64,
      forceDosTimestamp: true,
    };
    if (level > 0) options.compressionLevel = level;
    return options;
  }

  private checkOpen(fn: string): void {
    if (this.failure) throw this.failure;
    if (this.state !== 'open') throw new RangeError(`${fn}(): the sink is ${this.state}, no more writes`);
  }

  private claim(fn: string, name: string): void {
    if (this.names.has(name)) throw new RangeError(`${fn}(): name ${JSON.stringify(name)} is already in this file`);
    this.names.add(name);
  }

  async beginTensor(header: StreamedArrayHeader): Promise<void> {
    const fn = 'NpzSink.beginTensor';
    this.checkOpen(fn);
    if (this.tensor) throw new RangeError(`${fn}(): the tensor was already begun (${this.tensor.rows.header.name})`);
    checkTensorHeader(fn, header);
    this.claim(fn, header.name);
    const rows = new RowCounter(header);
    const npy = npyHeader(NPY_DESCR[header.dtype], header.shape);
    const size = npy.length + elementCount(header.shape) * ITEM_BYTES[header.dtype];
    const stream = new Readable({
      read: () => {
        const wake = this.wakeWriter;
        this.wakeWriter = undefined;
        wake?.();
      },
    });
    stream.push(npy);
    if (rows.totalRows === 0 || rows.rowValues === 0) stream.push(null);
    this.tensor = { rows, stream };
    const options = { ...this.entryOptions(checkLevel(fn, 'deflate', header.deflate ?? this.level)), size };
    this.zip.addReadStreamLazy(`${header.name}.npy`, options, (cb) => cb(null, stream));
  }

  async writeRows(data: Float32Array | Float64Array): Promise<void> {
    const fn = 'NpzSink.writeRows';
    this.checkOpen(fn);
    const tensor = this.tensor;
    if (!tensor) throw new RangeError(`${fn}(): call beginTensor() first`);
    const rows = tensor.rows.accept(fn, data);
    if (rows === 0) return;
    // Pushed in pieces of NPZ_PIECE_BYTES, each copied (the caller reuses its block as soon as this
    // resolves, while bytes may still sit in the zip pipeline) and each waiting for the consumer
    // when the stream's buffer is full: about one piece is in flight, not one whole block.
    const bytes = new Uint8Array(data.buffer, data.byteOffset, data.byteLength);
    tensor.rows.rowsWritten += rows;
    for (let at = 0; at < bytes.length; at += NPZ_PIECE_BYTES) {
      const piece = Buffer.from(bytes.subarray(at, Math.min(bytes.length, at + NPZ_PIECE_BYTES)));
      const drained = new Promise<void>((resolve) => {
        this.wakeWriter = resolve;
      });
      const more = tensor.stream.push(piece);
      const last = at + NPZ_PIECE_BYTES >= bytes.length;
      if (last && tensor.rows.complete) tensor.stream.push(null); // no read() follows the end: do not wait
      if (more || (last && tensor.rows.complete)) this.wakeWriter = undefined;
      else await drained;
      if (this.failure) throw this.failure;
    }
    if (this.failure) throw this.failure;
  }

  async addArray(array: NamedArray): Promise<void> {
    const fn = 'NpzSink.addArray';
    this.checkOpen(fn);
    checkNamedArray(fn, array);
    this.claim(fn, array.name);
    this.zip.addBuffer(encodeNpy(array), `${array.name}.npy`, this.entryOptions(this.level));
  }

  async setAttribute(attribute: Attribute): Promise<void> {
    const fn = 'NpzSink.setAttribute';
    this.checkOpen(fn);
    checkAttribute(fn, attribute);
    this.claim(fn, attribute.name);
    this.zip.addBuffer(encodeNpy(attributeAsArray(attribute)), `${attribute.name}.npy`, this.entryOptions(this.level));
  }

  async commit(): Promise<number> {
    const fn = 'NpzSink.commit';
    this.checkOpen(fn);
    if (this.tensor && !this.tensor.rows.complete) {
      throw new RangeError(`${fn}(): the tensor has ${this.tensor.rows.rowsWritten} of ${this.tensor.rows.totalRows} subframes`);
    }
    this.state = 'committing';
    try {
      this.zip.end({ forceZip64Format: this.forceZip64, comment: '' });
      await this.pumped;
      if (this.failure) throw this.failure;
      await this.file.commit();
      this.state = 'committed';
      return this.file.bytesWritten;
    } catch (err) {
      this.state = 'open';
      await this.abort();
      throw err;
    }
  }

  async abort(): Promise<void> {
    if (this.state === 'committed' || this.state === 'aborted') return;
    this.state = 'aborted';
    this.tensor?.stream.destroy();
    this.wakeWriter?.();
    (this.zip.outputStream as Readable).destroy();
    await this.pumped;
    await this.file.abort();
  }
}

/**
 * Open an NPZ file for writing. Nothing appears under `path` before commit(); a failure or
 * abort() removes the temporary file and leaves an earlier file of that name untouched.
 * @example
 * const sink = await openNpzSink('run.npz');
 * await sink.beginTensor({ name: 'H', dtype: 'complex64', shape: [2, 1], units: '1' });
 * await sink.writeRows(new Float32Array([1, 0, 0, 1])); // subframes 0 and 1
 * await sink.setAttribute({ name: 'seed', dtype: 'int64', value: 7 });
 * await sink.commit(); // 496 (bytes); numpy.load('run.npz')['H'] -> array([[1.+0.j], [0.+1.j]], dtype=complex64)
 */
export async function openNpzSink(path: string, options: NpzSinkOptions = {}): Promise<DatasetSink> {
  const fn = 'openNpzSink';
  if (typeof path !== 'string' || path === '') throw new TypeError(`${fn}(): path must be a non-empty string, got ${JSON.stringify(path)}`);
  checkLittleEndianHost(fn);
  const level = checkLevel(fn, 'options.deflate', options.deflate);
  return new NpzSink(await AtomicFile.create(path), level, options.forceZip64 === true);
}
