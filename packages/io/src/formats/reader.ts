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
import type { ArrayData } from './sink.js';
import { InputFileError, openRegularFile, type DatasetReader, type StoredArray } from './read-support.js';
import { NpyReader } from './npy-reader.js';
import { NpzReader } from './npz-reader.js';
import { Hdf5Reader } from './hdf5-reader.js';

export { InputFileError, READ_LIMITS, printable, type DatasetReader, type StoredArray } from './read-support.js';
export { NpyReader, type NpySideFile } from './npy-reader.js';

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
  const { handle, size } = await openRegularFile(path, 'input file');
  let keep = false;
  try {
    const head = Buffer.alloc(8);
    if (size < 8) throw new InputFileError(path, `is ${size} bytes: too short to be an NPY, a zip (.npz) or an HDF5 file`);
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
    throw new InputFileError(path, `is neither an NPY, a zip (.npz) nor an HDF5 file (first bytes ${head.toString('hex')})`);
  } finally {
    if (!keep) await handle.close();
  }
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
  if (t === undefined)
    throw new InputFileError(reader.path, `holds no channel tensor H or h; it has ${reader.arrays.map((a) => a.name).join(', ') || 'no arrays'}`);
  if (t.dtype !== 'complex64' && t.dtype !== 'complex128')
    throw new InputFileError(reader.path, `its tensor ${t.name} is ${t.dtype}; a channel tensor is complex64 or complex128`);
  if (t.shape.length < 3)
    throw new InputFileError(reader.path, `its tensor ${t.name} has shape [${t.shape.join(', ')}]; a channel tensor has at least 3 axes (subframes first)`);
  if (t.shape[0] === 0 || t.shape.includes(0))
    throw new InputFileError(reader.path, `its tensor ${t.name} has shape [${t.shape.join(', ')}]: no data (pathweave never writes an empty tensor)`);
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
