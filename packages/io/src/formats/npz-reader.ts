/**
 * Reading a .npz: the zip central directory (ZIP64 aware), stored and deflated entries.
 *
 * The file is untrusted: every size and offset of the directory is checked against the file's
 * length and against each other before anything is allocated (entries lie inside the file,
 * before the directory, without overlapping; a stored entry's sizes agree; a deflated one
 * claims at most READ_LIMITS.inflateRatio times its compressed size); a name given twice is
 * refused (numpy and pathweave could read different ones); the local header must name the same
 * entry as the directory. An entry's bytes are read through one cursor per entry, so rows read in
 * order inflate the entry once per pass (a later row never restarts from the entry's start), and
 * a pass that reaches the entry's end checks its CRC-32 (APPNOTE.TXT 4.4.7).
 */
import { Readable } from 'node:stream';
import { createInflateRaw, crc32 } from 'node:zlib';
import type { FileHandle } from 'node:fs/promises';
import { DTYPE_BYTES } from './npy.js';
import { npyHeaderOf } from './npy-reader.js';
import { elementCount } from './npz.js';
import type { ArrayData, Attribute, DType, NamedArray } from './sink.js';
import { arrayBytes, checkRows, InputFileError, READ_LIMITS, readAt, safeNumber, typedArrayOf, type DatasetReader, type StoredArray } from './read-support.js';

interface ZipEntry {
  name: string;
  method: number;
  compressedSize: number;
  size: number;
  crc32: number;
  localHeaderOffset: number;
  /** Offset of the entry's data in the file (after the local header). */
  dataOffset: number;
}

const ZIP_MAGIC = 0x04034b50;
/** Compressed bytes read at a time while inflating. */
const INFLATE_READ = 1 << 20;

interface NpzArray extends StoredArray {
  entry: ZipEntry;
  /** Offset of the array data inside the (uncompressed) entry. */
  npyDataOffset: number;
  /** Width of one '<U' cell in code points (strings only). */
  unicodeWidth: number;
}

/** The central directory of a zip file (APPNOTE 4.3.12-16), ZIP64 aware, every field checked. */
async function readCentralDirectory(path: string, handle: FileHandle, size: number): Promise<ZipEntry[]> {
  const lie = (what: string): never => {
    throw new InputFileError(path, `the zip directory lies: ${what}`);
  };
  const tailLength = Math.min(size, 22 + 0xffff + 20);
  const tail = await readAt(handle, size - tailLength, tailLength, path);
  let eocd = -1;
  for (let i = tailLength - 22; i >= 0; i--) {
    if (tail.readUInt32LE(i) === 0x06054b50) {
      eocd = i;
      break;
    }
  }
  if (eocd < 0) throw new InputFileError(path, 'no end of central directory record: not a whole zip (.npz) file');
  const eocdOffset = size - tailLength + eocd;
  const u64 = (b: Buffer, at: number, what: string): number => {
    if (at + 8 > b.length) lie(`${what} runs past its record`);
    const v = b.readBigUInt64LE(at);
    if (v > BigInt(Number.MAX_SAFE_INTEGER)) lie(`${what} = ${v} is beyond 2^53`);
    return Number(v);
  };
  let count = tail.readUInt16LE(eocd + 10);
  let cdSize = tail.readUInt32LE(eocd + 12);
  let cdOffset = tail.readUInt32LE(eocd + 16);
  let cdEnd = eocdOffset;
  if (eocd >= 20 && tail.readUInt32LE(eocd - 20) === 0x07064b50) {
    // ZIP64 locator (4.3.15) -> ZIP64 end of central directory record (4.3.14).
    const recordOffset = u64(tail, eocd - 20 + 8, 'the ZIP64 record offset');
    if (recordOffset + 56 > eocdOffset - 20) lie(`the ZIP64 record at ${recordOffset} is not before its locator`);
    const record = await readAt(handle, recordOffset, 56, path);
    if (record.readUInt32LE(0) !== 0x06064b50) throw new InputFileError(path, 'a bad ZIP64 end of central directory record');
    count = u64(record, 32, 'the entry count');
    cdSize = u64(record, 40, 'the directory size');
    cdOffset = u64(record, 48, 'the directory offset');
    cdEnd = recordOffset;
  }
  if (count > READ_LIMITS.entries) throw new InputFileError(path, `${count} zip entries, more than the ${READ_LIMITS.entries} allowed`);
  if (cdOffset + cdSize > cdEnd) lie(`the directory [${cdOffset}, ${cdOffset + cdSize}) runs past its end record at ${cdEnd}`);
  if (count * 46 > cdSize) lie(`${count} entries cannot fit in a directory of ${cdSize} bytes`);
  const cd = await readAt(handle, cdOffset, cdSize, path);
  const entries: ZipEntry[] = [];
  const names = new Set<string>();
  let at = 0;
  for (let k = 0; k < count; k++) {
    if (at + 46 > cd.length || cd.readUInt32LE(at) !== 0x02014b50) throw new InputFileError(path, `zip central directory entry ${k} is damaged`);
    const flags = cd.readUInt16LE(at + 8);
    const method = cd.readUInt16LE(at + 10);
    const crc = cd.readUInt32LE(at + 16);
    let compressedSize = cd.readUInt32LE(at + 20);
    let uncompressed = cd.readUInt32LE(at + 24);
    const nameLength = cd.readUInt16LE(at + 28);
    const extraLength = cd.readUInt16LE(at + 30);
    const commentLength = cd.readUInt16LE(at + 32);
    let localHeaderOffset = cd.readUInt32LE(at + 42);
    const next = at + 46 + nameLength + extraLength + commentLength;
    if (next > cd.length) lie(`entry ${k} runs past the directory`);
    const name = cd.toString('utf8', at + 46, at + 46 + nameLength);
    if (names.has(name))
      throw new InputFileError(path, `zip entry ${JSON.stringify(name)} appears twice (numpy would read the last, a zip tool the first): refused`);
    names.add(name);
    if ((flags & 1) !== 0) throw new InputFileError(path, `zip entry ${JSON.stringify(name)} is encrypted`);
    // ZIP64 extended information (4.5.3): present fields in the order size, compressed, offset.
    for (let e = at + 46 + nameLength; e + 4 <= at + 46 + nameLength + extraLength;) {
      const id = cd.readUInt16LE(e);
      const len = cd.readUInt16LE(e + 2);
      if (e + 4 + len > at + 46 + nameLength + extraLength) lie(`an extra field of ${JSON.stringify(name)} runs past its entry`);
      if (id === 0x0001) {
        const field = cd.subarray(e + 4, e + 4 + len);
        let f = 0;
        if (uncompressed === 0xffffffff) {
          uncompressed = u64(field, f, 'a ZIP64 size');
          f += 8;
        }
        if (compressedSize === 0xffffffff) {
          compressedSize = u64(field, f, 'a ZIP64 size');
          f += 8;
        }
        if (localHeaderOffset === 0xffffffff) localHeaderOffset = u64(field, f, 'a ZIP64 offset');
      }
      e += 4 + len;
    }
    if (localHeaderOffset + 30 > cdOffset) lie(`${JSON.stringify(name)} starts at ${localHeaderOffset}, past the data area, which ends at ${cdOffset}`);
    const local = await readAt(handle, localHeaderOffset, 30, path);
    if (local.readUInt32LE(0) !== ZIP_MAGIC) throw new InputFileError(path, `the local header of ${JSON.stringify(name)} is damaged`);
    const localNameLength = local.readUInt16LE(26);
    const dataOffset = localHeaderOffset + 30 + localNameLength + local.readUInt16LE(28);
    if (
      localNameLength !== nameLength ||
      !(await readAt(handle, localHeaderOffset + 30, nameLength, path)).equals(cd.subarray(at + 46, at + 46 + nameLength))
    ) {
      lie(`the local header at ${localHeaderOffset} does not name ${JSON.stringify(name)}`);
    }
    if (dataOffset + compressedSize > cdOffset)
      lie(`${JSON.stringify(name)} claims bytes [${dataOffset}, ${dataOffset + compressedSize}), past the data area, which ends at ${cdOffset}`);
    if (method === 0 && compressedSize !== uncompressed) lie(`stored entry ${JSON.stringify(name)} has sizes ${compressedSize} and ${uncompressed}`);
    if (method === 8 && uncompressed > compressedSize * READ_LIMITS.inflateRatio + 1024)
      lie(`${JSON.stringify(name)} claims to inflate ${compressedSize} bytes to ${uncompressed}, beyond deflate's ratio`);
    entries.push({ name, method, compressedSize, size: uncompressed, crc32: crc, localHeaderOffset, dataOffset });
    at = next;
  }
  // No two entries share bytes (a directory pointing twice at one payload lies about one of them).
  const sorted = [...entries].sort((a, b) => a.localHeaderOffset - b.localHeaderOffset);
  for (let i = 1; i < sorted.length; i++) {
    const a = sorted[i - 1]!,
      b = sorted[i]!;
    if (a.dataOffset + a.compressedSize > b.localHeaderOffset) lie(`entries ${JSON.stringify(a.name)} and ${JSON.stringify(b.name)} overlap`);
  }
  return entries;
}

/**
 * Sequential access to one entry's uncompressed bytes: reading on from where the last read
 * ended continues the same inflation; reading backwards starts a new pass. Each pass keeps a
 * running CRC-32, checked against the directory when the pass reaches the entry's end.
 */
class EntryCursor {
  private position = 0;
  private crc = 0;

  /** Where the current pass stands (bytes of the entry read). */
  get at(): number {
    return this.position;
  }
  private pieces: AsyncIterator<Buffer> | undefined;
  private stop: (() => void) | undefined;
  private held: Buffer = Buffer.alloc(0);
  /** Bytes inflated by every pass of this entry (a check that rows in order inflate once). */
  inflated = 0;

  constructor(
    private readonly path: string,
    private readonly handle: FileHandle,
    readonly entry: ZipEntry,
  ) {}

  /** Bytes [from, to) of the uncompressed entry. */
  async read(from: number, to: number): Promise<Buffer> {
    const e = this.entry;
    if (!(0 <= from && from <= to && to <= e.size))
      throw new InputFileError(this.path, `entry ${e.name}: bytes [${from}, ${to}) lie outside its ${e.size} bytes`);
    if (e.method === 0) {
      const bytes = await readAt(this.handle, e.dataOffset + from, to - from, this.path);
      if (from === this.position) this.advance(bytes);
      else if (from === 0) {
        this.restart();
        this.advance(bytes);
      }
      return bytes;
    }
    if (from < this.position) this.restart();
    while (this.position < from) await this.take(from - this.position);
    const out = Buffer.allocUnsafe(to - from);
    let filled = 0;
    while (filled < out.length) {
      const piece = await this.take(out.length - filled);
      piece.copy(out, filled);
      filled += piece.length;
    }
    return out;
  }

  async close(): Promise<void> {
    this.stop?.();
    this.stop = undefined;
    this.pieces = undefined;
  }

  private restart(): void {
    this.stop?.();
    this.stop = undefined;
    this.pieces = undefined;
    this.held = Buffer.alloc(0);
    this.position = 0;
    this.crc = 0;
  }

  /** Count bytes of this pass into the CRC; at the entry's end, check it. */
  private advance(bytes: Buffer): void {
    this.crc = crc32(bytes, this.crc);
    this.position += bytes.length;
    if (this.position === this.entry.size && this.crc !== this.entry.crc32) {
      const hex = (v: number): string => `0x${(v >>> 0).toString(16).padStart(8, '0')}`;
      throw new InputFileError(
        this.path,
        `entry ${this.entry.name}: CRC-32 ${hex(this.crc)}, the zip directory says ${hex(this.entry.crc32)}: the entry is corrupt`,
      );
    }
  }

  /** Up to `max` further bytes of a deflated entry (at least one). */
  private async take(max: number): Promise<Buffer> {
    if (this.held.length === 0) {
      if (this.pieces === undefined) this.start();
      let next: IteratorResult<Buffer>;
      try {
        next = await this.pieces!.next();
      } catch (err) {
        throw new InputFileError(this.path, `entry ${this.entry.name} does not inflate: ${(err as Error).message}`, { cause: err });
      }
      if (next.done)
        throw new InputFileError(this.path, `entry ${this.entry.name} inflates to ${this.position} bytes, the zip directory says ${this.entry.size}`);
      this.held = next.value;
      this.inflated += this.held.length;
      if (this.position + this.held.length > this.entry.size)
        throw new InputFileError(this.path, `entry ${this.entry.name} inflates to more than the ${this.entry.size} bytes the zip directory says`);
    }
    const piece = this.held.subarray(0, Math.min(max, this.held.length));
    this.held = this.held.subarray(piece.length);
    this.advance(piece);
    return piece;
  }

  private start(): void {
    const { handle, path } = this;
    const { dataOffset, compressedSize } = this.entry;
    let stopped = false;
    // Compressed bytes through positional reads on the open handle (never reopened by name).
    const source = Readable.from(
      (async function* () {
        for (let at = 0; at < compressedSize && !stopped; at += INFLATE_READ)
          yield await readAt(handle, dataOffset + at, Math.min(INFLATE_READ, compressedSize - at), path);
      })(),
    );
    const inflate = createInflateRaw();
    source.on('error', (err) => inflate.destroy(err));
    source.pipe(inflate);
    this.pieces = (inflate as AsyncIterable<Buffer>)[Symbol.asyncIterator]();
    this.stop = () => {
      stopped = true;
      source.destroy();
      inflate.destroy();
    };
  }
}

/**
 * A .npz read through the DatasetReader interface.
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.npz', format: 'npz', range: [0, 4] }); // H [4, 64, 4, 32]
 * const reader = await openDatasetReader('run.npz');
 * [reader instanceof NpzReader, reader.format] // [true, 'npz']
 * await reader.close();
 */
export class NpzReader implements DatasetReader {
  readonly format = 'npz' as const;
  private readonly cursors = new Map<string, EntryCursor>();

  private constructor(
    readonly path: string,
    private readonly handle: FileHandle,
    readonly arrays: NpzArray[],
    readonly attributes: Attribute[],
  ) {}

  /** Open `path` (its handle already open and checked to be a regular file). */
  static async open(path: string, handle: FileHandle): Promise<NpzReader> {
    const { size } = await handle.stat();
    const entries = await readCentralDirectory(path, handle, size);
    const reader = new NpzReader(path, handle, [], []);
    const zeroD: NpzArray[] = [];
    for (const entry of entries) {
      if (!entry.name.endsWith('.npy')) continue;
      if (entry.method !== 0 && entry.method !== 8)
        throw new InputFileError(path, `entry ${entry.name} uses zip method ${entry.method}; only 0 (stored) and 8 (deflated) are read`);
      const what = `entry ${entry.name}`;
      // The header's own length field first, then exactly the header (the pass goes on from there).
      const cursor = reader.cursor(entry);
      const start = await cursor.read(0, Math.min(entry.size, 12));
      const length = start.length < 10 ? 0 : start[6] === 1 ? start.readUInt16LE(8) : start.length >= 12 ? start.readUInt32LE(8) : 0;
      const prefix = start[6] === 1 ? 10 : 12;
      if (length > READ_LIMITS.npyHeaderBytes)
        throw new InputFileError(path, `${what}: an NPY header of ${length} bytes, more than the ${READ_LIMITS.npyHeaderBytes} allowed`);
      const head = Buffer.concat([start, await cursor.read(start.length, Math.max(start.length, Math.min(entry.size, prefix + length)))]);
      const info = npyHeaderOf(path, what, head);
      const dataBytes = arrayBytes(path, what, info.shape, info.dtype === 'string' ? info.unicodeWidth * 4 : DTYPE_BYTES[info.dtype]);
      if (info.dataOffset + dataBytes !== entry.size)
        throw new InputFileError(
          path,
          `${what} is ${entry.size} bytes, its NPY header [${info.shape.join(', ')}] ${info.descr} needs ${info.dataOffset + dataBytes}`,
        );
      const array: NpzArray = {
        name: entry.name.slice(0, -4),
        dtype: info.dtype,
        shape: info.shape,
        units: undefined,
        entry,
        npyDataOffset: info.dataOffset,
        unicodeWidth: info.unicodeWidth,
      };
      (array.shape.length === 0 ? zeroD : reader.arrays).push(array);
    }
    for (const a of zeroD) {
      const value = await reader.readWhole(a);
      if (a.dtype === 'string') reader.attributes.push({ name: a.name, dtype: 'string', value: (value.strings as string[])[0] as string });
      else if (a.dtype === 'int64')
        reader.attributes.push({ name: a.name, dtype: 'int64', value: safeNumber(path, a.name, (value.data as BigInt64Array)[0] as bigint) });
      else if (a.dtype === 'int32' || a.dtype === 'float64')
        reader.attributes.push({ name: a.name, dtype: a.dtype, value: (value.data as Int32Array | Float64Array)[0] as number });
      else reader.arrays.push(a); // other 0-d arrays are not attributes the sink writes
    }
    return reader;
  }

  /** @internal Bytes inflated so far over all entries and passes. */
  get inflatedBytes(): number {
    let n = 0;
    for (const c of this.cursors.values()) n += c.inflated;
    return n;
  }

  private cursor(entry: ZipEntry): EntryCursor {
    let c = this.cursors.get(entry.name);
    if (c === undefined) this.cursors.set(entry.name, (c = new EntryCursor(this.path, this.handle, entry)));
    return c;
  }

  private find(fn: string, name: string): NpzArray {
    const array = this.arrays.find((a) => a.name === name);
    if (!array) throw new RangeError(`${fn}(): no array ${JSON.stringify(name)} in ${this.path}; it has ${this.arrays.map((a) => a.name).join(', ')}`);
    return array;
  }

  private async readWhole(array: NpzArray): Promise<NamedArray> {
    const count = elementCount(array.shape);
    const bytesNeeded = array.entry.size - array.npyDataOffset;
    if (bytesNeeded > READ_LIMITS.sideArrayBytes)
      throw new InputFileError(this.path, `array ${array.name} is ${bytesNeeded} bytes, more than the ${READ_LIMITS.sideArrayBytes} read whole`);
    // Read to the entry's end (the whole entry), so the pass checks the CRC-32.
    const bytes = (await this.cursor(array.entry).read(0, array.entry.size)).subarray(array.npyDataOffset);
    if (array.dtype === 'string') {
      const strings: string[] = [];
      for (let cell = 0; cell < count; cell++) {
        let s = '';
        for (let c = 0; c < array.unicodeWidth; c++) {
          const cp = bytes.readUInt32LE((cell * array.unicodeWidth + c) * 4);
          if (cp === 0) break;
          if (cp > 0x10ffff) throw new InputFileError(this.path, `array ${array.name}: ${cp} is not a Unicode code point`);
          s += String.fromCodePoint(cp);
        }
        strings.push(s);
      }
      return { name: array.name, dtype: 'string', shape: array.shape, strings, units: '' };
    }
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
    const cursor = this.cursor(array.entry);
    // The NPY header is part of the pass: a pass from row 0 starts at the entry's first byte.
    if (start === 0 && cursor.at !== from) await cursor.read(0, from);
    const bytes = await cursor.read(from, from + (end - start) * rowBytes);
    return typedArrayOf(dtype, bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer);
  }

  async close(): Promise<void> {
    for (const c of this.cursors.values()) await c.close();
    await this.handle.close();
  }
}
