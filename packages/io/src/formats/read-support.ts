/**
 * What the dataset readers share: the reader interface and the small helpers each reader uses
 * to turn bytes into typed arrays and to check row ranges.
 */
import type { FileHandle } from 'node:fs/promises';
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
export function safeNumber(fn: string, name: string, v: bigint): number {
  const n = Number(v);
  if (!Number.isSafeInteger(n)) throw new RangeError(`${fn}(): attribute ${name} = ${v} is beyond 2^53 and cannot be a number`);
  return n;
}

/** Read bytes [from, from + length) of a file. */
/** @internal */
export async function readAt(handle: FileHandle, from: number, length: number): Promise<Buffer> {
  const out = Buffer.alloc(length);
  let done = 0;
  while (done < length) {
    const { bytesRead } = await handle.read(out, done, length - done, from + done);
    if (bytesRead === 0) throw new RangeError(`readAt(): file ends at ${from + done}, wanted ${from + length}`);
    done += bytesRead;
  }
  return out;
}
