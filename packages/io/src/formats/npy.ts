/**
 * NPY files (the NPY format specification, numpy.lib.format): magic "\x93NUMPY", version,
 * header length (uint16 for 1.0, uint32 for 2.0 when the header exceeds 65535 bytes), then a
 * Python dict literal {'descr', 'fortran_order', 'shape'} padded with spaces and a newline so
 * the data start at a multiple of 64 bytes. Data are little-endian, C order; complex values
 * interleaved re/im, the same bytes as numpy's complex64/complex128.
 */
import { open } from 'node:fs/promises';
import { AtomicFile } from './atomic.js';
import type { ArrayData, Attribute, DatasetSink, DType, NamedArray, StreamedArrayHeader } from './sink.js';

/**
 * numpy descr of each dtype.
 * @example NPY_DESCR.complex128 // "<c16"
 */
export const NPY_DESCR: Record<Exclude<DType, 'string'>, string> = {
  complex64: '<c8',
  complex128: '<c16',
  float32: '<f4',
  float64: '<f8',
  int32: '<i4',
  uint8: '|u1',
  int64: '<i8',
};

/**
 * Bytes per element (per complex value for complex dtypes).
 * @example DTYPE_BYTES.complex64 // 8
 */
export const DTYPE_BYTES: Record<Exclude<DType, 'string'>, number> = { complex64: 8, complex128: 16, float32: 4, float64: 8, int32: 4, uint8: 1, int64: 8 };

/**
 * The header bytes of an NPY file (magic to the final newline). Version 1.0 unless the header
 * exceeds 65535 bytes (or `forceVersion2`, for tests), then 2.0 with a 4-byte length.
 * @example npyHeader('<f8', [3]).length % 64 // 0
 */
export function npyHeader(descr: string, shape: readonly number[], fortranOrder = false, forceVersion2 = false): Uint8Array {
  // Refused rather than escaped: nothing else is a numpy descr, and a quote would end the literal.
  if (typeof descr !== 'string' || !/^[<>|=][a-zA-Z][0-9]*$/.test(descr))
    throw new RangeError(`npyHeader(): descr must look like "<c8" or "|u1", got ${JSON.stringify(descr)}`);
  if (!Array.isArray(shape) || !shape.every((d) => Number.isSafeInteger(d) && d >= 0))
    throw new RangeError(`npyHeader(): shape must be integers >= 0, got ${JSON.stringify(shape)}`);
  const shapeText = shape.length === 1 ? `(${shape[0]},)` : `(${shape.join(', ')})`;
  const dict = `{'descr': '${descr}', 'fortran_order': ${fortranOrder ? 'True' : 'False'}, 'shape': ${shapeText}, }`;
  let major = 1;
  let prefix = 10;
  let total = Math.ceil((prefix + dict.length + 1) / 64) * 64;
  if (total - prefix > 65535 || forceVersion2) {
    major = 2;
    prefix = 12;
    total = Math.ceil((prefix + dict.length + 1) / 64) * 64;
  }
  const headerLength = total - prefix;
  const out = new Uint8Array(total);
  out.set([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, major, 0]);
  const view = new DataView(out.buffer);
  if (major === 1) view.setUint16(8, headerLength, true);
  else view.setUint32(8, headerLength, true);
  const text = dict.padEnd(headerLength - 1, ' ') + '\n';
  for (let i = 0; i < text.length; i++) out[prefix + i] = text.charCodeAt(i);
  return out;
}

/**
 * A parsed NPY header.
 * @example parseNpyHeader(npyHeader('<c8', [2, 3])) satisfies NpyHeaderInfo // { version: [1, 0], descr: '<c8', fortranOrder: false, shape: [2, 3], dataOffset: 128 }
 */
export interface NpyHeaderInfo {
  version: [number, number];
  descr: string;
  fortranOrder: boolean;
  shape: number[];
  /** Byte offset of the data. */
  dataOffset: number;
}

/**
 * Parse an NPY header from the first bytes of a file.
 * @example parseNpyHeader(npyHeader('<f8', [70000], false, true)).version // [2, 0]
 */
export function parseNpyHeader(bytes: Uint8Array): NpyHeaderInfo {
  const magic = [0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59];
  if (bytes.length < 10 || magic.some((b, i) => bytes[i] !== b)) throw new RangeError('parseNpyHeader(): not an NPY file (bad magic)');
  const major = bytes[6]!;
  const minor = bytes[7]!;
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const prefix = major === 1 ? 10 : 12;
  if (major !== 1 && major !== 2 && major !== 3) throw new RangeError(`parseNpyHeader(): unsupported NPY version ${major}.${minor}`);
  if (bytes.length < prefix) throw new RangeError(`parseNpyHeader(): header needs ${prefix} bytes, got ${bytes.length}`);
  const length = major === 1 ? view.getUint16(8, true) : view.getUint32(8, true);
  if (bytes.length < prefix + length) throw new RangeError(`parseNpyHeader(): header needs ${prefix + length} bytes, got ${bytes.length}`);
  const text = new TextDecoder('latin1').decode(bytes.subarray(prefix, prefix + length));
  const dict = parseHeaderDict(text);
  return { version: [major, minor], descr: dict.descr, fortranOrder: dict.fortranOrder, shape: dict.shape, dataOffset: prefix + length };
}

/**
 * The header's Python dict literal, read strictly (the NPY format specification): exactly the
 * keys descr, fortran_order and shape, each once (numpy's reader would take the last of a repeated
 * key; refusing one keeps numpy and pathweave from reading different arrays), a string descr, True
 * or False, and a tuple of decimal integers >= 0.
 */
function parseHeaderDict(text: string): { descr: string; fortranOrder: boolean; shape: number[] } {
  const fail = (what: string): never => {
    throw new RangeError(`parseNpyHeader(): ${what} in header ${JSON.stringify(text.length > 200 ? `${text.slice(0, 200)}...` : text)}`);
  };
  let at = 0;
  const space = (): void => {
    while (at < text.length && (text[at] === ' ' || text[at] === '\t' || text[at] === '\n')) at++;
  };
  const expect = (c: string): void => {
    space();
    if (text[at] !== c) fail(`expected ${JSON.stringify(c)} at ${at}`);
    at++;
  };
  const quoted = (): string => {
    space();
    const q = text[at];
    if (q !== "'" && q !== '"') fail(`expected a quoted string at ${at}`);
    const end = text.indexOf(q!, at + 1);
    if (end < 0) fail('an unterminated string');
    const v = text.slice(at + 1, end);
    at = end + 1;
    return v;
  };
  const seen = new Map<string, unknown>();
  expect('{');
  for (;;) {
    space();
    if (text[at] === '}') break;
    const key = quoted();
    if (seen.has(key)) fail(`key ${JSON.stringify(key)} given twice`);
    expect(':');
    space();
    let value: unknown;
    if (key === 'descr') value = quoted();
    else if (key === 'fortran_order') {
      const m = /^(True|False)/.exec(text.slice(at));
      if (m === null) fail('fortran_order must be True or False');
      value = m![1] === 'True';
      at += m![1]!.length;
    } else if (key === 'shape') {
      expect('(');
      const dims: number[] = [];
      for (;;) {
        space();
        if (text[at] === ')') break;
        const m = /^[0-9]+/.exec(text.slice(at));
        if (m === null) fail(`shape entry ${dims.length} is not a decimal integer >= 0`);
        const d = Number(m![0]);
        if (!Number.isSafeInteger(d)) fail(`shape entry ${dims.length} = ${m![0]} is beyond 2^53`);
        dims.push(d);
        at += m![0].length;
        space();
        if (text[at] === ',') at++;
        else if (text[at] !== ')') fail(`shape entry ${dims.length - 1} is not followed by "," or ")"`);
      }
      at++;
      if (dims.length === 1 && !/,\s*\)$/.test(text.slice(0, at))) fail('a 1-d shape must be written (n,)');
      value = dims;
    } else fail(`unknown key ${JSON.stringify(key)}; an NPY header holds descr, fortran_order and shape`);
    seen.set(key, value);
    space();
    if (text[at] === ',') at++;
    else if (text[at] !== '}') fail(`expected "," or "}" at ${at}`);
  }
  at++;
  if (!/^[ \n]*$/.test(text.slice(at))) fail('text after the closing brace');
  for (const k of ['descr', 'fortran_order', 'shape']) if (!seen.has(k)) fail(`no ${k}`);
  return { descr: seen.get('descr') as string, fortranOrder: seen.get('fortran_order') as boolean, shape: seen.get('shape') as number[] };
}

/**
 * The dtype of a numpy descr we write.
 * @example dtypeOfDescr('|u1') // "uint8"
 */
export function dtypeOfDescr(descr: string): Exclude<DType, 'string'> {
  for (const [k, v] of Object.entries(NPY_DESCR)) if (v === descr || v.replace('<', '|') === descr) return k as Exclude<DType, 'string'>;
  throw new RangeError(`dtypeOfDescr(): unsupported descr ${JSON.stringify(descr)}; allowed: ${Object.values(NPY_DESCR).join(', ')}`);
}

/**
 * Byte view of a typed array (no copy).
 * @example bytesOf(Int32Array.of(1)) // Uint8Array [1, 0, 0, 0]: little-endian
 */
export function bytesOf(data: ArrayData): Uint8Array {
  return new Uint8Array(data.buffer, data.byteOffset, data.byteLength);
}

/**
 * Bytes of a whole in-memory NPY file.
 * @example encodeNpy({ dtype: 'float32', shape: [2], data: Float32Array.of(1, 2) }).length // 136: 128 header bytes, 8 data bytes
 */
export function encodeNpy(array: Pick<NamedArray, 'dtype' | 'shape' | 'data'>, options: { forceVersion2?: boolean } = {}): Uint8Array {
  if (array.dtype === 'string' || array.data === undefined) throw new TypeError('encodeNpy(): dtype "string" is not supported here');
  const header = npyHeader(NPY_DESCR[array.dtype], array.shape, false, options.forceVersion2 === true);
  const body = bytesOf(array.data);
  const expected = array.shape.reduce((a, b) => a * b, 1) * DTYPE_BYTES[array.dtype];
  if (body.length !== expected)
    throw new RangeError(`encodeNpy(): shape [${array.shape.join(', ')}] of ${array.dtype} needs ${expected} bytes, got ${body.length}`);
  const out = new Uint8Array(header.length + body.length);
  out.set(header);
  out.set(body, header.length);
  return out;
}

/**
 * An NPY file read back.
 * @example const back: NpyArray = decodeNpy(encodeNpy({ dtype: 'int32', shape: [1, 2], data: Int32Array.of(5, 6) })); // { dtype: 'int32', shape: [1, 2], data: Int32Array [5, 6] }
 */
export interface NpyArray {
  dtype: Exclude<DType, 'string'>;
  shape: number[];
  data: ArrayData;
}

/**
 * Decode NPY bytes (little-endian C-order arrays of the dtypes we write).
 * @example decodeNpy(encodeNpy({ dtype: 'complex64', shape: [1], data: Float32Array.of(0.5, -1) })) // { dtype: 'complex64', shape: [1], data: Float32Array [0.5, -1] }
 */
export function decodeNpy(bytes: Uint8Array): NpyArray {
  const h = parseNpyHeader(bytes);
  if (h.fortranOrder) throw new RangeError('decodeNpy(): Fortran-order arrays are not supported');
  const dtype = dtypeOfDescr(h.descr);
  const n = h.shape.reduce((a, b) => a * b, 1);
  const byteLength = n * DTYPE_BYTES[dtype];
  if (bytes.length - h.dataOffset < byteLength) throw new RangeError(`decodeNpy(): data need ${byteLength} bytes, got ${bytes.length - h.dataOffset}`);
  // Uint8Array.prototype.slice copies (a Node Buffer's own slice would return a view of its pool).
  const copy = Uint8Array.prototype.slice.call(bytes, h.dataOffset, h.dataOffset + byteLength);
  const buf = copy.buffer;
  const data: ArrayData =
    dtype === 'complex64' || dtype === 'float32'
      ? new Float32Array(buf)
      : dtype === 'complex128' || dtype === 'float64'
        ? new Float64Array(buf)
        : dtype === 'int32'
          ? new Int32Array(buf)
          : dtype === 'int64'
            ? new BigInt64Array(buf)
            : new Uint8Array(buf);
  return { dtype, shape: h.shape, data };
}

/**
 * Read a whole .npy file.
 * @example
 * const file = join(mkdtempSync(join(tmpdir(), 'pw-')), 'x.npy');
 * writeFileSync(file, encodeNpy({ dtype: 'float64', shape: [3], data: Float64Array.of(1, 2, 3) }));
 * await readNpy(file) // { dtype: 'float64', shape: [3], data: Float64Array [1, 2, 3] }
 */
export async function readNpy(file: string): Promise<NpyArray> {
  const h = await open(file, 'r');
  try {
    const { size } = await h.stat();
    const bytes = new Uint8Array(size);
    await h.read(bytes, 0, size, 0);
    return decodeNpy(bytes);
  } finally {
    await h.close();
  }
}

/**
 * Read only the header of a .npy file.
 * @example
 * const file = join(mkdtempSync(join(tmpdir(), 'pw-')), 'x.npy');
 * writeFileSync(file, encodeNpy({ dtype: 'float64', shape: [3], data: Float64Array.of(1, 2, 3) }));
 * await readNpyHeader(file) // { version: [1, 0], descr: '<f8', fortranOrder: false, shape: [3], dataOffset: 128, fileBytes: 152 }
 */
export async function readNpyHeader(file: string): Promise<NpyHeaderInfo & { fileBytes: number }> {
  const h = await open(file, 'r');
  try {
    const { size } = await h.stat();
    const head = new Uint8Array(Math.min(size, 1 << 20));
    await h.read(head, 0, head.length, 0);
    return { ...parseNpyHeader(head), fileBytes: size };
  } finally {
    await h.close();
  }
}

/**
 * A DatasetSink writing one .npy: the streamed tensor. NPY holds a single array, so the other
 * named arrays and the attributes are handed to `onSideData` (the caller writes a side file).
 * @example
 * const path = join(mkdtempSync(join(tmpdir(), 'pw-')), 'H.npy');
 * const sink = await NpySink.open(path);
 * await sink.beginTensor({ name: 'H', dtype: 'complex64', shape: [1, 2], units: '1' });
 * await sink.writeRows(Float32Array.of(1, 0, 0, 1));
 * await sink.addArray({ name: 'gains', dtype: 'float64', shape: [1], data: Float64Array.of(1), units: '1' });
 * await sink.commit() // 144
 * sink.sideArrays.map((a) => a.name) // ['gains']: left for a side file
 * (await readNpy(path)).data // Float32Array [1, 0, 0, 1]
 */
export class NpySink implements DatasetSink {
  private header: StreamedArrayHeader | undefined;
  private expectedBytes = 0;
  private written = 0;
  readonly sideArrays: NamedArray[] = [];
  readonly attributes: Attribute[] = [];

  private constructor(private readonly file: AtomicFile) {}

  /** Open a temporary file next to `path`. */
  static async open(path: string): Promise<NpySink> {
    return new NpySink(await AtomicFile.create(path));
  }

  async beginTensor(header: StreamedArrayHeader): Promise<void> {
    if (this.header !== undefined) throw new Error('NpySink.beginTensor(): called twice');
    this.header = header;
    this.expectedBytes = header.shape.reduce((a, b) => a * b, 1) * DTYPE_BYTES[header.dtype];
    await this.file.write(npyHeader(NPY_DESCR[header.dtype], header.shape));
  }

  async writeRows(data: Float32Array | Float64Array): Promise<void> {
    if (this.header === undefined) throw new Error('NpySink.writeRows(): beginTensor() first');
    await this.file.write(bytesOf(data));
    this.written += data.byteLength;
  }

  async addArray(array: NamedArray): Promise<void> {
    this.sideArrays.push(array);
  }

  async setAttribute(attribute: Attribute): Promise<void> {
    this.attributes.push(attribute);
  }

  async commit(): Promise<number> {
    if (this.written !== this.expectedBytes) {
      throw new Error(`NpySink.commit(): the tensor needs ${this.expectedBytes} bytes, ${this.written} were written`);
    }
    await this.file.commit();
    return this.file.bytesWritten;
  }

  async abort(): Promise<void> {
    await this.file.abort();
  }
}
