/**
 * Sharded runs and merge (docs/conventions.md, "Command line" and "Reproducibility"): `--shard I/N` and
 * `--shard auto` take subframes floor(I S / N) to floor((I+1) S / N) - 1; every part writes its
 * manifest; a rerun skips a verified part; merge refuses gaps, overlaps, foreign or tampered
 * parts (exit 2) and otherwise writes a file whose tensor equals the unsharded run's byte for
 * byte, checked by numpy and h5py (C), with the per-subframe side arrays concatenated.
 */
import { closeSync, existsSync, openSync, readFileSync, readSync, readdirSync, statSync, truncateSync, writeSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { parseShard, shardRange } from '../packages/io/src/cli/args.js';
import { hasPython, pythonJson } from './support/python.js';
import { ROOT, runCli, tempDir, writeScenario } from './support/run.js';

/** A walking receiver on the 28 GHz street corner, Gauss-Markov gains: the geometry moves (epoch axis). */
function movingScenario(subframes: number): Record<string, any> {
  const s = JSON.parse(readFileSync(join(ROOT, 'examples', 'street-corner-28ghz.json'), 'utf8')) as Record<string, any>;
  s.band.subcarriers = 8;
  s.timing.subframes = subframes;
  s.fading = { model: 'gauss-markov', speedMps: 1.5 };
  return s;
}

/** The docs/conventions.md formula, in exact integer arithmetic (BigInt), independent of shardRange. */
function formulaRange(i: number, n: number, s: number): [number, number] {
  return [Number((BigInt(i) * BigInt(s)) / BigInt(n)), Number((BigInt(i + 1) * BigInt(s)) / BigInt(n))];
}

describe('--shard ranges (docs/conventions.md: floor(I S / N) to floor((I+1) S / N) - 1)', () => {
  it('I/N tiles 0..S-1 for a sweep of S and N, matching the formula', () => {
    for (const S of [1, 7, 41, 100, 1000, 2 ** 31 + 11])
      for (const N of [1, 2, 3, 7, 8, 64]) {
        let next = 0;
        for (let I = 0; I < N; I++) {
          const r = shardRange(I, N, S);
          expect(r).toEqual(formulaRange(I, N, S));
          expect(r[0]).toBe(next); // no gap, no overlap
          expect(r[1] - r[0]).toBeGreaterThanOrEqual(Math.floor(S / N)); // sizes differ by at most one
          expect(r[1] - r[0]).toBeLessThanOrEqual(Math.ceil(S / N));
          next = r[1];
        }
        expect(next).toBe(S);
      }
  });

  it('auto: Slurm index (ID - MIN) / STEP, for arrays 0-7, 1-8 and 3-17:2', () => {
    for (const [min, step, count] of [
      [0, 1, 8],
      [1, 1, 8],
      [3, 2, 8],
    ] as const)
      for (let I = 0; I < count; I++) {
        const env = {
          SLURM_ARRAY_TASK_ID: String(min + I * step),
          SLURM_ARRAY_TASK_MIN: String(min),
          SLURM_ARRAY_TASK_STEP: String(step),
          SLURM_ARRAY_TASK_COUNT: String(count),
        };
        const shard = parseShard('auto', env);
        expect(shard).toEqual({ index: I, count, source: 'Slurm job array' });
        expect(shardRange(shard.index, shard.count, 1000)).toEqual(formulaRange(I, count, 1000));
      }
    // auto/N overrides the count Slurm gives.
    expect(parseShard('auto/4', { SLURM_ARRAY_TASK_ID: '3', SLURM_ARRAY_TASK_COUNT: '9' })).toMatchObject({ index: 3, count: 4 });
    expect(() => parseShard('auto', { SLURM_ARRAY_TASK_ID: '4', SLURM_ARRAY_TASK_MIN: '3', SLURM_ARRAY_TASK_STEP: '2', SLURM_ARRAY_TASK_COUNT: '8' })).toThrow(
      'SLURM_ARRAY_TASK_ID 4 is not MIN 3 plus a multiple of STEP 2',
    );
  });

  it('auto/N: Kubernetes JOB_COMPLETION_INDEX from 0 to N-1; auto alone is refused', () => {
    for (let I = 0; I < 5; I++)
      expect(parseShard('auto/5', { JOB_COMPLETION_INDEX: String(I) })).toEqual({ index: I, count: 5, source: 'Kubernetes Indexed Job' });
    expect(() => parseShard('auto', { JOB_COMPLETION_INDEX: '1' })).toThrow('use --shard auto/N');
    expect(() => parseShard('auto/5', { JOB_COMPLETION_INDEX: '5' })).toThrow('JOB_COMPLETION_INDEX 5 is outside 0..4');
    expect(() => parseShard('auto', {})).toThrow('no scheduler variables found');
  });

  it('the CLI under Slurm and Kubernetes variables writes the right part file and range', () => {
    const dir = tempDir();
    const file = writeScenario(dir, 's.json', movingScenario(41));
    const clean = { SLURM_ARRAY_TASK_ID: '', JOB_COMPLETION_INDEX: '' };
    const slurm = runCli(['generate', file, '--out', join(dir, 'run.part-{index}-of-{count}.npz'), '--shard', 'auto', '--quiet'], {
      env: { ...clean, SLURM_ARRAY_TASK_ID: '7', SLURM_ARRAY_TASK_MIN: '3', SLURM_ARRAY_TASK_STEP: '2', SLURM_ARRAY_TASK_COUNT: '5' },
    });
    expect(slurm.status, slurm.stderr).toBe(0);
    const m1 = JSON.parse(readFileSync(join(dir, 'run.part-2-of-5.npz.manifest.json'), 'utf8'));
    expect(m1.part).toEqual({ index: 2, count: 5 });
    expect(m1.range).toEqual(formulaRange(2, 5, 41));
    const k8s = runCli(['generate', file, '--out', join(dir, 'run.part-{index}-of-{count}.npz'), '--shard', 'auto/5'], {
      env: { ...clean, JOB_COMPLETION_INDEX: '4' },
    });
    expect(k8s.status, k8s.stderr).toBe(0);
    expect(k8s.stderr).toContain('from the Kubernetes Indexed Job');
    const m2 = JSON.parse(readFileSync(join(dir, 'run.part-4-of-5.npz.manifest.json'), 'utf8'));
    expect(m2.range).toEqual(formulaRange(4, 5, 41));
    expect(m2.tensor.shape[0]).toBe(m2.range[1] - m2.range[0]);
    // --out is the file written, with {index} and {count} replaced; --shard without {index} is
    // refused (every task of an array would write the same file), {index} without --shard too.
    const exact = runCli(['generate', file, '--out', join(dir, 'shard-{index}.npy'), '--shard', '1/4', '--quiet']);
    expect(exact.status, exact.stderr).toBe(0);
    expect(existsSync(join(dir, 'shard-1.npy'))).toBe(true);
    expect(JSON.parse(readFileSync(join(dir, 'shard-1.npy.manifest.json'), 'utf8')).range).toEqual(formulaRange(1, 4, 41));
    const without = runCli(['generate', file, '--out', join(dir, 'shard-one.npy'), '--shard', '1/4', '--quiet']);
    expect(without.status).toBe(2);
    expect(without.stderr).toContain('error: generate: --shard needs {index} in --out, so each shard writes its own part file');
    expect(existsSync(join(dir, 'shard-one.npy'))).toBe(false);
    const stray = runCli(['generate', file, '--out', join(dir, 'run-{index}.npy'), '--quiet']);
    expect(stray.status).toBe(2);
    expect(stray.stderr).toContain('holds {index} or {count}, which only --shard fills in');
  });
});

/** Arrays of two files compared by numpy (npz) or h5py (h5): equal values (NaN = NaN) and dtypes. */
const COMPARE = `
import sys, json, numpy as np
def load(p):
    if p.endswith('.npz'):
        z = np.load(p)
        return {k: z[k] for k in z.files}
    import h5py
    f = h5py.File(p, 'r')
    out = {}
    f.visititems(lambda n, o: out.__setitem__(n, o[()]) if isinstance(o, h5py.Dataset) else None)
    out.update({k: np.asarray(v) for k, v in f.attrs.items()})
    return out
a, b = load(sys.argv[1]), load(sys.argv[2])
res = {}
for k in sorted(set(a) | set(b)):
    if k not in a or k not in b:
        res[k] = 'missing'
        continue
    x, y = a[k], b[k]
    same = x.shape == y.shape and x.dtype == y.dtype and (np.array_equal(x, y, equal_nan=True) if x.dtype.kind in 'fc' else np.array_equal(x, y))
    res[k] = bool(same)
print(json.dumps(res))
`;

/** `--out a.npz` becomes the job-array pattern a.part-{index}-of-{count}.npz. */
const pattern = (out: string): string => out.replace(/(\.[^./]+)$/, '.part-{index}-of-{count}$1');

function shardAll(dir: string, file: string, out: string, n: number, extra: string[] = []): void {
  for (let i = 0; i < n; i++) {
    const r = runCli(['generate', file, '--out', pattern(out), '--shard', `${i}/${n}`, '--quiet', ...extra]);
    expect(r.status, r.stderr).toBe(0);
  }
}

describe('merge', () => {
  const S = 41;

  it.runIf(hasPython('numpy', 'h5py')).each(['npz', 'h5'] as const)('sharded %s parts merge to the unsharded run (numpy / h5py, C)', (ext) => {
    const dir = tempDir();
    const file = writeScenario(dir, 's.json', movingScenario(S));
    // --checksum: the unsharded run records tensorSha256 too (shard runs always do), to compare it.
    expect(runCli(['generate', file, '--out', join(dir, `full.${ext}`), '--checksum', '--quiet']).status).toBe(0);
    shardAll(dir, file, join(dir, `run.${ext}`), 3);
    // Given out of order: merge sorts by range.
    const parts = [2, 0, 1].map((i) => join(dir, `run.part-${i}-of-3.${ext}`));
    const r = runCli(['merge', ...parts, '--out', join(dir, `merged.${ext}`)]); // not --quiet: its report is read
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toContain(`from 3 parts`);
    const same = pythonJson<Record<string, boolean | string>>(COMPARE, [join(dir, `full.${ext}`), join(dir, `merged.${ext}`)]);
    // Every array and attribute equal, tensorSha256 and subframeRange included.
    for (const name of [
      'H',
      'gains',
      'subframeTimesS',
      'frequenciesHz',
      'paths/delayS',
      'paths/epochTimesS',
      'truth/delayS',
      'truth/receiverPosition',
      'truth/lineOfSight',
      'tensorSha256',
      'subframeRange',
      'seed',
    ]) {
      expect(same[name], name).toBe(true);
    }
    expect(Object.entries(same).filter(([, v]) => v !== true)).toEqual([]);
  });

  it('npy parts merge to the unsharded .npy byte for byte, with its side file', () => {
    const dir = tempDir();
    const file = writeScenario(dir, 's.json', movingScenario(S));
    expect(runCli(['generate', file, '--out', join(dir, 'full.npy'), '--checksum', '--quiet']).status).toBe(0);
    shardAll(dir, file, join(dir, 'run.npy'), 4);
    const r = runCli(['merge', ...[0, 1, 2, 3].map((i) => join(dir, `run.part-${i}-of-4.npy`)), '--out', join(dir, 'merged.npy'), '--quiet']);
    expect(r.status, r.stderr).toBe(0);
    expect(readFileSync(join(dir, 'merged.npy')).equals(readFileSync(join(dir, 'full.npy')))).toBe(true);
    const side = JSON.parse(readFileSync(join(dir, 'merged.npy.json'), 'utf8'));
    const full = JSON.parse(readFileSync(join(dir, 'full.npy.json'), 'utf8'));
    expect(side.tensor).toEqual(full.tensor);
  });

  it('a rerun skips verified parts and regenerates a damaged one; merge refuses a tampered part', () => {
    const dir = tempDir();
    const file = writeScenario(dir, 's.json', movingScenario(S));
    const out = join(dir, 'run.npy');
    shardAll(dir, file, out, 2);
    const part1 = join(dir, 'run.part-1-of-2.npy');
    const before = statSync(part1).mtimeMs;
    const again = runCli(['generate', file, '--out', pattern(out), '--shard', '1/2']);
    expect(again.status).toBe(0);
    expect(again.stdout).toMatch(/^skipped .*run\.part-1-of-2\.npy: part 1 of 2 \(subframes 20:41\) is already complete; its manifest verified/);
    expect(statSync(part1).mtimeMs).toBe(before);

    // Flip one bit of one tensor value (NPY data start after the 128-byte header): same size,
    // other bytes.
    const fd = openSync(part1, 'r+');
    const b = Buffer.alloc(1);
    readSync(fd, b, 0, 1, 128 + 1000);
    b[0] = b[0]! ^ 0x40;
    writeSync(fd, b, 0, 1, 128 + 1000);
    closeSync(fd);
    const merged = join(dir, 'merged.npy');
    const m = runCli(['merge', join(dir, 'run.part-0-of-2.npy'), part1, '--out', merged]);
    expect(m.status).toBe(2);
    // The sha256 of the whole file (manifest version 2) finds the change before any byte is copied.
    expect(m.stderr).toMatch(
      /error: merge: .*run\.part-1-of-2\.npy: file sha256 [0-9a-f]{64} differs from its manifest's [0-9a-f]{64}: an array or attribute of the part was changed after it was written/,
    );
    expect(existsSync(merged)).toBe(false);
    expect(readdirSync(dir).filter((f) => f.endsWith('.part'))).toEqual([]); // no temporary left

    const fixed = runCli(['generate', file, '--out', pattern(out), '--shard', '1/2', '--quiet']);
    expect(fixed.status).toBe(0);
    expect(fixed.stderr).toMatch(/regenerating .*run\.part-1-of-2\.npy: .*file sha256 [0-9a-f]{64} differs from the manifest's/);
    expect(runCli(['merge', join(dir, 'run.part-0-of-2.npy'), part1, '--out', merged, '--quiet']).status).toBe(0);
  });

  it('refuses gaps, overlaps, other seeds and scenarios, missing manifests, with exit 2 and no output', () => {
    const dir = tempDir();
    const file = writeScenario(dir, 's.json', movingScenario(S));
    const other = writeScenario(dir, 'o.json', { ...movingScenario(S), carrierHz: 28.5e9 });
    shardAll(dir, file, join(dir, 'a.npz'), 3);
    shardAll(dir, file, join(dir, 'b.npz'), 2);
    runCli(['generate', file, '--out', join(dir, 'seed.part-{index}-of-{count}.npz'), '--shard', '1/3', '--seed', '5', '--quiet']);
    runCli(['generate', other, '--out', join(dir, 'other.part-{index}-of-{count}.npz'), '--shard', '1/3', '--quiet']);
    runCli(['generate', file, '--out', join(dir, 'plain.npz'), '--subframes', '13:27', '--quiet']);
    const p = (name: string): string => join(dir, name);
    const out = p('merged.npz');
    const cases: [string[], RegExp][] = [
      [[p('a.part-0-of-3.npz'), p('a.part-2-of-3.npz')], /subframes 13:27 are in no part \(a gap before .*a\.part-2-of-3\.npz\)/],
      [[p('a.part-0-of-3.npz'), p('a.part-1-of-3.npz')], /subframes 27:41 are in no part \(missing at the end\)/],
      [
        [p('a.part-0-of-3.npz'), p('b.part-0-of-2.npz'), p('b.part-1-of-2.npz')],
        /b\.part-0-of-2\.npz \(subframes 0:20\) overlaps the part before it, which ends at 13/,
      ],
      [
        [p('a.part-0-of-3.npz'), p('seed.part-1-of-3.npz'), p('a.part-2-of-3.npz')],
        /seed\.part-1-of-3\.npz is of seed 5, .*a\.part-0-of-3\.npz of seed 20261201/,
      ],
      [[p('a.part-0-of-3.npz'), p('other.part-1-of-3.npz'), p('a.part-2-of-3.npz')], /other\.part-1-of-3\.npz is of another scenario/],
      [
        [p('a.part-0-of-3.npz'), p('plain.npz'), p('a.part-2-of-3.npz')],
        /plain\.npz\.manifest\.json: cannot read the manifest \(ENOENT\); merge takes the part files that generate --shard wrote/,
      ],
      [[p('a.part-0-of-3.npz'), p('a.part-0-of-3.npz')], /a\.part-0-of-3\.npz is given twice/],
    ];
    for (const [parts, message] of cases) {
      const r = runCli(['merge', ...parts, '--out', out]);
      expect(r.status, r.stderr).toBe(2);
      expect(r.stderr).toMatch(message);
      expect(existsSync(out)).toBe(false);
    }
    // A part cut short keeps its manifest but not its size.
    truncateSync(p('a.part-1-of-3.npz'), statSync(p('a.part-1-of-3.npz')).size - 100);
    const r = runCli(['merge', p('a.part-0-of-3.npz'), p('a.part-1-of-3.npz'), p('a.part-2-of-3.npz'), '--out', p('m2.npz')]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/a\.part-1-of-3\.npz is \d+ bytes, its manifest says \d+: the part was changed or truncated/);
    expect(existsSync(p('m2.npz'))).toBe(false);
  });
});
