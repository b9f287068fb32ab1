/**
 * Files written by `generate` read by outside references: numpy (.npy, .npz), h5py and h5dump
 * (.h5) return the same values as the library computes in memory (fillBlock and sideArrays of
 * generate.ts), for a walking receiver (path tables with the geometry-epoch axis) and for two
 * receivers (user axis). Compared as sha256 of each array's bytes in the written dtype
 * (numpy's tobytes of a C-contiguous array, C), strings as lists, and with h5dump's text at 17
 * significant digits (exact for float64).
 */
import { createHash } from 'node:crypto';
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { buildScenario } from '../packages/io/src/scenario/build.js';
import { bytesOf } from '../packages/io/src/formats/npy.js';
import type { NamedArray } from '../packages/io/src/formats/sink.js';
import { fillBlock, generate, maxPathCount, sideArrays } from '../packages/io/src/dataset/generate.js';
import { parseScenarioText } from '../packages/io/src/scenario/validate.js';
import { hasCommand, hasPython, pythonJson } from './support/python.js';
import { ROOT, tempDir } from './support/run.js';

function streetCorner(): Record<string, any> {
  const s = JSON.parse(readFileSync(join(ROOT, 'examples', 'street-corner-28ghz.json'), 'utf8')) as Record<string, any>;
  s.band.subcarriers = 8;
  s.timing.subframes = 23;
  s.fading = { model: 'gauss-markov', speedMps: 1.5 };
  return s;
}

const walking = streetCorner();
const twoUsers = (() => {
  const s = streetCorner();
  const rx = s.receiver;
  delete s.receiver;
  s.receivers = [
    { ...rx, id: 'walker' },
    { id: 'bench', position: [10, 8, 1.2], array: { kind: 'ula', elements: 4 } },
  ];
  return s;
})();

interface Expected {
  tensorName: string;
  arrays: NamedArray[];
}

/** The run computed in memory, independently of any file. */
function expected(raw: Record<string, any>): Expected {
  const text = JSON.stringify(raw);
  const scenario = parseScenarioText(text, 'test').scenario;
  const built = buildScenario(scenario);
  const S = scenario.timing.subframes;
  const tensor = new Float32Array(2 * S * built.valuesPerSubframe);
  const gainShape = [S, ...(built.multiUser ? [built.users.length] : []), maxPathCount(built)];
  const gains = new Float64Array(2 * gainShape.reduce((a, b) => a * b, 1));
  fillBlock(built, tensor, 0, S, gains);
  return {
    tensorName: 'H',
    arrays: [{ name: 'H', dtype: 'complex64', shape: built.shape, data: tensor, units: '1' }, ...sideArrays(built, 0, S, gains, gainShape)],
  };
}

const sha = (a: NamedArray): string => createHash('sha256').update(bytesOf(a.data!)).digest('hex');

/** Each array of a file: shape, dtype and sha256 of its bytes, or the strings. */
const DUMP = `
import sys, json, hashlib, numpy as np
path, fmt = sys.argv[1], sys.argv[2]
arrays = {}
if fmt == 'npy':
    arrays['H'] = np.load(path)
elif fmt == 'npz':
    z = np.load(path)
    arrays = {k: z[k] for k in z.files if z[k].ndim > 0}
else:
    import h5py
    f = h5py.File(path, 'r')
    f.visititems(lambda n, o: arrays.__setitem__(n, o[()]) if isinstance(o, h5py.Dataset) else None)
out = {}
for k, a in arrays.items():
    if a.dtype.kind in 'OSU':
        out[k] = {'shape': list(a.shape), 'strings': [x.decode() if isinstance(x, bytes) else str(x) for x in a.ravel().tolist()]}
    else:
        out[k] = {'shape': list(a.shape), 'dtype': a.dtype.name, 'sha256': hashlib.sha256(np.ascontiguousarray(a).tobytes()).hexdigest()}
print(json.dumps(out))
`;

const NUMPY_DTYPE: Record<string, string> = {
  complex64: 'complex64',
  complex128: 'complex128',
  float64: 'float64',
  float32: 'float32',
  uint8: 'uint8',
  int32: 'int32',
  int64: 'int64',
};

describe.each([
  ['a walking receiver (epoch axis)', walking],
  ['two receivers (user axis)', twoUsers],
] as const)('generate output read by numpy, h5py and h5dump: %s', (_label, raw) => {
  const exp = expected(raw);

  it.runIf(hasPython('numpy', 'h5py')).each(['npy', 'npz', 'h5'] as const)('.%s: every array equals the in-memory run', async (format) => {
    const dir = tempDir();
    const out = join(dir, `run.${format}`);
    const text = JSON.stringify(raw);
    await generate(parseScenarioText(text, 'test').scenario, text, { out, format, workers: 1 });
    const got = pythonJson<Record<string, { shape: number[]; dtype?: string; sha256?: string; strings?: string[] }>>(DUMP, [out, format]);
    const wanted = format === 'npy' ? exp.arrays.slice(0, 1) : exp.arrays;
    expect(Object.keys(got).sort()).toEqual(wanted.map((a) => a.name).sort());
    for (const a of wanted) {
      const g = got[a.name]!;
      expect(g.shape, a.name).toEqual(a.shape);
      if (a.dtype === 'string') expect(g.strings, a.name).toEqual(a.strings);
      else {
        expect(g.dtype, a.name).toBe(NUMPY_DTYPE[a.dtype]);
        expect(g.sha256, a.name).toBe(sha(a));
      }
    }
    // The layouts promised in docs/conventions.md: user axis after S, epoch axis in the path tables.
    const H = wanted[0]!;
    if (raw.receivers !== undefined) expect(H.shape).toEqual([23, 2, 8, 4, 32]);
    else expect(H.shape).toEqual([23, 8, 4, 32]);
    if (format !== 'npy') {
      const table = exp.arrays.find((a) => a.name === 'paths/delayS')!;
      const epochs = exp.arrays.find((a) => a.name === 'paths/epochTimesS')!;
      expect(table.shape.slice(0, -1)).toEqual([...(raw.receivers !== undefined ? [2] : []), epochs.shape[0]!]);
      expect(epochs.shape[0]).toBeGreaterThan(1); // the receiver moves: several geometry epochs
    }
  });

  it.runIf(hasCommand('h5dump'))('.h5 read by h5dump: path table (epoch axis), truth and one complex H entry as r/i', async () => {
    const dir = tempDir();
    const out = join(dir, 'run.h5');
    const text = JSON.stringify(raw);
    await generate(parseScenarioText(text, 'test').scenario, text, { out, format: 'h5', workers: 1 });
    const numbers = (args: string[]): number[] => {
      const dump = execFileSync('h5dump', ['-m', '%.17g', ...args, out], { encoding: 'utf8' });
      // The data block only (the dataset's `units` attribute follows it).
      const start = dump.indexOf('DATA {');
      const attr = dump.indexOf('ATTRIBUTE', start);
      const data = dump.slice(start, attr < 0 ? undefined : attr);
      return [...data.matchAll(/\(\d+(?:,\d+)*\):\s*([^\n]*)/g)]
        .flatMap((m) =>
          m[1]!
            .split(',')
            .map((x) => x.trim())
            .filter((x) => x !== '' && !x.startsWith('{') && !x.startsWith('}')),
        )
        .map((x) => (x === 'nan' || x === '-nan' ? NaN : Number(x)));
    };
    for (const name of ['paths/delayS', 'truth/delayS', 'truth/receiverPosition', 'subframeTimesS']) {
      const a = exp.arrays.find((x) => x.name === name)!;
      const got = numbers(['-d', `/${name}`]);
      expect(got, name).toEqual(Array.from(a.data as Float64Array));
    }
    // One complex value: the compound's r and i members (docs/datasets.md: r/i compound).
    const H = exp.arrays[0]!.data as Float32Array;
    const dump = execFileSync(
      'h5dump',
      ['-m', '%.9g', '-d', '/H', '-s', `0,${'0,'.repeat(exp.arrays[0]!.shape.length - 2)}0`, '-c', `1,${'1,'.repeat(exp.arrays[0]!.shape.length - 2)}1`, out],
      { encoding: 'utf8' },
    );
    expect(dump).toMatch(/H5T_IEEE_F32LE "r";\s*H5T_IEEE_F32LE "i";/);
    const ri = /\{\s*([-\d.e+]+),\s*([-\d.e+]+)\s*\}/.exec(dump.slice(dump.indexOf('DATA {')))!;
    // 9 significant digits round-trip a float32 exactly (IEEE 754: FLT_DECIMAL_DIG = 9, M).
    expect([Math.fround(Number(ri[1])), Math.fround(Number(ri[2]))]).toEqual([H[0], H[1]]);
  });
});
