/**
 * inspect: singular values through the real embedding against numpy.linalg.svd of the complex
 * matrix (C), the numerical rank against numpy.linalg.matrix_rank's default tolerance (C), the
 * summary of a generated file (mean power, conditioning over the sampled matrices) against numpy
 * reading the same file, for .npy, .npz and .h5.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { generate } from '../src/dataset/generate.js';
import { complexSingularValues, inspectFile, sampleIndices, spreadOf } from '../src/inspect/inspect.js';
import { parseScenarioText } from '../src/scenario/validate.js';
import { RandomStream } from '@pathweave/core';
import { hasPython, pythonJson } from '../../../test/support/python.js';
import { ROOT, tempDir } from '../../../test/support/run.js';

describe('complexSingularValues (real embedding [[Re, -Im], [Im, Re]])', () => {
  it.runIf(hasPython('numpy'))('equals numpy.linalg.svd of the complex matrix over a sweep of shapes (C, 1e-12 relative)', () => {
    const rng = new RandomStream(7, 'inspect-test');
    const cases: { Nr: number; Nt: number; data: number[] }[] = [];
    for (const [Nr, Nt] of [
      [1, 1],
      [1, 4],
      [4, 1],
      [2, 2],
      [3, 5],
      [4, 32],
      [8, 16],
      [16, 8],
    ] as const) {
      cases.push({ Nr, Nt, data: Array.from({ length: 2 * Nr * Nt }, () => rng.nextNormal()) });
    }
    // A rank-1 matrix (outer product): one non-zero singular value.
    const u = [1, 0.5, -2, 0.25],
      v = [0.3, -1, 2, 1, -0.5, 0.7];
    cases.push({ Nr: 2, Nt: 3, data: Array.from({ length: 12 }, (_, i) => (i % 2 === 0 ? u[Math.floor(i / 6) * 2]! * v[(Math.floor(i / 2) % 3) * 2]! : 0)) });
    const ref = pythonJson<number[][]>(
      `import sys, json, numpy as np
cases = json.loads(sys.stdin.read())
out = []
for c in cases:
    a = np.array(c['data']).reshape(c['Nr'], c['Nt'], 2)
    out.append(np.linalg.svd(a[..., 0] + 1j * a[..., 1], compute_uv=False).tolist())
print(json.dumps(out))`,
      [],
      JSON.stringify(cases),
    );
    cases.forEach((c, i) => {
      const got = complexSingularValues(Float64Array.from(c.data), 0, c.Nr, c.Nt);
      expect(got).toHaveLength(Math.min(c.Nr, c.Nt));
      got.forEach((s, k) => expect(Math.abs(s - ref[i]![k]!)).toBeLessThanOrEqual(1e-12 * ref[i]![0]!));
    });
  });

  it('refuses a matrix beyond the data', () => {
    expect(() => complexSingularValues(new Float64Array(6), 0, 2, 2)).toThrow('complexSingularValues(): 2 x 2 values at offset 0 exceed the 6 numbers given');
  });
});

describe('sampling and spread', () => {
  it('sampleIndices: evenly spaced, first and last included; all when few', () => {
    expect(sampleIndices(5, 8)).toEqual([0, 1, 2, 3, 4]);
    const s = sampleIndices(1000, 16);
    expect(s[0]).toBe(0);
    expect(s[15]).toBe(999);
    for (let i = 1; i < 16; i++) expect(Math.abs(s[i]! - s[i - 1]! - 999 / 15)).toBeLessThanOrEqual(1);
  });

  it.runIf(hasPython('numpy'))('spreadOf: median as numpy.median (C)', () => {
    const sets = [[3, 1, 2], [4, 1, 3, 2], [5], [1e-3, 7, -2, 9, 9, 0.5]];
    const ref = pythonJson<number[]>(
      `import json, sys, numpy as np\nprint(json.dumps([float(np.median(s)) for s in json.loads(sys.stdin.read())]))`,
      [],
      JSON.stringify(sets),
    );
    sets.forEach((s, i) => expect(spreadOf(s)).toEqual({ min: Math.min(...s), median: ref[i], max: Math.max(...s) }));
  });
});

describe('inspectFile on generated files', () => {
  const raw = JSON.parse(readFileSync(join(ROOT, 'examples', 'street-corner-28ghz.json'), 'utf8')) as Record<string, any>;
  raw.band.subcarriers = 16;
  raw.timing.subframes = 30;
  const text = JSON.stringify(raw);
  const scenario = parseScenarioText(text).scenario;

  it.runIf(hasPython('numpy')).each(['npy', 'npz', 'h5'] as const)(
    '.%s: mean power and conditioning equal numpy on the sampled matrices (C)',
    async (format) => {
      const dir = tempDir();
      const out = join(dir, `run.${format}`);
      await generate(scenario, text, { out, format, workers: 1 });
      const { data, text: summary } = await inspectFile(out, { subframeSamples: 5, binSamples: 3 });
      const c = data.conditioning as {
        subframes: number[];
        bins: number[];
        conditionNumber: { min: number; median: number; max: number };
        rank: { min: number; max: number };
      };
      expect(c.subframes).toEqual([0, 7, 15, 22, 29]);
      expect(c.bins).toEqual([0, 8, 15]);
      const ref = pythonJson<{ mean: number; cond: number[]; rank: number[] }>(
        `import sys, json, numpy as np
p, fmt = sys.argv[1], sys.argv[2]
H = np.load(p) if fmt == 'npy' else (np.load(p)['H'] if fmt == 'npz' else None)
if H is None:
    import h5py
    H = h5py.File(p, 'r')['H'][()]
subs, bins = json.loads(sys.argv[3]), json.loads(sys.argv[4])
M = H.reshape(H.shape[0], -1, H.shape[-2], H.shape[-1])
mats = [M[s, b].astype(np.complex128) for s in subs for b in bins]
print(json.dumps({'mean': float(np.mean(np.abs(H.astype(np.complex128)) ** 2)),
  'cond': [float(np.linalg.cond(m)) for m in mats],
  'rank': [int(np.linalg.matrix_rank(m, tol=np.linalg.svd(m, compute_uv=False).max() * max(m.shape) * np.finfo(np.float32).eps)) for m in mats]}))`,
        [out, format, JSON.stringify(c.subframes), JSON.stringify(c.bins)],
      );
      expect(Math.abs((data.meanPower as number) - ref.mean)).toBeLessThanOrEqual(1e-12 * ref.mean);
      const cond = spreadOf(ref.cond);
      for (const k of ['min', 'median', 'max'] as const) expect(Math.abs(c.conditionNumber[k] - cond[k])).toBeLessThanOrEqual(1e-9 * cond[k]);
      expect(c.rank).toEqual(spreadOf(ref.rank));
      // The text names the arrays, the scenario and the paths.
      expect(summary).toContain('street-corner-28ghz: 28.000 GHz, 30 subframes of 1 ms');
      expect(summary).toMatch(/H\s+complex64\s+\[30, 16, 4, 32\]/);
      expect(summary).toMatch(/los\s+los\s+80\.696\s+-89\.07/);
      expect(summary).toContain('whose singular values are those of H, each twice');
    },
  );

  it('refuses a file that is not one pathweave writes', async () => {
    const dir = tempDir();
    const bad = join(dir, 'x.npz');
    (await import('node:fs')).writeFileSync(bad, 'not a dataset');
    await expect(inspectFile(bad)).rejects.toThrow(/x\.npz: is neither an NPY, a zip \(\.npz\) nor an HDF5 file/);
  });
});
