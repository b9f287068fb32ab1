/** Reading an .h5 through h5wasm, loaded on the first HDF5 file opened. */
import { DTYPE_BYTES } from './npy.js';
import { elementCount } from './npz.js';
import type { ArrayData, Attribute, DType, NamedArray } from './sink.js';
import { checkRows, safeNumber, typedArrayOf, type DatasetReader, type StoredArray } from './read-support.js';


type H5Wasm = typeof import('h5wasm/node').default;
type H5Module = Awaited<H5Wasm['ready']>;
type H5File = InstanceType<H5Wasm['File']>;
type H5Dataset = InstanceType<H5Wasm['Dataset']>;
type H5Metadata = H5Dataset['metadata'];

let h5wasmLoaded: Promise<H5Wasm> | undefined;
/** h5wasm, imported once, when the first HDF5 file is opened. */
const loadH5wasm = (): Promise<H5Wasm> => (h5wasmLoaded ??= import('h5wasm/node').then((m) => m.default));

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
    const h5wasm = await loadH5wasm();
    const module = await h5wasm.ready;
    const file = new h5wasm.File(path, 'r');
    try {
      const arrays: StoredArray[] = [];
      for (const p of file.paths().sort()) {
        const ds = file.get(p);
        if (!(ds instanceof h5wasm.Dataset)) continue;
        const dtype = dtypeOfMetadata(module, ds.metadata);
        if (dtype === undefined) throw new RangeError(`Hdf5Reader: dataset ${p} has a type pathweave does not write (${JSON.stringify(ds.dtype)})`);
        const units = ds.attrs.units === undefined ? undefined : String(ds.get_attribute('units', true));
        arrays.push({ name: p.replace(/^\//, ''), dtype, shape: (ds.shape ?? []).map(Number), units });
      }
      const attributes: Attribute[] = [];
      for (const [name, attr] of Object.entries(file.attrs)) {
        const dtype = dtypeOfMetadata(module, attr.metadata);
        const value = attr.value;
        if (dtype === 'string' && typeof value === 'string') attributes.push({ name, dtype: 'string', value });
        else if (dtype === 'float64' && typeof value === 'number') attributes.push({ name, dtype: 'float64', value });
        else if (dtype === 'int32' && typeof value === 'number') attributes.push({ name, dtype: 'int32', value });
        else if (dtype === 'int64' && typeof value === 'bigint') attributes.push({ name, dtype: 'int64', value: safeNumber('Hdf5Reader', name, value) });
        else throw new RangeError(`Hdf5Reader: root attribute ${name} has a type pathweave does not write (${JSON.stringify(attr.dtype)})`);
      }
      return new Hdf5Reader(path, module, file, arrays, attributes);
    } catch (err) {
      file.close();
      throw err;
    }
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
      const status = this.module.get_dataset_data(this.file.file_id, `/${array.name}`, count, offset, strides, BigInt(ptr));
      if (status < 0) throw new Error(`Hdf5Reader: H5Dread of ${array.name} rows [${start}, ${end}) failed (status ${status})`);
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
      const ds = this.file.get(`/${name}`) as H5Dataset;
      const value = ds.value;
      const strings = (Array.isArray(value) ? value : [value]).map(String);
      return { name, dtype: 'string', shape: array.shape, strings, units };
    }
    const rows = array.shape[0] ?? 1;
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
