/**
 * The HDF5 sink against h5py (Debian's, on HDF5 1.10: the reference reader, C) and h5dump -H
 * (HDF5's own tool, C), and for atomic commit.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { hasCommand, hasPython, pythonJson } from '../../../test/support/python.js';
import { openHdf5Sink } from '../src/formats/hdf5.js';
import type { DatasetSink } from '../src/formats/sink.js';

const dir = mkdtempSync(join(tmpdir(), 'pathweave-h5-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const S = 7;
const K = 4;
const NR = 2;
const NT = 3;
const ROW = 2 * K * NR * NT;

function tensorValues(Kind: Float32ArrayConstructor | Float64ArrayConstructor): Float32Array | Float64Array {
  const v = new Kind(S * ROW);
  for (let j = 0; j < v.length; j++) v[j] = Math.cos(j * 0.61) * 3 - j / 11;
  return v;
}

const KINDS = ['los', 'wall-1', 'scatterer→ϵ'];

/**
 * Sample file: tensor streamed in blocks of 3, 1 and 3 subframes with chunks of 2 subframes
 * (so blocks straddle chunks), every dtype, groups and root attributes.
 */
async function writeSample(sink: DatasetSink, dtype: 'complex64' | 'complex128', deflate = 0): Promise<void> {
  const h = tensorValues(dtype === 'complex64' ? Float32Array : Float64Array);
  await sink.beginTensor({ name: 'H', dtype, shape: [S, K, NR, NT], units: '1', chunkRows: 2, deflate });
  await sink.writeRows(h.subarray(0, 3 * ROW));
  await sink.addArray({ name: 'frequenciesHz', dtype: 'float64', shape: [K], data: Float64Array.of(-240e3, -120e3, 0, 120e3), units: 'Hz' });
  await sink.writeRows(h.subarray(3 * ROW, 4 * ROW));
  await sink.writeRows(h.subarray(4 * ROW));
  const gains = new Float64Array(2 * S * 2).map((_, j) => (j % 2 ? -1 : 1) * (j + 0.25));
  await sink.addArray({ name: 'gains', dtype: 'complex128', shape: [S, 2], data: gains, units: '1' });
  await sink.addArray({ name: 'subframeTimesS', dtype: 'float32', shape: [S], data: new Float32Array(S).map((_, s) => s / 8), units: 's' });
  await sink.addArray({ name: 'paths/delayS', dtype: 'float64', shape: [3], data: Float64Array.of(1e-8, 2.5e-8, 1 / 3), units: 's' });
  await sink.addArray({ name: 'paths/aodDeg', dtype: 'float64', shape: [3, 2], data: Float64Array.of(10, 0, -45.5, 3, 180, -90), units: 'deg' });
  await sink.addArray({ name: 'paths/kind', dtype: 'string', shape: [3], strings: KINDS, units: '1' });
  await sink.addArray({ name: 'paths/order', dtype: 'int32', shape: [3], data: Int32Array.of(0, 1, -(2 ** 31)), units: '1' });
  await sink.addArray({ name: 'paths/visible', dtype: 'uint8', shape: [3], data: Uint8Array.of(1, 0, 255), units: '1' });
  await sink.addArray({ name: 'truth/id', dtype: 'int64', shape: [2], data: BigInt64Array.of(-(2n ** 62n), 2n ** 53n + 1n), units: '1' });
  await sink.addArray({ name: 'truth/empty', dtype: 'float64', shape: [0, 2], data: new Float64Array(0), units: 'm' });
  await sink.setAttribute({ name: 'carrierHz', dtype: 'float64', value: 28e9 });
  await sink.setAttribute({ name: 'seed', dtype: 'int64', value: 2 ** 53 - 1 });
  await sink.setAttribute({ name: 'formatVersion', dtype: 'int32', value: 1 });
  await sink.setAttribute({ name: 'pathweaveVersion', dtype: 'string', value: '0.1.0' });
  await sink.setAttribute({ name: 'scenario', dtype: 'string', value: '{"carrierHz": 28e9, "note": "µ"}' });
}

/** h5py: every dataset (dtype, shape, values, units) and every root attribute (type, value). */
const READ_ALL = `
import json, sys, h5py, numpy as np
out = {'datasets': {}, 'attrs': {}}
with h5py.File(sys.argv[1], 'r') as f:
    def visit(name, obj):
        if not isinstance(obj, h5py.Dataset):
            return
        a = obj.asstr()[()] if h5py.check_string_dtype(obj.dtype) else obj[()]
        if a.dtype.kind == 'c':
            v = np.stack([a.real.ravel(), a.imag.ravel()], axis=1).astype(float).tolist()
        elif a.dtype.kind in 'iu' and a.dtype.itemsize == 8:
            v = [str(x) for x in a.ravel().tolist()]
        else:
            v = a.ravel().tolist()
        out['datasets'][name] = {'dtype': a.dtype.str, 'shape': list(a.shape), 'values': v,
                                 'units': obj.attrs['units'], 'unitsType': type(obj.attrs['units']).__name__,
                                 'chunks': obj.chunks, 'compression': obj.compression}
    f.visititems(visit)
    for k, v in f.attrs.items():
        out['attrs'][k] = {'type': type(v).__name__, 'value': v if isinstance(v, str) else str(v)}
print(json.dumps(out))
`;

interface Read {
  datasets: Record<
    string,
    { dtype: string; shape: number[]; values: unknown[]; units: string; unitsType: string; chunks: number[] | null; compression: string | null }
  >;
  attrs: Record<string, { type: string; value: string }>;
}

function pairs(v: Float32Array | Float64Array): number[][] {
  const out: number[][] = [];
  for (let j = 0; j < v.length; j += 2) out.push([v[j] as number, v[j + 1] as number]);
  return out;
}

describe.runIf(hasPython('h5py', 'numpy'))('HDF5 read by h5py on HDF5 1.10 (reference reader, C)', () => {
  it.each(['complex64', 'complex128'] as const)('reads every %s dataset, units and attribute with the right type and value', async (dtype) => {
    const path = join(dir, `sample-${dtype}.h5`);
    const sink = await openHdf5Sink(path);
    await writeSample(sink, dtype);
    const bytes = await sink.commit();
    expect(bytes).toBe(readFileSync(path).length);
    const got = pythonJson<Read>(READ_ALL, [path]);
    expect(Object.keys(got.datasets).sort()).toEqual(
      [
        'H',
        'frequenciesHz',
        'gains',
        'paths/aodDeg',
        'paths/delayS',
        'paths/kind',
        'paths/order',
        'paths/visible',
        'subframeTimesS',
        'truth/empty',
        'truth/id',
      ].sort(),
    );
    // The r/i compound is read by h5py as complex (h5py docs, "complex numbers", M).
    const H = got.datasets.H;
    expect(H?.dtype).toBe(dtype === 'complex64' ? '<c8' : '<c16');
    expect(H?.shape).toEqual([S, K, NR, NT]);
    expect(H?.values).toEqual(pairs(tensorValues(dtype === 'complex64' ? Float32Array : Float64Array)));
    expect(H?.chunks).toEqual([2, K, NR, NT]);
    expect(got.datasets.gains?.dtype).toBe('<c16');
    expect(got.datasets.gains?.values[5]).toEqual([10.25, -11.25]);
    expect(got.datasets.frequenciesHz).toMatchObject({ dtype: '<f8', values: [-240e3, -120e3, 0, 120e3], units: 'Hz', unitsType: 'str' });
    expect(got.datasets.subframeTimesS).toMatchObject({ dtype: '<f4', shape: [S], units: 's' });
    expect(got.datasets['paths/delayS']?.values).toEqual([1e-8, 2.5e-8, 1 / 3]);
    expect(got.datasets['paths/aodDeg']).toMatchObject({ shape: [3, 2], values: [10, 0, -45.5, 3, 180, -90], units: 'deg' });
    expect(got.datasets['paths/kind']).toMatchObject({ shape: [3], values: KINDS });
    expect(got.datasets['paths/order']).toMatchObject({ dtype: '<i4', values: [0, 1, -(2 ** 31)] });
    expect(got.datasets['paths/visible']).toMatchObject({ dtype: '|u1', values: [1, 0, 255] });
    expect(got.datasets['truth/id']).toMatchObject({ dtype: '<i8', values: [String(-(2n ** 62n)), String(2n ** 53n + 1n)] });
    expect(got.datasets['truth/empty']).toMatchObject({ dtype: '<f8', shape: [0, 2], values: [], units: 'm' });
    for (const d of Object.values(got.datasets)) expect(d.unitsType).toBe('str');
    // Root attributes keep their explicit types: 28e9 stays float64 (an inferred int32 would
    // wrap), 2^53 - 1 stays int64 to the last digit.
    expect(got.attrs).toEqual({
      carrierHz: { type: 'float64', value: '28000000000.0' },
      seed: { type: 'int64', value: '9007199254740991' },
      formatVersion: { type: 'int32', value: '1' },
      pathweaveVersion: { type: 'str', value: '0.1.0' },
      scenario: { type: 'str', value: '{"carrierHz": 28e9, "note": "µ"}' },
    });
  });

  it('deflate: h5py reads the gzip-filtered tensor and the file is smaller', async () => {
    const plain = join(dir, 'plain.h5');
    const packed = join(dir, 'packed.h5');
    let sink = await openHdf5Sink(plain);
    await writeSample(sink, 'complex128');
    const plainBytes = await sink.commit();
    sink = await openHdf5Sink(packed);
    await writeSample(sink, 'complex128', 6);
    const packedBytes = await sink.commit();
    const a = pythonJson<Read>(READ_ALL, [plain]);
    const b = pythonJson<Read>(READ_ALL, [packed]);
    expect(b.datasets.H?.compression).toBe('gzip');
    expect(a.datasets.H?.compression).toBeNull();
    expect(b.datasets.H?.values).toEqual(a.datasets.H?.values);
    expect(packedBytes).toBeLessThan(plainBytes);
  });

  it('default chunks: about 1 MiB but never more rows than the tensor (a tiny file stays tiny)', async () => {
    const path = join(dir, 'tiny.h5');
    const sink = await openHdf5Sink(path);
    await sink.beginTensor({ name: 'H', dtype: 'complex64', shape: [2, 1], units: '1' });
    await sink.writeRows(Float32Array.of(1, 0, 0, 1));
    const bytes = await sink.commit();
    expect(bytes).toBeLessThan(16 << 10); // a 131072-row chunk (1 MiB) would be allocated whole
    const got = pythonJson<{ chunks: number[]; values: number[][] }>(
      `import json,sys,h5py; d=h5py.File(sys.argv[1])['H']; a=d[()]; print(json.dumps({'chunks': d.chunks, 'values': [[float(x.real), float(x.imag)] for x in a.ravel()]}))`,
      [path],
    );
    expect(got).toEqual({
      chunks: [2, 1],
      values: [
        [1, 0],
        [0, 1],
      ],
    });
  });

  it('pieces of whole rows (maxWriteBytes smaller than a block) give the same data', async () => {
    const path = join(dir, 'pieces.h5');
    const sink = await openHdf5Sink(path, { maxWriteBytes: 1 }); // one row per H5Dwrite
    await writeSample(sink, 'complex64');
    await sink.commit();
    expect(pythonJson<Read>(READ_ALL, [path]).datasets.H?.values).toEqual(pairs(tensorValues(Float32Array)));
  });
});

describe.runIf(hasCommand('h5dump'))('HDF5 header listed by h5dump -H (HDF5 1.10 tools, C)', () => {
  it('lists the datasets, the groups and the compound r/i type', async () => {
    const path = join(dir, 'dump.h5');
    const sink = await openHdf5Sink(path);
    await writeSample(sink, 'complex64');
    await sink.commit();
    const text = execFileSync('h5dump', ['-H', path], { encoding: 'utf8' });
    expect(text).toMatch(/DATASET "H" \{\s*DATATYPE\s+H5T_COMPOUND \{\s*H5T_IEEE_F32LE "r";\s*H5T_IEEE_F32LE "i";\s*\}/);
    expect(text).toMatch(/DATASET "gains" \{\s*DATATYPE\s+H5T_COMPOUND \{\s*H5T_IEEE_F64LE "r";\s*H5T_IEEE_F64LE "i";\s*\}/);
    expect(text).toContain('DATASPACE  SIMPLE { ( 7, 4, 2, 3 ) / ( H5S_UNLIMITED, 4, 2, 3 ) }');
    expect(text).toMatch(/GROUP "paths" \{[\s\S]*DATASET "delayS"[\s\S]*DATASET "kind"/);
    expect(text).toMatch(/ATTRIBUTE "seed" \{\s*DATATYPE\s+H5T_STD_I64LE\s*DATASPACE\s+SCALAR/);
    expect(text).toMatch(/ATTRIBUTE "carrierHz" \{\s*DATATYPE\s+H5T_IEEE_F64LE\s*DATASPACE\s+SCALAR/);
    for (const name of ['H', 'frequenciesHz', 'gains', 'subframeTimesS', 'delayS', 'aodDeg', 'kind', 'order', 'visible', 'id', 'empty']) {
      expect(text).toContain(`DATASET "${name}"`);
    }
    expect(text.match(/ATTRIBUTE "units"/g)?.length).toBe(11);
  });
});

describe('HDF5 atomic commit and errors', () => {
  it('abort leaves no file and keeps an existing file of that name', async () => {
    const path = join(dir, 'kept.h5');
    writeFileSync(path, 'earlier run');
    const sink = await openHdf5Sink(path);
    await sink.beginTensor({ name: 'H', dtype: 'complex64', shape: [S, K, NR, NT], units: '1' });
    await sink.writeRows(tensorValues(Float32Array).subarray(0, ROW) as Float32Array);
    expect(readdirSync(dir).filter((n) => n.startsWith('.kept.h5.')).length).toBe(1); // the temporary file
    await sink.abort();
    await sink.abort();
    expect(readFileSync(path, 'utf8')).toBe('earlier run');
    expect(readdirSync(dir).filter((n) => n.startsWith('.kept.h5.'))).toEqual([]);
  });

  it('refuses wrong inputs with the function name and the value', async () => {
    const sink = await openHdf5Sink(join(dir, 'errors.h5'));
    await sink.addArray({ name: 'paths/delayS', dtype: 'float64', shape: [1], data: Float64Array.of(1), units: 's' });
    await expect(sink.addArray({ name: 'paths/delayS/x', dtype: 'float64', shape: [1], data: Float64Array.of(1), units: 's' })).rejects.toThrow(
      'Hdf5Sink.addArray(): name "paths/delayS/x" needs group paths/delayS, which is a dataset',
    );
    await expect(sink.addArray({ name: 'paths', dtype: 'float64', shape: [1], data: Float64Array.of(1), units: 's' })).rejects.toThrow(
      'Hdf5Sink.addArray(): name "paths" is already in this file',
    );
    await expect(sink.beginTensor({ name: 'H', dtype: 'complex64', shape: [S, 0], units: '1' })).rejects.toThrow(
      'Hdf5Sink.beginTensor(): axes after the subframe axis must be non-empty for a chunked dataset, got [7, 0]',
    );
    await sink.setAttribute({ name: 'seed', dtype: 'int64', value: 1 });
    await expect(sink.setAttribute({ name: 'seed', dtype: 'int64', value: 2 })).rejects.toThrow('Hdf5Sink.setAttribute(): attribute "seed" is already set');
    await expect(sink.setAttribute({ name: 'n', dtype: 'int32', value: 2 ** 31 })).rejects.toThrow(
      'Hdf5Sink.setAttribute(): attribute n of dtype int32 needs an integer in [-2^31, 2^31), got 2147483648',
    );
    await sink.beginTensor({ name: 'H', dtype: 'complex128', shape: [2, 1], units: '1' });
    await sink.writeRows(Float64Array.of(1, 2));
    await expect(sink.commit()).rejects.toThrow('Hdf5Sink.commit(): the tensor has 1 of 2 subframes');
    await sink.abort();
    await expect(sink.writeRows(Float64Array.of(1, 2))).rejects.toThrow('Hdf5Sink.writeRows(): the sink is aborted, no more writes');
    expect(readdirSync(dir).filter((n) => n.includes('errors.h5'))).toEqual([]);
  });
});
