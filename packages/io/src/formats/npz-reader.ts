/** Reading a .npz: the zip central directory (ZIP64 aware), stored and deflated entries. */
import { type FileHandle } from 'node:fs/promises';
import { createReadStream } from 'node:fs';
import { createInflateRaw } from 'node:zlib';
import { dtypeOfDescr, parseNpyHeader, DTYPE_BYTES } from './npy.js';
import { elementCount } from './npz.js';
import type { ArrayData, Attribute, DType, NamedArray } from './sink.js';
import { checkRows, readAt, safeNumber, typedArrayOf, type DatasetReader, type StoredArray } from './read-support.js';


interface ZipEntry {
  name: string;
  method: number;
  compressedSize: number;
  size: number;
  localHeaderOffset: number;
  /** Offset of the entry's data in the file (after the local header). */
  dataOffset: number;
}

const ZIP_MAGIC = 0x04034b50;

interface NpzArray extends StoredArray {
  entry: ZipEntry;
  /** Offset of the array data inside the (uncompressed) entry. */
  npyDataOffset: number;
  /** Width of one '<U' cell in code points (strings only). */
  unicodeWidth: number;
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
        if (uncompressed === 0xffffffff) {
          uncompressed = u64(cd, f);
          f += 8;
        }
        if (compressedSize === 0xffffffff) {
          compressedSize = u64(cd, f);
          f += 8;
        }
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

export class NpzReader implements DatasetReader {
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
