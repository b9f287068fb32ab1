import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { decodeNpy, encodeNpy, npyHeader, parseNpyHeader } from '../src/formats/npy.js';
import type { ArrayData, DType } from '../src/formats/sink.js';
import { hasPython, pythonJson } from '../../../test/support/python.js';
import { tempDir } from '../../../test/support/run.js';

const samples: { dtype: Exclude<DType, 'string'>; shape: number[]; data: ArrayData }[] = [
  { dtype: 'complex64', shape: [2, 3], data: Float32Array.from({ length: 12 }, (_, i) => i * 0.5 - 2.25) },
  { dtype: 'complex128', shape: [2, 1, 2], data: Float64Array.from({ length: 8 }, (_, i) => Math.PI * (i - 3)) },
  { dtype: 'float32', shape: [5], data: Float32Array.of(1.5, -2, 3e-8, 4e30, -0) },
  { dtype: 'float64', shape: [3, 2], data: Float64Array.of(1e-300, -1e300, 0.1, 0.2, 0.3, 28e9) },
  { dtype: 'int32', shape: [4], data: Int32Array.of(-2147483648, -1, 0, 2147483647) },
  { dtype: 'float64', shape: [0, 4], data: new Float64Array(0) },
];

describe('NPY header (NPY format specification, numpy.lib.format)', () => {
  it('pads the header with spaces and a newline so the data start at a multiple of 64', () => {
    for (const shape of [[1], [3, 4], [600, 256, 16, 64], []]) {
      const h = npyHeader('<c8', shape);
      expect(h.length % 64).toBe(0);
      expect(h[h.length - 1]).toBe(0x0a);
      expect(Array.from(h.subarray(0, 8))).toEqual([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0]);
      expect(parseNpyHeader(h).shape).toEqual(shape);
    }
    expect(new TextDecoder().decode(npyHeader('<f8', [7]))).toContain("'shape': (7,), }"); // 1-tuples keep their comma
  });

  it('round-trips every dtype in memory', () => {
    for (const s of samples) {
      const back = decodeNpy(encodeNpy(s));
      expect(back.dtype).toBe(s.dtype);
      expect(back.shape).toEqual(s.shape);
      expect(Array.from(back.data as Float64Array)).toEqual(Array.from(s.data as Float64Array));
    }
  });

  it('refuses a data length that does not match the shape', () => {
    expect(() => encodeNpy({ dtype: 'float64', shape: [3], data: new Float64Array(2) })).toThrow('encodeNpy(): shape [3] of float64 needs 24 bytes, got 16');
  });

  it.runIf(hasPython('numpy'))('numpy reads every dtype with the right dtype, shape and values, in versions 1.0 and 2.0', () => {
    const dir = tempDir();
    mkdirSync(dir, { recursive: true });
    const files: { file: string; dtype: string; shape: number[]; values: number[] }[] = [];
    samples.forEach((s, i) => {
      for (const v2 of [false, true]) {
        const file = join(dir, `a${i}-${v2 ? 2 : 1}.npy`);
        writeFileSync(file, encodeNpy(s, { forceVersion2: v2 }));
        files.push({
          file,
          dtype: { complex64: 'complex64', complex128: 'complex128', float32: 'float32', float64: 'float64', int32: 'int32', uint8: 'uint8', int64: 'int64' }[
            s.dtype
          ],
          shape: s.shape,
          values: Array.from(s.data as Float64Array),
        });
      }
    });
    // numpy as the reference reader (numpy.load); complex values are compared as re/im pairs.
    const result = pythonJson<{ dtype: string; shape: number[]; values: number[]; version: number[] }[]>(
      `import json, sys, numpy as np
from numpy.lib import format as F
out = []
for f in json.load(sys.stdin):
    a = np.load(f['file'])
    with open(f['file'], 'rb') as fh:
        v = list(F.read_magic(fh))
    flat = a.ravel()
    vals = np.column_stack([flat.real, flat.imag]).ravel().tolist() if np.iscomplexobj(a) else flat.tolist()
    out.append({'dtype': str(a.dtype), 'shape': list(a.shape), 'values': vals, 'version': v})
print(json.dumps(out))`,
      [],
      JSON.stringify(files),
    );
    result.forEach((r, i) => {
      const f = files[i]!;
      expect(r.dtype).toBe(f.dtype);
      expect(r.shape).toEqual(f.shape);
      expect(r.version).toEqual([i % 2 === 0 ? 1 : 2, 0]);
      const expected = f.dtype === 'float32' || f.dtype === 'complex64' ? Array.from(Float32Array.from(f.values)) : f.values;
      expect(r.values.map((x) => (Object.is(x, -0) ? 0 : x))).toEqual(expected.map((x) => (Object.is(x, -0) ? 0 : x)));
    });
  });
});
