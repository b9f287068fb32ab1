/**
 * The NPZ sink against numpy.load (numpy as the reference reader, C), against the zip format
 * (PKWARE APPNOTE.TXT), and for reproducibility and atomic commit.
 */
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { hasPython, pythonJson } from '../../../test/support/python.js';
import { npyHeader } from '../src/formats/npy.js';
import { openNpzSink } from '../src/formats/npz.js';
import type { DatasetSink } from '../src/formats/sink.js';

const dir = mkdtempSync(join(tmpdir(), 'pathweave-npz-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const S = 5;
const K = 3;
const NR = 2;
const NT = 2;
const ROW = 2 * K * NR * NT; // values per subframe (re/im interleaved)

/** Deterministic, non-trivial values (no randomness needed: they only have to differ). */
function tensorValues(): Float32Array {
  const v = new Float32Array(S * ROW);
  for (let j = 0; j < v.length; j++) v[j] = Math.fround(Math.sin(j * 0.37) * 10 + j / 7);
  return v;
}

const KINDS = ['los', 'wall-1', 'scatterer→ϵ', '😀'];

/** Write the sample file: tensor streamed in blocks of 2, 2 and 1 subframes, plus every dtype. */
async function writeSample(sink: DatasetSink): Promise<void> {
  const h = tensorValues();
  await sink.addArray({ name: 'frequenciesHz', dtype: 'float64', shape: [K], data: Float64Array.of(-120e3, 0, 120e3), units: 'Hz' });
  await sink.beginTensor({ name: 'H', dtype: 'complex64', shape: [S, K, NR, NT], units: '1' });
  await sink.writeRows(h.subarray(0, 2 * ROW));
  await sink.writeRows(h.subarray(2 * ROW, 4 * ROW));
  await sink.writeRows(h.subarray(4 * ROW));
  const gains = new Float64Array(2 * S * 2).map((_, j) => (j % 2 ? -1 : 1) * (j + 0.125));
  await sink.addArray({ name: 'gains', dtype: 'complex128', shape: [S, 2], data: gains, units: '1' });
  await sink.addArray({ name: 'subframeTimesS', dtype: 'float32', shape: [S], data: Float32Array.of(0, 0.125, 0.25, 0.375, 0.5), units: 's' });
  await sink.addArray({ name: 'paths/delayS', dtype: 'float64', shape: [4], data: Float64Array.of(1e-8, 2.5e-8, 3e-8, 1 / 3), units: 's' });
  await sink.addArray({ name: 'paths/kind', dtype: 'string', shape: [4], strings: KINDS, units: '1' });
  await sink.addArray({ name: 'paths/order', dtype: 'int32', shape: [2, 2], data: Int32Array.of(0, 1, -2, 2 ** 31 - 1), units: '1' });
  await sink.addArray({ name: 'paths/visible', dtype: 'uint8', shape: [4], data: Uint8Array.of(1, 0, 255, 1), units: '1' });
  await sink.addArray({ name: 'paths/id', dtype: 'int64', shape: [3], data: BigInt64Array.of(-(2n ** 62n), 2n ** 53n + 1n, 7n), units: '1' });
  await sink.setAttribute({ name: 'seed', dtype: 'int64', value: 2 ** 53 - 1 });
  await sink.setAttribute({ name: 'carrierHz', dtype: 'float64', value: 28e9 });
  await sink.setAttribute({ name: 'scenario', dtype: 'string', value: '{"carrierHz": 28e9, "note": "µ"}' });
}

async function writeSampleFile(path: string, options: Parameters<typeof openNpzSink>[1] = {}): Promise<number> {
  const sink = await openNpzSink(path, options);
  await writeSample(sink);
  return sink.commit();
}

/** numpy.load every key: dtype string, shape and values (complex as re/im pairs, int64 as text). */
const LOAD_ALL = `
import json, sys, numpy as np
out = {}
with np.load(sys.argv[1]) as f:
    for k in f.files:
        a = f[k]
        if a.dtype.kind == 'c':
            v = np.stack([a.real.ravel(), a.imag.ravel()], axis=1).astype(float).tolist()
        elif a.dtype.kind in 'iu' and a.dtype.itemsize == 8:
            v = [str(x) for x in a.ravel().tolist()]
        else:
            v = a.ravel().tolist()
        out[k] = {'dtype': a.dtype.str, 'shape': list(a.shape), 'values': v}
print(json.dumps(out))
`;

interface Loaded {
  dtype: string;
  shape: number[];
  values: unknown[];
}

describe.runIf(hasPython('numpy'))('NPZ read by numpy.load (numpy as reference reader, C)', () => {
  it('holds every array with its dtype, shape and values, strings included', async () => {
    const path = join(dir, 'sample.npz');
    const bytes = await writeSampleFile(path);
    expect(bytes).toBe(readFileSync(path).length);
    const got = pythonJson<Record<string, Loaded>>(LOAD_ALL, [path]);
    expect(Object.keys(got).sort()).toEqual(
      [
        'H',
        'carrierHz',
        'frequenciesHz',
        'gains',
        'paths/delayS',
        'paths/id',
        'paths/kind',
        'paths/order',
        'paths/visible',
        'scenario',
        'seed',
        'subframeTimesS',
      ].sort(),
    );
    const h = tensorValues();
    const pairs: number[][] = [];
    for (let j = 0; j < h.length; j += 2) pairs.push([h[j] as number, h[j + 1] as number]);
    // numpy complex64 is the same bytes as our interleaved Float32Array (numpy dtype docs, M).
    expect(got.H).toEqual({ dtype: '<c8', shape: [S, K, NR, NT], values: pairs });
    expect(got.gains?.dtype).toBe('<c16');
    expect(got.gains?.values[3]).toEqual([6.125, -7.125]);
    expect(got.frequenciesHz).toEqual({ dtype: '<f8', shape: [K], values: [-120e3, 0, 120e3] });
    expect(got.subframeTimesS).toEqual({ dtype: '<f4', shape: [S], values: [0, 0.125, 0.25, 0.375, 0.5] });
    expect(got['paths/delayS']?.values).toEqual([1e-8, 2.5e-8, 3e-8, 1 / 3]);
    // '<U{n}': n the longest string in code points; the emoji is one code point (UTF-32).
    expect(got['paths/kind']).toEqual({ dtype: '<U11', shape: [4], values: KINDS });
    expect(got['paths/order']).toEqual({ dtype: '<i4', shape: [2, 2], values: [0, 1, -2, 2 ** 31 - 1] });
    expect(got['paths/visible']).toEqual({ dtype: '|u1', shape: [4], values: [1, 0, 255, 1] });
    expect(got['paths/id']).toEqual({ dtype: '<i8', shape: [3], values: [String(-(2n ** 62n)), String(2n ** 53n + 1n), '7'] });
    // Attributes are 0-d arrays of their explicit dtype.
    expect(got.seed).toEqual({ dtype: '<i8', shape: [], values: [String(2 ** 53 - 1)] });
    expect(got.carrierHz).toEqual({ dtype: '<f8', shape: [], values: [28e9] });
    // 32 code points in that text.
    expect(got.scenario).toEqual({ dtype: '<U32', shape: [], values: ['{"carrierHz": 28e9, "note": "µ"}'] });
  });

  it('writes NPY headers numpy parses, 64-byte aligned, up to 32 axes', () => {
    // NPY format 1.0 (numpy.lib.format docs, M): magic, version 1.0, header padded so that the
    // whole header is a multiple of 64 bytes and ends in a newline.
    const shape = Array.from({ length: 32 }, (_, i) => (i < 3 ? i + 2 : 1)); // numpy's limit is 32 axes
    const header = npyHeader('<f8', shape);
    expect(header.length % 64).toBe(0);
    expect([header[6], header[7], header[header.length - 1]]).toEqual([1, 0, 0x0a]);
    const path = join(dir, 'header.npy');
    writeFileSync(path, Buffer.concat([header, Buffer.alloc(8 * shape.reduce((a, b) => a * b, 1))]));
    const got = pythonJson<{ shape: number[]; descr: string }>(
      `import json,sys,numpy as np; a=np.load(sys.argv[1]); print(json.dumps({'shape': list(a.shape), 'descr': a.dtype.str}))`,
      [path],
    );
    expect(got).toEqual({ shape, descr: '<f8' });
  });

  it('forceZip64 writes a real ZIP64 archive that numpy opens', async () => {
    const plain = join(dir, 'plain.npz');
    const forced = join(dir, 'zip64.npz');
    await writeSampleFile(plain);
    await writeSampleFile(forced, { forceZip64: true });
    // Zip64 end of central directory record signature 0x06064b50 and its locator 0x07064b50
    // (PKWARE APPNOTE.TXT 4.3.14 and 4.3.15, M), little-endian in the file.
    const record = Buffer.from([0x50, 0x4b, 0x06, 0x06]);
    const locator = Buffer.from([0x50, 0x4b, 0x06, 0x07]);
    const forcedBytes = readFileSync(forced);
    expect(forcedBytes.includes(record)).toBe(true);
    expect(forcedBytes.includes(locator)).toBe(true);
    expect(readFileSync(plain).includes(record)).toBe(false);
    const a = pythonJson<Record<string, Loaded>>(LOAD_ALL, [plain]);
    const b = pythonJson<Record<string, Loaded>>(LOAD_ALL, [forced]);
    expect(b).toEqual(a);
  });

  it('deflate: numpy reads the deflated entries (method 8) and the file is smaller', async () => {
    const stored = join(dir, 'stored.npz');
    const deflated = join(dir, 'deflated.npz');
    const storedBytes = await writeSampleFile(stored);
    const deflatedBytes = await writeSampleFile(deflated, { deflate: 6 });
    expect(deflatedBytes).toBeLessThan(storedBytes);
    // zipfile.ZipInfo.compress_type: 0 stored, 8 deflated (APPNOTE 4.4.5, M).
    const methods = pythonJson<number[]>(
      `import json,sys,zipfile; print(json.dumps(sorted({i.compress_type for i in zipfile.ZipFile(sys.argv[1]).infolist()})))`,
      [deflated],
    );
    expect(methods).toEqual([8]);
    const storedMethods = pythonJson<number[]>(
      `import json,sys,zipfile; print(json.dumps(sorted({i.compress_type for i in zipfile.ZipFile(sys.argv[1]).infolist()})))`,
      [stored],
    );
    expect(storedMethods).toEqual([0]);
    expect(pythonJson(LOAD_ALL, [deflated])).toEqual(pythonJson(LOAD_ALL, [stored]));
  });
});

describe('NPZ reproducibility and atomic commit', () => {
  it('the same inputs give the same bytes, in any time zone', async () => {
    const a = join(dir, 'same-a.npz');
    const b = join(dir, 'same-b.npz');
    const zone = process.env.TZ;
    try {
      process.env.TZ = 'UTC';
      await writeSampleFile(a);
      process.env.TZ = 'Asia/Kolkata';
      await writeSampleFile(b);
    } finally {
      if (zone === undefined) delete process.env.TZ;
      else process.env.TZ = zone;
    }
    expect(readFileSync(b).equals(readFileSync(a))).toBe(true);
    // The first local header's DOS time and date (APPNOTE 4.3.7: offsets 10 and 12, M) are
    // 1980-02-01 00:00: time 0, date ((1980 - 1980) << 9) | (2 << 5) | 1 = 0x41 (APPNOTE 4.4.6, M).
    const bytes = readFileSync(a);
    expect(bytes.readUInt32LE(0)).toBe(0x04034b50);
    expect([bytes.readUInt16LE(10), bytes.readUInt16LE(12)]).toEqual([0, 0x41]);
  });

  it('abort leaves no file and keeps an existing file of that name', async () => {
    const path = join(dir, 'kept.npz');
    writeFileSync(path, 'earlier run');
    const sink = await openNpzSink(path);
    await sink.beginTensor({ name: 'H', dtype: 'complex64', shape: [S, K, NR, NT], units: '1' });
    await sink.writeRows(tensorValues().subarray(0, ROW));
    await sink.abort();
    await sink.abort(); // safe twice
    expect(readFileSync(path, 'utf8')).toBe('earlier run');
    expect(readdirSync(dir).filter((n) => n.startsWith('.kept.npz.'))).toEqual([]);
    const fresh = join(dir, 'never.npz');
    const other = await openNpzSink(fresh);
    await other.addArray({ name: 'x', dtype: 'float64', shape: [1], data: Float64Array.of(1), units: '1' });
    await other.abort();
    expect(readdirSync(dir).filter((n) => n.includes('never.npz'))).toEqual([]);
  });

  it('refuses wrong inputs with the function name and the value', async () => {
    const sink = await openNpzSink(join(dir, 'errors.npz'));
    await expect(sink.writeRows(new Float32Array(ROW))).rejects.toThrow('NpzSink.writeRows(): call beginTensor() first');
    await sink.beginTensor({ name: 'H', dtype: 'complex64', shape: [2, K, NR, NT], units: '1' });
    await expect(sink.writeRows(new Float64Array(ROW))).rejects.toThrow(
      'NpzSink.writeRows(): rows of a complex64 tensor must be a Float32Array, got Float64Array',
    );
    await expect(sink.writeRows(new Float32Array(ROW + 2))).rejects.toThrow(
      `NpzSink.writeRows(): block of ${ROW + 2} values is not whole rows of ${ROW} values (re/im interleaved)`,
    );
    await expect(sink.writeRows(new Float32Array(3 * ROW))).rejects.toThrow("NpzSink.writeRows(): 0 + 3 rows exceed the tensor's 2 subframes");
    await expect(sink.addArray({ name: 'H', dtype: 'float64', shape: [1], data: Float64Array.of(1), units: '1' })).rejects.toThrow(
      'NpzSink.addArray(): name "H" is already in this file',
    );
    await expect(sink.addArray({ name: 'x', dtype: 'float64', shape: [2], data: Float64Array.of(1), units: '1' })).rejects.toThrow(
      'NpzSink.addArray(): x.data has 1 values, shape [2] of float64 needs 2',
    );
    await expect(sink.addArray({ name: '../x', dtype: 'float64', shape: [1], data: Float64Array.of(1), units: '1' })).rejects.toThrow(
      'NpzSink.addArray(): name must be "/"-separated segments',
    );
    await expect(sink.setAttribute({ name: 'seed', dtype: 'int64', value: 2 ** 53 })).rejects.toThrow(
      'NpzSink.setAttribute(): attribute seed of dtype int64 needs a safe integer (|v| < 2^53), got 9007199254740992',
    );
    await sink.writeRows(new Float32Array(ROW));
    await expect(sink.commit()).rejects.toThrow('NpzSink.commit(): the tensor has 1 of 2 subframes');
    await sink.abort();
    expect(readdirSync(dir).filter((n) => n.includes('errors.npz'))).toEqual([]);
  });
});
