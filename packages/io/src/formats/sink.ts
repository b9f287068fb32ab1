/**
 * The writer side of every output format. A run opens one DatasetSink, streams the channel
 * tensor ("H" or "h") block by block in subframe order, adds the small named arrays
 * (gains, frequenciesHz or tapDelaysS, subframeTimesS, paths/..., truth/...) and attributes,
 * then commits: the file appears under its name only then (temporary file + rename).
 * abort() removes the temporary file and leaves any earlier file of that name untouched.
 *
 * Data are row-major; complex dtypes are interleaved re/im (numpy's complex64/complex128 bytes).
 */

/**
 * Element types the formats carry.
 * @example const dtype: DType = 'complex64'; // numpy <c8
 */
export type DType = 'complex64' | 'complex128' | 'float32' | 'float64' | 'int32' | 'uint8' | 'int64' | 'string';

/**
 * A typed array holding data of a DType (complex: interleaved; string: see `strings`).
 * @example const ids: ArrayData = BigInt64Array.of(7n, 9n); // dtype int64
 */
export type ArrayData = Float32Array | Float64Array | Int32Array | Uint8Array | BigInt64Array;

/**
 * A named array held in memory.
 * @example const delays: NamedArray = { name: 'paths/delayS', dtype: 'float64', shape: [2], data: Float64Array.of(3.3e-8, 5.1e-8), units: 's' };
 */
export interface NamedArray {
  /** Name in the container; "/" separates groups ("paths/delayS"). */
  name: string;
  dtype: DType;
  shape: number[];
  /** Values (absent for dtype "string"). */
  data?: ArrayData;
  /** Values for dtype "string", row-major. */
  strings?: string[];
  /** Physical unit, stored as the `units` attribute in HDF5 ("s", "Hz", "dB", "1" ...). */
  units: string;
}

/**
 * A root attribute with an explicit dtype (never inferred: see DEVELOPERS.md).
 * @example const attributes: Attribute[] = [{ name: 'seed', dtype: 'int64', value: 42 }, { name: 'domain', dtype: 'string', value: 'frequency' }];
 */
export type Attribute = { name: string; dtype: 'string'; value: string } | { name: string; dtype: 'float64' | 'int64' | 'int32'; value: number };

/**
 * The streamed main tensor's description.
 * @example const header: StreamedArrayHeader = { name: 'H', dtype: 'complex64', shape: [100, 64, 4, 8], units: '1', chunkRows: 10, deflate: 0 };
 */
export interface StreamedArrayHeader {
  name: string;
  dtype: 'complex64' | 'complex128';
  /** Full shape; axis 0 is the subframe axis, streamed in order. */
  shape: number[];
  units: string;
  /** Rows of axis 0 per chunk (HDF5 chunking); a hint. */
  chunkRows?: number;
  /** Deflate level 0-9 where the format supports it (0: none). */
  deflate?: number;
}

/**
 * An open output file.
 * @example
 * const path = join(mkdtempSync(join(tmpdir(), 'pw-')), 'H.npy');
 * const sink: DatasetSink = await NpySink.open(path);
 * await sink.beginTensor({ name: 'H', dtype: 'complex64', shape: [1, 2], units: '1' });
 * await sink.writeRows(Float32Array.of(1, 0, 0, 1));
 * await sink.commit() // 144
 * (await readNpy(path)).data // Float32Array [1, 0, 0, 1]
 */
export interface DatasetSink {
  /** Start the streamed tensor; must be called once, before writeRows. */
  beginTensor(header: StreamedArrayHeader): Promise<void>;
  /** Append rows of axis 0 (whole subframes), in order. */
  writeRows(data: Float32Array | Float64Array): Promise<void>;
  /** Add a small in-memory array (any time before commit). */
  addArray(array: NamedArray): Promise<void>;
  /** Add a root attribute. */
  setAttribute(attribute: Attribute): Promise<void>;
  /** Finish the file and move it under its final name. Returns the bytes written. */
  commit(): Promise<number>;
  /** Remove the temporary file. Safe to call more than once, and after a failure. */
  abort(): Promise<void>;
}
