/**
 * HDF5 writer through h5wasm (the HDF5 C library compiled to WebAssembly, host files via NODERAWFS).
 *
 * Tensor layout: the streamed tensor ("H" [S, K, Nr, Nt] or "h" [S, count, Nr, Nt], docs/conventions.md)
 * arrives row-major with complex interleaved re/im. In the file it is a chunked dataset of the
 * compound type { r: float, i: float } (float32 for complex64, float64 for complex128), packed,
 * which h5py reads as complex64 / complex128 and MATLAB's h5read as a struct with fields r and i.
 * That compound's memory layout is byte for byte the interleaved block, so each block is copied
 * once into the WebAssembly heap and handed to H5Dwrite as a hyperslab of whole rows; the
 * high-level write_slice is not used for it because it wants one column per member and
 * interleaves them element by element.
 *
 * File choices:
 * - Library version bounds (earliest, v1.10): nothing newer than the HDF5 1.10 format, so
 *   Debian's h5py (HDF5 1.10) and MATLAB read the files.
 * - Axis 0 of the tensor is extendible (maxshape None); the dataset is sized to S at once and
 *   filled block by block; chunks are `chunkRows` subframes (default: about 1 MiB; at most S),
 *   deflate optional.
 * - Names with "/" create groups ("paths/delayS" is dataset delayS in group paths).
 * - Every dataset has a scalar UTF-8 string attribute `units`; root attributes are written with
 *   their explicit dtype (float64, int64, int32 or UTF-8 string, scalar).
 * - dtype "string" arrays are variable-length UTF-8 strings.
 * - HDF5 stamps modification times into object headers (h5wasm does not expose
 *   H5Pset_obj_track_times), so two runs differ in a few header bytes; the data do not.
 *
 * The file is written under a temporary name beside the target and renamed on commit.
 */
import { promises as fsp } from 'node:fs';
import { endianness } from 'node:os';
import { dirname } from 'node:path';
import h5wasm from 'h5wasm/node';
import { OutputFileError, temporaryPathFor, trackTemporary, untrackTemporary, type OutputFileStage } from './atomic.js';
import { checkAttribute, checkNamedArray, checkTensorHeader, elementCount, ITEM_BYTES, RowCounter } from './npz.js';
import type { Attribute, DatasetSink, DType, NamedArray, StreamedArrayHeader } from './sink.js';

type H5Module = Awaited<typeof h5wasm.ready>;
type H5File = InstanceType<typeof h5wasm.File>;
type H5Group = InstanceType<typeof h5wasm.Group>;

/** Options of {@link openHdf5Sink}. */
export interface Hdf5SinkOptions {
  /**
   * Largest piece, in bytes, copied into the WebAssembly heap per H5Dwrite (default 16 MiB);
   * a block is written in pieces of whole rows, at least one row each.
   */
  maxWriteBytes?: number;
}

/** Target chunk size when the header gives no chunkRows. */
const DEFAULT_CHUNK_BYTES = 1 << 20;
/** HDF5 limits one chunk to 4 GiB. */
const MAX_CHUNK_BYTES = 2 ** 32 - 1;

const H5_DTYPE: Readonly<Record<Exclude<DType, 'string' | 'complex64' | 'complex128'>, string>> = {
  float32: '<f',
  float64: '<d',
  int32: '<i',
  uint8: '<B',
  int64: '<q',
};

/** The r/i compound for a complex dtype, packed: r at offset 0, i right after. */
function complexCompound(dtype: 'complex64' | 'complex128'): [string, string][] {
  const part = dtype === 'complex64' ? '<f' : '<d';
  return [
    ['r', part],
    ['i', part],
  ];
}

/** Chunk shape: chunkRows subframes (or about 1 MiB), at most S, later axes halved while one chunk is too big. */
function chunkShape(header: StreamedArrayHeader): number[] {
  const itemBytes = ITEM_BYTES[header.dtype];
  const rest = header.shape.slice(1).map((e) => Math.max(1, e));
  const rowBytes = elementCount(rest) * itemBytes;
  // A hint: never more rows than the tensor has (a chunk is allocated whole on disk).
  const rows = Math.min(header.chunkRows ?? Math.max(1, Math.floor(DEFAULT_CHUNK_BYTES / rowBytes)), Math.max(1, header.shape[0] as number));
  const chunk = [rows, ...rest];
  const limit = header.chunkRows === undefined ? DEFAULT_CHUNK_BYTES : MAX_CHUNK_BYTES;
  for (let axis = 1; axis < chunk.length && elementCount(chunk) * itemBytes > limit; axis++) {
    while ((chunk[axis] as number) > 1 && elementCount(chunk) * itemBytes > limit) chunk[axis] = Math.ceil((chunk[axis] as number) / 2);
  }
  if (elementCount(chunk) * itemBytes > MAX_CHUNK_BYTES) {
    throw new RangeError(`openHdf5Sink(): chunkRows ${rows} gives chunks over 4 GiB (HDF5's limit); use fewer rows per chunk`);
  }
  return chunk;
}

type SinkState = 'open' | 'committed' | 'aborted';

class Hdf5Sink implements DatasetSink {
  private state: SinkState = 'open';
  private readonly names = new Set<string>();
  private readonly groups = new Set<string>(['']);
  private tensor: { rows: RowCounter; path: string; heapPtr: number; heapBytes: number; rowsPerPiece: number } | undefined;

  constructor(
    private readonly module: H5Module,
    private readonly file: H5File,
    private readonly path: string,
    private readonly temporaryPath: string,
    private readonly maxWriteBytes: number,
  ) {}

  private checkOpen(fn: string): void {
    if (this.state !== 'open') throw new RangeError(`${fn}(): the sink is ${this.state}, no more writes`);
  }

  private claim(fn: string, name: string): void {
    if (this.names.has(name) || this.groups.has(name)) throw new RangeError(`${fn}(): name ${JSON.stringify(name)} is already in this file`);
    const parts = name.split('/');
    for (let i = 1; i <= parts.length; i++) {
      if (this.names.has(parts.slice(0, i).join('/'))) {
        throw new RangeError(`${fn}(): name ${JSON.stringify(name)} needs group ${parts.slice(0, i).join('/')}, which is a dataset`);
      }
    }
    this.names.add(name);
  }

  /** The group that holds `name`, created (with its parents) when missing. */
  private parentGroup(name: string): { group: H5Group; leaf: string } {
    const parts = name.split('/');
    const leaf = parts.pop() as string;
    let group: H5Group = this.file;
    let path = '';
    for (const part of parts) {
      path = path === '' ? part : `${path}/${part}`;
      if (!this.groups.has(path)) {
        group.create_group(part);
        this.groups.add(path);
      }
      group = this.file.get(path) as H5Group;
    }
    return { group, leaf };
  }

  private setUnits(datasetPath: string, units: string): void {
    const dataset = this.file.get(datasetPath);
    if (!(dataset instanceof h5wasm.Dataset)) throw new Error(`Hdf5Sink: dataset ${datasetPath} was not created`);
    dataset.create_attribute('units', units, null, 'S');
  }

  async beginTensor(header: StreamedArrayHeader): Promise<void> {
    const fn = 'Hdf5Sink.beginTensor';
    this.checkOpen(fn);
    if (this.tensor) throw new RangeError(`${fn}(): the tensor was already begun (${this.tensor.rows.header.name})`);
    checkTensorHeader(fn, header);
    if (header.shape.slice(1).some((e) => e === 0)) {
      throw new RangeError(`${fn}(): axes after the subframe axis must be non-empty for a chunked dataset, got [${header.shape.join(', ')}]`);
    }
    this.claim(fn, header.name);
    const rows = new RowCounter(header);
    const { group, leaf } = this.parentGroup(header.name);
    const empty = header.dtype === 'complex64' ? new Float32Array(0) : new Float64Array(0);
    const dataset = group.create_dataset({
      name: leaf,
      data: new Map([
        ['r', empty],
        ['i', empty],
      ]),
      shape: [0, ...header.shape.slice(1)],
      maxshape: [null, ...header.shape.slice(1)],
      chunks: chunkShape(header),
      dtype: complexCompound(header.dtype),
      ...(header.deflate ? { compression: header.deflate } : {}),
    });
    if (dataset.resize(header.shape) < 0) throw new Error(`${fn}(): H5Dset_extent to [${header.shape.join(', ')}] failed`);
    const rowBytes = rows.rowValues * (header.dtype === 'complex64' ? 4 : 8);
    const rowsPerPiece = Math.max(1, Math.floor(this.maxWriteBytes / Math.max(1, rowBytes)));
    const heapBytes = Math.max(1, Math.min(rowsPerPiece, rows.totalRows) * rowBytes);
    const heapPtr = this.module._malloc(heapBytes);
    if (heapPtr === 0) throw new RangeError(`${fn}(): the WebAssembly heap has no room for ${heapBytes} bytes`);
    this.tensor = { rows, path: `/${header.name}`, heapPtr, heapBytes, rowsPerPiece };
    this.setUnits(`/${header.name}`, header.units);
  }

  async writeRows(data: Float32Array | Float64Array): Promise<void> {
    const fn = 'Hdf5Sink.writeRows';
    this.checkOpen(fn);
    const tensor = this.tensor;
    if (!tensor) throw new RangeError(`${fn}(): call beginTensor() first`);
    const rows = tensor.rows.accept(fn, data);
    const bytes = new Uint8Array(data.buffer, data.byteOffset, data.byteLength);
    const rowBytes = tensor.rows.rowValues * data.BYTES_PER_ELEMENT;
    const rest = tensor.rows.header.shape.slice(1).map(BigInt);
    const zeros = rest.map(() => 0n);
    const strides = [1n, ...rest.map(() => 1n)];
    try {
      this.writePieces(tensor, rows, bytes, rowBytes, rest, zeros, strides, fn);
    } catch (err) {
      throw await this.failure('write', err);
    }
    tensor.rows.rowsWritten += rows;
  }

  private writePieces(
    tensor: NonNullable<Hdf5Sink['tensor']>,
    rows: number,
    bytes: Uint8Array,
    rowBytes: number,
    rest: bigint[],
    zeros: bigint[],
    strides: bigint[],
    fn: string,
  ): void {
    for (let done = 0; done < rows;) {
      const piece = Math.min(tensor.rowsPerPiece, rows - done);
      // HEAPU8 is re-read each time: the heap's buffer is replaced when memory grows.
      this.module.HEAPU8.set(bytes.subarray(done * rowBytes, (done + piece) * rowBytes), tensor.heapPtr);
      const status = this.module.set_dataset_data(
        this.file.file_id,
        tensor.path,
        [BigInt(piece), ...rest],
        [BigInt(tensor.rows.rowsWritten + done), ...zeros],
        strides,
        BigInt(tensor.heapPtr),
      );
      if (status < 0)
        throw new Error(`${fn}(): H5Dwrite of rows ${tensor.rows.rowsWritten + done}..${tensor.rows.rowsWritten + done + piece} failed (status ${status})`);
      done += piece;
    }
  }

  /**
   * An HDF5 failure as an OutputFileError with its cause: HDF5 reports a failed write or close
   * without the system's reason, so a full disk or a vanished folder is found by asking the
   * file system, and only the first line of HDF5's own report is kept.
   */
  private async failure(stage: OutputFileStage, err: unknown): Promise<Error> {
    const first =
      (err instanceof Error ? err.message : String(err))
        .split('\n')
        .find((l) => /minor:|Error|failed/.test(l))
        ?.trim() ?? 'HDF5 write failed';
    let code = '';
    try {
      const fsInfo = await fsp.statfs(dirname(this.path));
      if (Number(fsInfo.bavail) * Number(fsInfo.bsize) < 4 << 20) code = 'ENOSPC';
    } catch (e) {
      code = (e as NodeJS.ErrnoException).code ?? '';
    }
    return new OutputFileError(this.path, stage, Object.assign(new Error(first), code !== '' ? { code } : {}));
  }

  async addArray(array: NamedArray): Promise<void> {
    const fn = 'Hdf5Sink.addArray';
    this.checkOpen(fn);
    checkNamedArray(fn, array);
    this.claim(fn, array.name);
    const { group, leaf } = this.parentGroup(array.name);
    if (array.dtype === 'string') {
      group.create_dataset({ name: leaf, data: array.strings as string[], shape: array.shape, dtype: 'S' });
    } else if (array.dtype === 'complex64' || array.dtype === 'complex128') {
      const interleaved = array.data as Float32Array | Float64Array;
      const n = interleaved.length / 2;
      const Column = array.dtype === 'complex64' ? Float32Array : Float64Array;
      const re = new Column(n);
      const im = new Column(n);
      for (let j = 0; j < n; j++) {
        re[j] = interleaved[2 * j] as number;
        im[j] = interleaved[2 * j + 1] as number;
      }
      group.create_dataset({
        name: leaf,
        data: new Map([
          ['r', re],
          ['i', im],
        ]),
        shape: array.shape,
        dtype: complexCompound(array.dtype),
      });
    } else {
      group.create_dataset({ name: leaf, data: array.data as Float64Array, shape: array.shape, dtype: H5_DTYPE[array.dtype] });
    }
    this.setUnits(`/${array.name}`, array.units);
  }

  async setAttribute(attribute: Attribute): Promise<void> {
    const fn = 'Hdf5Sink.setAttribute';
    this.checkOpen(fn);
    checkAttribute(fn, attribute);
    if (this.file.attrs[attribute.name] !== undefined) throw new RangeError(`${fn}(): attribute ${JSON.stringify(attribute.name)} is already set`);
    // Always an explicit dtype: h5wasm would guess int32 for an integral number (28e9 overflows).
    if (attribute.dtype === 'string') this.file.create_attribute(attribute.name, attribute.value, null, 'S');
    else if (attribute.dtype === 'float64') this.file.create_attribute(attribute.name, attribute.value, [], '<d');
    else if (attribute.dtype === 'int64') this.file.create_attribute(attribute.name, attribute.value, [], '<q');
    else this.file.create_attribute(attribute.name, attribute.value, [], '<i');
  }

  private release(): number {
    if (this.tensor && this.tensor.heapPtr !== 0) {
      this.module._free(this.tensor.heapPtr);
      this.tensor.heapPtr = 0;
    }
    return this.file.close();
  }

  async commit(): Promise<number> {
    const fn = 'Hdf5Sink.commit';
    this.checkOpen(fn);
    if (this.tensor && !this.tensor.rows.complete) {
      throw new RangeError(`${fn}(): the tensor has ${this.tensor.rows.rowsWritten} of ${this.tensor.rows.totalRows} subframes`);
    }
    this.state = 'committed';
    try {
      let status: number;
      try {
        status = this.release();
        if (status < 0) throw new Error(`${fn}(): H5Fclose failed (status ${status})`);
      } catch (err) {
        throw await this.failure('commit', err);
      }
      await fsp.rename(this.temporaryPath, this.path).catch((e: unknown) => {
        throw new OutputFileError(this.path, 'commit', e);
      });
      untrackTemporary(this.temporaryPath);
      return (await fsp.stat(this.path)).size;
    } catch (err) {
      await fsp.rm(this.temporaryPath, { force: true });
      untrackTemporary(this.temporaryPath);
      throw err;
    }
  }

  async abort(): Promise<void> {
    if (this.state !== 'open') return;
    this.state = 'aborted';
    try {
      this.release();
    } catch {
      // the file is being thrown away; a failing close changes nothing
    } finally {
      await fsp.rm(this.temporaryPath, { force: true });
      untrackTemporary(this.temporaryPath);
    }
  }
}

/**
 * Open an HDF5 file for writing. Nothing appears under `path` before commit(); abort() removes
 * the temporary file and leaves an earlier file of that name untouched.
 * @example
 * const sink = await openHdf5Sink('run.h5');
 * await sink.beginTensor({ name: 'H', dtype: 'complex64', shape: [2, 1], units: '1' });
 * await sink.writeRows(new Float32Array([1, 0, 0, 1]));
 * await sink.setAttribute({ name: 'carrierHz', dtype: 'float64', value: 28e9 });
 * await sink.commit(); // 8776 (bytes); h5py.File('run.h5')['H'][()] -> [[1+0j], [0+1j]] (complex64)
 */
export async function openHdf5Sink(path: string, options: Hdf5SinkOptions = {}): Promise<DatasetSink> {
  const fn = 'openHdf5Sink';
  if (typeof path !== 'string' || path === '') throw new TypeError(`${fn}(): path must be a non-empty string, got ${JSON.stringify(path)}`);
  if (endianness() !== 'LE') throw new RangeError(`${fn}(): needs a little-endian host, got ${endianness()}`);
  const maxWriteBytes = options.maxWriteBytes ?? 16 << 20;
  if (!(Number.isSafeInteger(maxWriteBytes) && maxWriteBytes >= 1)) {
    throw new RangeError(`${fn}(): options.maxWriteBytes must be a positive integer, got ${String(options.maxWriteBytes)}`);
  }
  const module = await h5wasm.ready;
  // HDF5 errors become exceptions (instead of HDF5-DIAG pages on stderr); they are wrapped below.
  module.activate_throwing_error_handler();
  const temporaryPath = temporaryPathFor(path);
  // Create the file with Node first, so a read-only, missing or full folder reports its cause.
  try {
    await (await fsp.open(temporaryPath, 'wx', 0o644)).close();
  } catch (e) {
    throw new OutputFileError(path, 'create', e);
  }
  // "x": create, fail if a file of that name exists (the name is unique, so it never should).
  trackTemporary(temporaryPath);
  let file: InstanceType<typeof h5wasm.File>;
  try {
    file = new h5wasm.File(temporaryPath, 'w', { libver: ['earliest', 'v110'] });
    if (file.file_id < 0n) throw new Error(`${fn}(): cannot create ${temporaryPath}`);
  } catch (e) {
    await fsp.rm(temporaryPath, { force: true });
    untrackTemporary(temporaryPath);
    throw new OutputFileError(path, 'create', e);
  }
  return new Hdf5Sink(module, file, path, temporaryPath, maxWriteBytes);
}
