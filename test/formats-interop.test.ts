/**
 * NPZ and HDF5 side by side: the same inputs read back by numpy (NPZ) and by h5py (HDF5) are the
 * same values (both references, C); our own readers (formats/read.ts) return what was written;
 * and a large streamed tensor is written with memory bounded by a few blocks.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { openHdf5Sink } from '../packages/io/src/formats/hdf5.js';
import { openNpzSink } from '../packages/io/src/formats/npz.js';
import { openDatasetReader } from '../packages/io/src/formats/reader.js';
import type { Attribute, DatasetSink, NamedArray } from '../packages/io/src/formats/sink.js';
import { hasPython, pythonJson } from './support/python.js';

const dir = mkdtempSync(join(tmpdir(), 'pathweave-interop-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const S = 6;
const K = 5;
const NR = 2;
const NT = 2;
const ROW = 2 * K * NR * NT;

const tensor = new Float64Array(S * ROW).map((_, j) => Math.sin(j * 1.3) / (1 + j));
const arrays: NamedArray[] = [
  { name: 'gains', dtype: 'complex64', shape: [S, 1], data: new Float32Array(2 * S).map((_, j) => j - 5.5), units: '1' },
  { name: 'frequenciesHz', dtype: 'float64', shape: [K], data: Float64Array.of(-2, -1, 0, 1, 2).map((f) => f * 120e3), units: 'Hz' },
  { name: 'subframeTimesS', dtype: 'float32', shape: [S], data: new Float32Array(S).map((_, s) => s * 1e-3), units: 's' },
  { name: 'paths/powerDb', dtype: 'float64', shape: [2], data: Float64Array.of(-60.25, -71.5), units: 'dB' },
  { name: 'paths/kind', dtype: 'string', shape: [2], strings: ['los', 'reflection→1'], units: '1' },
  { name: 'paths/order', dtype: 'int32', shape: [2], data: Int32Array.of(0, 1), units: '1' },
  { name: 'paths/visible', dtype: 'uint8', shape: [2, 1], data: Uint8Array.of(1, 0), units: '1' },
  { name: 'paths/id', dtype: 'int64', shape: [2], data: BigInt64Array.of(2n ** 60n, -3n), units: '1' },
];
const attributes: Attribute[] = [
  { name: 'seed', dtype: 'int64', value: 2 ** 53 - 1 },
  { name: 'carrierHz', dtype: 'float64', value: 28e9 },
  { name: 'formatVersion', dtype: 'int32', value: 1 },
  { name: 'scenario', dtype: 'string', value: '{"seed": 9007199254740991}' },
];

async function write(sink: DatasetSink): Promise<number> {
  await sink.beginTensor({ name: 'H', dtype: 'complex128', shape: [S, K, NR, NT], units: '1', chunkRows: 4 });
  for (let s = 0; s < S; s += 4) await sink.writeRows(tensor.subarray(s * ROW, Math.min(S, s + 4) * ROW));
  for (const a of arrays) await sink.addArray(a);
  for (const a of attributes) await sink.setAttribute(a);
  return sink.commit();
}

/** Every array as flat JSON-able values: complex as [re, im], 64-bit integers as text. */
const FLAT = `
import numpy as np
def flat(a):
    if a.dtype.kind == 'c':
        return np.stack([a.real.ravel(), a.imag.ravel()], axis=1).astype(float).tolist()
    if a.dtype.kind in 'iu' and a.dtype.itemsize == 8:
        return [str(x) for x in a.ravel().tolist()]
    if a.dtype.kind in 'OSU':
        return [x.decode() if isinstance(x, bytes) else str(x) for x in a.ravel().tolist()]
    return a.ravel().tolist()
`;
const NUMPY_ALL = `${FLAT}
import json, sys
with np.load(sys.argv[1]) as f:
    print(json.dumps({k: {'shape': list(f[k].shape), 'dtype': f[k].dtype.kind + str(f[k].dtype.itemsize), 'values': flat(f[k])} for k in f.files if f[k].ndim > 0}))
`;
const H5PY_ALL = `${FLAT}
import json, sys, h5py
out = {}
with h5py.File(sys.argv[1], 'r') as f:
    def visit(name, obj):
        if isinstance(obj, h5py.Dataset):
            a = obj[()]
            kind = 'U4' if h5py.check_string_dtype(obj.dtype) else a.dtype.kind + str(a.dtype.itemsize)
            out[name] = {'shape': list(a.shape), 'dtype': kind, 'values': flat(a)}
    f.visititems(visit)
print(json.dumps(out))
`;

function flat(a: NamedArray): unknown[] {
  if (a.dtype === 'string') return a.strings as string[];
  const d = a.data;
  if (d instanceof BigInt64Array) return Array.from(d, (x) => String(x));
  if (a.dtype === 'complex64' || a.dtype === 'complex128') {
    const out: number[][] = [];
    for (let j = 0; j < d!.length; j += 2) out.push([Number(d![j]), Number(d![j + 1])]);
    return out;
  }
  return Array.from(d as Float64Array);
}

describe.runIf(hasPython('numpy', 'h5py'))('NPZ in numpy equals HDF5 in h5py (numpy and h5py as references, C)', () => {
  it('every array has the same shape, kind and values in both files and matches the input', async () => {
    const npz = join(dir, 'same.npz');
    const h5 = join(dir, 'same.h5');
    await write(await openNpzSink(npz));
    await write(await openHdf5Sink(h5));
    const fromNumpy = pythonJson<Record<string, { shape: number[]; dtype: string; values: unknown[] }>>(NUMPY_ALL, [npz]);
    const fromH5py = pythonJson<Record<string, { shape: number[]; dtype: string; values: unknown[] }>>(H5PY_ALL, [h5]);
    // Strings: numpy '<U' and HDF5 variable-length UTF-8 differ in kind only.
    expect(fromNumpy['paths/kind']?.dtype).toBe('U48');
    fromNumpy['paths/kind']!.dtype = 'U4';
    expect(fromH5py).toEqual(fromNumpy);
    for (const a of arrays) expect(fromNumpy[a.name]?.values, a.name).toEqual(flat(a));
    expect(fromNumpy.H?.values).toEqual(flat({ name: 'H', dtype: 'complex128', shape: [S, K, NR, NT], data: tensor, units: '1' }));
  });
});

describe('our readers return what the sinks wrote (round trip)', () => {
  it.each([
    ['npz', false],
    ['npz', true],
    ['h5', false],
  ] as const)('%s (deflate %s): arrays, attributes, units and row slices', async (format, deflate) => {
    const path = join(dir, `round.${deflate ? 'z.' : ''}${format}`);
    const bytes = await write(format === 'npz' ? await openNpzSink(path, { deflate: deflate ? 9 : 0 }) : await openHdf5Sink(path));
    expect(bytes).toBeGreaterThan(tensor.byteLength / (deflate ? 4 : 1));
    const reader = await openDatasetReader(path);
    try {
      expect(reader.format).toBe(format);
      expect([...reader.attributes].sort((a, b) => a.name.localeCompare(b.name))).toEqual([...attributes].sort((a, b) => a.name.localeCompare(b.name)));
      expect(reader.arrays.map((a) => a.name).sort()).toEqual(['H', ...arrays.map((a) => a.name)].sort());
      for (const a of arrays) {
        const back = await reader.readArray(a.name);
        expect({ dtype: back.dtype, shape: back.shape, values: flat(back) }, a.name).toEqual({ dtype: a.dtype, shape: a.shape, values: flat(a) });
        const listed = reader.arrays.find((x) => x.name === a.name);
        expect(listed?.units).toBe(format === 'h5' ? a.units : undefined);
      }
      const H = await reader.readArray('H');
      expect(H.data).toEqual(tensor);
      const rows = await reader.readRows('H', 3, 5);
      expect(rows).toEqual(tensor.subarray(3 * ROW, 5 * ROW));
      await expect(reader.readRows('H', 4, 7)).rejects.toThrow(`readRows(): rows [4, 7) must lie in [0, ${S}] of H`);
      await expect(reader.readArray('nope')).rejects.toThrow('readArray(): no array "nope" in');
    } finally {
      await reader.close();
    }
  });
});

describe('a large streamed tensor keeps memory bounded', () => {
  // 256 MiB of complex64 in blocks of one 1 MiB subframe. A sink that kept the tensor would grow
  // the resident set by at least 256 MiB; the bound (128 MiB, half of that) leaves room for the
  // blocks in flight and for garbage not yet collected (measured: NPZ about +55 MiB, whatever the
  // tensor size, from the copy of each block; HDF5 about +16 MiB).
  const SUB = 256;
  const ROWVALUES = (1 << 20) / 8; // complex64 values per subframe: 1 MiB
  const BLOCK_ROWS = 1;
  it.each(['npz', 'h5'] as const)('%s: resident set grows by less than 128 MiB for a 256 MiB tensor', async (format) => {
    const path = join(dir, `large.${format}`);
    const sink = format === 'npz' ? await openNpzSink(path) : await openHdf5Sink(path);
    await sink.beginTensor({ name: 'H', dtype: 'complex64', shape: [SUB, ROWVALUES], units: '1' });
    const block = new Float32Array(2 * ROWVALUES * BLOCK_ROWS);
    global.gc?.();
    const base = process.memoryUsage().rss;
    let peak = base;
    for (let s = 0; s < SUB; s += BLOCK_ROWS) {
      block.fill(s); // row s holds the value s in every entry
      await sink.writeRows(block);
      peak = Math.max(peak, process.memoryUsage().rss);
    }
    const bytes = await sink.commit();
    peak = Math.max(peak, process.memoryUsage().rss);
    expect(bytes).toBeGreaterThan(256 << 20);
    expect(peak - base).toBeLessThan(128 << 20);
    const reader = await openDatasetReader(path);
    try {
      const last = (await reader.readRows('H', SUB - 1, SUB)) as Float32Array;
      expect([last[0], last[last.length - 1], last.length]).toEqual([SUB - 1, SUB - 1, 2 * ROWVALUES]);
      const first = (await reader.readRows('H', 0, 1)) as Float32Array;
      expect([first[0], first[first.length - 1]]).toEqual([0, 0]);
    } finally {
      await reader.close();
      rmSync(path, { force: true });
    }
    console.log(`${format}: ${bytes} bytes, resident set +${((peak - base) / 2 ** 20).toFixed(1)} MiB at peak`);
  });
});
