/**
 * What the dataset readers share: the reader interface and the small helpers each reader uses
 * to turn bytes into typed arrays and to check row ranges.
 */
import { constants } from 'node:fs';
import { open, type FileHandle } from 'node:fs/promises';
import type { ArrayData, Attribute, DType, NamedArray } from './sink.js';

/**
 * A file given to pathweave to read (a dataset, a part, its side file or manifest) that is
 * corrupt, foreign, hostile or beyond a stated limit: an input error (the CLI exits 2), never a
 * failure while running. The message names the file and what is wrong.
 * @example new InputFileError('run.npz', 'entry H.npy: CRC-32 0x1234abcd, the directory says 0x00000000').message
 * // "run.npz: entry H.npy: CRC-32 0x1234abcd, the directory says 0x00000000"
 */
export class InputFileError extends Error {
  override name = 'InputFileError';

  constructor(
    /** The file refused. */
    readonly file: string,
    /** What is wrong with it, in words. */
    readonly problem: string,
    options?: { cause?: unknown },
  ) {
    super(`${file}: ${problem}`, options);
  }
}

/**
 * Limits of what a reader accepts from a file before it allocates anything (docs/conventions.md,
 * "Reading untrusted files"). A file beyond one is refused with an InputFileError.
 * @example READ_LIMITS.sideArrayBytes // 268435456: 256 MiB for one side array read whole
 */
export const READ_LIMITS = {
  /** Bytes of one NPY header (format 2.0 allows 4 GiB; numpy's own reader stops at 10 000). */
  npyHeaderBytes: 1 << 20,
  /** Dimensions of one array. */
  rank: 16,
  /** Bytes of one array read whole (side arrays, path tables, attribute entries). */
  sideArrayBytes: 256 * 2 ** 20,
  /** Characters of one attribute string (the scenario text included). */
  attributeChars: 16 * 2 ** 20,
  /** Bytes of a .npy side file or a part manifest. */
  jsonFileBytes: 64 * 2 ** 20,
  /** Entries of a zip directory, and objects of an HDF5 file. */
  entries: 4096,
  /** Nesting of HDF5 groups. */
  groupDepth: 8,
  /** Ratio of inflated to deflated size (deflate's own bound is 1032:1). */
  inflateRatio: 1032,
} as const;

/**
 * Open a file for reading after checking it is a regular file (a FIFO, a device or a socket is
 * refused: reading one could block forever or never end). Opened non-blocking, then checked on
 * the handle itself, so the name cannot be swapped in between.
 * @example
 * const { handle, size } = await openRegularFile('examples/street-corner-28ghz.json', 'scenario');
 * await handle.close(); // size is the file's length in bytes
 */
export async function openRegularFile(path: string, what: string, maxBytes = Number.MAX_SAFE_INTEGER): Promise<{ handle: FileHandle; size: number }> {
  let handle: FileHandle;
  try {
    handle = await open(path, constants.O_RDONLY | constants.O_NONBLOCK);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new InputFileError(
      path,
      `cannot open the ${what}: ${code === 'ENOENT' ? 'no such file' : code === 'EACCES' ? 'permission denied' : code === 'EISDIR' ? 'it is a directory' : (code ?? (e as Error).message)}`,
      { cause: e },
    );
  }
  try {
    const st = await handle.stat();
    if (!st.isFile()) {
      const kind = st.isDirectory()
        ? 'a directory'
        : st.isFIFO()
          ? 'a FIFO'
          : st.isSocket()
            ? 'a socket'
            : st.isCharacterDevice() || st.isBlockDevice()
              ? 'a device'
              : 'not a regular file';
      throw new InputFileError(path, `the ${what} is ${kind}; only regular files are read`);
    }
    if (st.size > maxBytes) throw new InputFileError(path, `the ${what} is ${st.size} bytes, more than the ${maxBytes} allowed`);
    return { handle, size: st.size };
  } catch (e) {
    await handle.close();
    throw e;
  }
}

/**
 * A whole small file as text (a side file or a manifest): regular files only, at most
 * READ_LIMITS.jsonFileBytes.
 * @example (await readSmallFile('examples/street-corner-28ghz.json', 'scenario')).startsWith('{') // true
 */
export async function readSmallFile(path: string, what: string): Promise<string> {
  const { handle, size } = await openRegularFile(path, what, READ_LIMITS.jsonFileBytes);
  try {
    return (await readAt(handle, 0, size, path)).toString('utf8');
  } finally {
    await handle.close();
  }
}

/**
 * Terminal-safe text: control characters (C0 but newline and tab, DEL, C1) and the
 * bidirectional overrides are written as \uXXXX, so a file or scenario name cannot move the
 * cursor, recolour or reorder what the terminal shows.
 * @example printable('a\u001b[2Jb') // "a\\u001b[2Jb"
 */
export function printable(text: string): string {
  return text.replace(UNPRINTABLE, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
}

// C0 but newline and tab, DEL, C1, and the bidirectional marks and overrides.
// eslint-disable-next-line no-control-regex -- matching control characters is the point: they are escaped
const UNPRINTABLE = /[\u0000-\u0008\u000b-\u001f\u007f-\u009f\u200e\u200f\u2028\u2029\u202a-\u202e\u2066-\u2069]/g;

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

/** @internal */
export function typedArrayOf(dtype: Exclude<DType, 'string'>, buffer: ArrayBuffer): ArrayData {
  if (dtype === 'complex64' || dtype === 'float32') return new Float32Array(buffer);
  if (dtype === 'complex128' || dtype === 'float64') return new Float64Array(buffer);
  if (dtype === 'int32') return new Int32Array(buffer);
  if (dtype === 'int64') return new BigInt64Array(buffer);
  return new Uint8Array(buffer);
}

/** @internal */
export function checkRows(fn: string, array: StoredArray, start: number, end: number): void {
  if (array.dtype === 'string') throw new TypeError(`${fn}(): ${array.name} holds strings; read it with readArray()`);
  const rows = array.shape[0];
  if (rows === undefined) throw new RangeError(`${fn}(): ${array.name} is 0-d; read it with readArray()`);
  if (!(Number.isSafeInteger(start) && Number.isSafeInteger(end) && start >= 0 && start <= end && end <= rows)) {
    throw new RangeError(`${fn}(): rows [${start}, ${end}) must lie in [0, ${rows}] of ${array.name}`);
  }
}

/** @internal */
export function safeNumber(path: string, name: string, v: bigint): number {
  const n = Number(v);
  if (!Number.isSafeInteger(n)) throw new InputFileError(path, `attribute ${name} = ${v} is beyond 2^53 and cannot be a number`);
  return n;
}

/** Bytes of an array of `shape` and element size, refused (InputFileError) beyond 2^53 or with a bad dimension. */
/** @internal */
export function arrayBytes(path: string, name: string, shape: readonly number[], elementBytes: number): number {
  if (shape.length > READ_LIMITS.rank) throw new InputFileError(path, `${name} has ${shape.length} dimensions, more than the ${READ_LIMITS.rank} allowed`);
  let n = elementBytes;
  for (const d of shape) {
    if (!(Number.isSafeInteger(d) && d >= 0)) throw new InputFileError(path, `${name} has a dimension ${d}; dimensions are integers >= 0`);
    n *= d;
    if (!Number.isSafeInteger(n)) throw new InputFileError(path, `${name} of shape [${shape.join(', ')}] is beyond 2^53 bytes`);
  }
  return n;
}

/** One read call at most this long (a single read() above 2 GiB fails on Linux). */
const READ_PIECE = 2 ** 30;

/** Read bytes [from, from + length) of a file, in pieces of at most 1 GiB; a file that ends early is an InputFileError. */
/** @internal */
export async function readAt(handle: FileHandle, from: number, length: number, path = 'the file'): Promise<Buffer> {
  if (!(Number.isSafeInteger(from) && from >= 0 && Number.isSafeInteger(length) && length >= 0))
    throw new RangeError(`readAt(): bytes [${from}, ${from} + ${length}) are not a range of a file`);
  const out = Buffer.allocUnsafe(length);
  let done = 0;
  while (done < length) {
    const { bytesRead } = await handle.read(out, done, Math.min(READ_PIECE, length - done), from + done);
    if (bytesRead === 0)
      throw new InputFileError(path, `the file ends at byte ${from + done}, its own records need ${from + length}: it is truncated or its records lie`);
    done += bytesRead;
  }
  return out;
}
