/**
 * Reading an .h5 through h5wasm, loaded on the first HDF5 file opened.
 *
 * The file is untrusted. While a reader calls into the HDF5 library, the library may open no
 * file but the one read: external raw storage, external links and virtual datasets, which would
 * copy another file's bytes into a dataset, are refused (InputFileError naming the dataset), and
 * soft links are refused too (pathweave writes none; a link could alias one array as another).
 * HDF5's own error reports become exceptions (its throwing error handler), never diagnostics on
 * stderr. Objects, nesting and each dataset's logical size against the file's are limited
 * (READ_LIMITS), so a dataset resized to a billion rows of fill values is refused up front.
 */
import { resolve } from 'node:path';
import { DTYPE_BYTES } from './npy.js';
import { elementCount } from './npz.js';
import type { ArrayData, Attribute, DType, NamedArray } from './sink.js';
import {
  arrayBytes,
  checkRows,
  InputFileError,
  openRegularFile,
  READ_LIMITS,
  safeNumber,
  typedArrayOf,
  type DatasetReader,
  type StoredArray,
} from './read-support.js';

type H5Wasm = typeof import('h5wasm/node').default;
type H5Module = Awaited<H5Wasm['ready']>;
type H5File = InstanceType<H5Wasm['File']>;
type H5Dataset = InstanceType<H5Wasm['Dataset']>;
type H5Metadata = H5Dataset['metadata'];

let h5wasmLoaded: Promise<H5Wasm> | undefined;
/** The one file HDF5 may open while a reader is in the library (undefined: no reader is). */
let readingFile: string | undefined;
/** A file HDF5 tried to open meanwhile (refused), for the message. */
let refusedOpen: string | undefined;
/** HDF5's filter plugin folders: a look there is a filter the file asks for, not another file. */
let pluginFolders: string[] = [];

/** h5wasm, imported once, when the first HDF5 file is opened; its file opening guarded, its errors thrown. */
const loadH5wasm = (): Promise<H5Wasm> =>
  (h5wasmLoaded ??= import('h5wasm/node').then(async (m) => {
    const module = await m.default.ready;
    const fs = (module as unknown as { FS: { open: (path: string, ...rest: unknown[]) => unknown; ErrnoError: new (errno: number) => Error } }).FS;
    const open = fs.open;
    fs.open = function (path: string, ...rest: unknown[]) {
      // The throwing error handler formats HDF5's report through tmpfile(): let that one through.
      if (readingFile !== undefined && resolve(String(path)) !== readingFile && !String(path).startsWith('/tmp/tmpfile_')) {
        if (!pluginFolders.some((f) => String(path).startsWith(f))) refusedOpen ??= String(path);
        // An errno (Emscripten's EACCES, 2), which HDF5 reports as a failed open, not an exception through its frames.
        throw new fs.ErrnoError(2);
      }
      return open.call(this, path, ...rest);
    };
    module.activate_throwing_error_handler();
    pluginFolders = module.get_plugin_search_paths();
    return m.default;
  }));

/** Run `body` (synchronous calls into HDF5) with only `path` openable; HDF5 errors become InputFileErrors naming `what`. */
function guarded<T>(path: string, what: string, body: () => T): T {
  const outer = readingFile;
  readingFile = resolve(path);
  refusedOpen = undefined;
  try {
    return body();
  } catch (e) {
    if (e instanceof InputFileError) throw e;
    if (refusedOpen !== undefined) {
      throw new InputFileError(
        path,
        `${what} refers to another file, ${JSON.stringify(refusedOpen)} (external storage, an external link or a virtual dataset): refused, pathweave reads only self-contained files`,
        { cause: e },
      );
    }
    const text = e instanceof Error ? e.message : String(e);
    // The innermost frame of HDF5's report says what is wrong (e.g. "truncated file: eof = ...").
    const frames = [...text.matchAll(/in (\w+)\(\): ([^\n]*)/g)];
    const line = frames.length > 0 ? frames[frames.length - 1]![2]! : (text.split('\n')[0] ?? '');
    throw new InputFileError(path, `${what === 'the file' ? '' : `${what}: `}not a readable HDF5 file (${line.slice(0, 300)})`, { cause: e });
  } finally {
    readingFile = outer;
  }
}

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

export class Hdf5Reader implements DatasetReader {
  readonly format = 'h5' as const;

  private constructor(
    readonly path: string,
    private readonly module: H5Module,
    private readonly file: H5File,
    readonly arrays: StoredArray[],
    readonly attributes: Attribute[],
  ) {}

  static async open(path: string): Promise<Hdf5Reader> {
    const { handle, size } = await openRegularFile(path, 'input file');
    await handle.close();
    const h5wasm = await loadH5wasm();
    const module = await h5wasm.ready;
    const file = guarded(path, 'the file', () => new h5wasm.File(path, 'r'));
    try {
      return guarded(path, 'the file', () => Hdf5Reader.list(path, size, module, h5wasm, file));
    } catch (err) {
      file.close();
      throw err;
    }
  }

  /** The datasets and root attributes, every object checked (inside the guard). */
  private static list(path: string, size: number, module: H5Module, h5wasm: H5Wasm, file: H5File): Hdf5Reader {
    const paths = file.paths();
    if (paths.length > READ_LIMITS.entries) throw new InputFileError(path, `${paths.length} objects, more than the ${READ_LIMITS.entries} allowed`);
    const arrays: StoredArray[] = [];
    for (const p of paths.sort()) {
      const depth = p.split('/').filter((x) => x !== '').length;
      if (depth > READ_LIMITS.groupDepth) throw new InputFileError(path, `${p} is nested ${depth} deep, more than the ${READ_LIMITS.groupDepth} allowed`);
      // Links before anything follows them.
      const external = module.get_external_link(file.file_id, p) as { filename?: string } | null;
      if (external !== null && external.filename !== undefined)
        throw new InputFileError(path, `${p} is an external link to ${JSON.stringify(external.filename)}: refused, pathweave reads only self-contained files`);
      const soft = module.get_symbolic_link(file.file_id, p);
      if (typeof soft === 'string') throw new InputFileError(path, `${p} is a soft link to ${JSON.stringify(soft)}: refused (pathweave writes none)`);
      const ds = file.get(p);
      if (!(ds instanceof h5wasm.Dataset)) continue;
      const m = ds.metadata;
      if ((m as { virtual_sources?: unknown }).virtual_sources !== undefined)
        throw new InputFileError(path, `dataset ${p} is virtual (it maps other files): refused`);
      const dtype = dtypeOfMetadata(module, m);
      if (dtype === undefined) throw new InputFileError(path, `dataset ${p} has a type pathweave does not write (${JSON.stringify(ds.dtype)})`);
      const shape = (ds.shape ?? []).map(Number);
      const bytes = arrayBytes(path, `dataset ${p}`, shape, dtype === 'string' ? 1 : DTYPE_BYTES[dtype]);
      // Unfiltered data must be in the file; filtered (deflated) data at most deflate's ratio of it.
      const filtered = ds.filters.length > 0;
      if (dtype !== 'string' && bytes > (filtered ? size * READ_LIMITS.inflateRatio : size)) {
        throw new InputFileError(
          path,
          `dataset ${p} of shape [${shape.join(', ')}] is ${bytes} bytes, more than its ${size}-byte file can hold${filtered ? ' compressed' : ''}: refused`,
        );
      }
      // One element read: storage in another file is tried (and refused) now, naming the dataset.
      if (dtype !== 'string' && bytes > 0) {
        const probe = module._malloc(DTYPE_BYTES[dtype]);
        try {
          const one = shape.length === 0 ? null : shape.map(() => 1n);
          const status = guarded(path, `dataset ${p}`, () =>
            module.get_dataset_data(file.file_id, p, one, shape.length === 0 ? null : shape.map(() => 0n), one, BigInt(probe)),
          );
          if (status < 0) throw new InputFileError(path, `dataset ${p} cannot be read (status ${status})`);
        } finally {
          module._free(probe);
        }
      }
      const units = ds.attrs.units === undefined ? undefined : String(ds.get_attribute('units', true));
      arrays.push({ name: p.replace(/^\//, ''), dtype, shape, units });
    }
    const attributes: Attribute[] = [];
    for (const [name, attr] of Object.entries(file.attrs)) {
      const dtype = dtypeOfMetadata(module, attr.metadata);
      const value = attr.value;
      if (dtype === 'string' && typeof value === 'string') {
        if (value.length > READ_LIMITS.attributeChars)
          throw new InputFileError(path, `root attribute ${name} is ${value.length} characters, more than the ${READ_LIMITS.attributeChars} allowed`);
        attributes.push({ name, dtype: 'string', value });
      } else if (dtype === 'float64' && typeof value === 'number') attributes.push({ name, dtype: 'float64', value });
      else if (dtype === 'int32' && typeof value === 'number') attributes.push({ name, dtype: 'int32', value });
      else if (dtype === 'int64' && typeof value === 'bigint') attributes.push({ name, dtype: 'int64', value: safeNumber(path, name, value) });
      else throw new InputFileError(path, `root attribute ${name} has a type pathweave does not write (${JSON.stringify(attr.dtype)})`);
    }
    return new Hdf5Reader(path, module, file, arrays, attributes);
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
      const status = guarded(this.path, `dataset ${array.name}`, () =>
        this.module.get_dataset_data(this.file.file_id, `/${array.name}`, count, offset, strides, BigInt(ptr)),
      );
      if (status < 0) throw new InputFileError(this.path, `dataset ${array.name} rows [${start}, ${end}) cannot be read (status ${status})`);
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
      const value = guarded(this.path, `dataset ${name}`, () => (this.file.get(`/${name}`) as H5Dataset).value);
      const strings = (Array.isArray(value) ? value : [value]).map(String);
      return { name, dtype: 'string', shape: array.shape, strings, units };
    }
    const rows = array.shape[0] ?? 1;
    const bytes = elementCount(array.shape) * DTYPE_BYTES[array.dtype];
    if (bytes > READ_LIMITS.sideArrayBytes)
      throw new InputFileError(this.path, `array ${name} is ${bytes} bytes, more than the ${READ_LIMITS.sideArrayBytes} read whole`);
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
