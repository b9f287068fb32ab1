/**
 * `pathweave coverage` against outside references: free-space path gain against ITU-R P.525
 * (Friis), delay spread and K-factor of a two-path point against numpy evaluating the textbook
 * formulas on `paths --json` of the same receiver position, azimuth spreads against the
 * 3GPP TR 38.901 Annex A.1 formula in numpy, h5py reading the arrays, and sharded + merged
 * runs equal to the unsharded one (byte for byte in .npz and .npy). Runs the built CLI: build first.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { hasPython, pythonJson } from './support/python.js';
import { runCli, tempDir, writeScenario } from './support/run.js';

const base = {
  carrierHz: 28e9,
  timing: { subframeS: 1e-3, subframes: 1 },
  band: { subcarriers: 4, spacingHz: 120e3 },
  transmitter: { position: [0, 0, 1.5], array: { kind: 'ula', elements: 1 } },
  receiver: { position: [20, 0, 1.5], array: { kind: 'ula', elements: 1 } },
  fading: { model: 'static' },
  seed: 1,
};

/** LOS + one concrete wall (y = 5): two paths at every grid point of the strip below it. */
const twoPath = {
  ...base,
  scene: {
    maxReflectionOrder: 1,
    walls: [
      {
        vertices: [
          [-50, 5, 0],
          [50, 5, 0],
          [50, 5, 10],
          [-50, 5, 10],
        ],
        material: 'concrete',
      },
    ],
  },
  coverage: { origin: [10, -3, 1.5], columns: 3, rows: 2, stepM: 2 },
};

/** Three walls, reflections to order 2: several paths from several azimuths. */
const room = {
  ...base,
  transmitter: { position: [1, 1, 2.5], array: { kind: 'ula', elements: 1 } },
  scene: {
    maxReflectionOrder: 2,
    walls: [
      {
        vertices: [
          [-4, 6, 0],
          [12, 6, 0],
          [12, 6, 3],
          [-4, 6, 3],
        ],
        material: 'brick',
      },
      {
        vertices: [
          [12, -4, 0],
          [12, 6, 0],
          [12, 6, 3],
          [12, -4, 3],
        ],
        material: 'glass',
      },
      {
        vertices: [
          [-4, -4, 0],
          [12, -4, 0],
          [12, -4, 3],
          [-4, -4, 3],
        ],
        material: 'plasterboard',
      },
    ],
    blockers: [{ shape: 'box', min: [6.5, -1, 0], max: [7.5, 0, 2], lossDb: 10 }],
  },
  coverage: { origin: [3, -2, 1.5], uStepM: 1, vStepM: 1.5, columns: 7, rows: 5 },
};

describe('pathweave coverage', () => {
  const dir = tempDir('pathweave-coverage-');
  const room_ = writeScenario(dir, 'room.json', room);
  const twoPath_ = writeScenario(dir, 'two-path.json', twoPath);

  it('refuses what it cannot do with exit 2 and names the field, and prints its help', () => {
    const noGrid = writeScenario(dir, 'no-grid.json', { ...base, scene: {} });
    let r = runCli(['coverage', noGrid, '--out', join(dir, 'x.npz')]);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('the scenario has no "coverage" section; add one (docs/coverage.md) or give --origin, --step, --columns and --rows');
    const badStep = writeScenario(dir, 'bad-step.json', { ...base, scene: {}, coverage: { origin: [0, 0, 1], columns: 2, rows: 2, stepM: -1 } });
    r = runCli(['validate', badStep]);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('coverage.stepM');
    r = runCli(['coverage', noGrid, '--out', join(dir, 'x.npz'), '--origin', '0,0,1', '--columns', '2', '--rows', '2']);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('coverage.uStepM: give stepM (both directions), or uStepM and vStepM');
    const parallel = writeScenario(dir, 'parallel.json', {
      ...base,
      scene: {},
      coverage: { origin: [0, 0, 1], columns: 2, rows: 2, stepM: 1, vAxis: [2, 0, 0] },
    });
    r = runCli(['coverage', parallel, '--out', join(dir, 'x.npz')]);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('coverage.vAxis: must not be parallel to uAxis [1,0,0], got [2,0,0]');
    r = runCli(['coverage', room_, '--out', join(dir, 'x.npz'), '--shard', '0/2']);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('--shard needs {index} in --out');
    const explicit = writeScenario(dir, 'explicit.json', {
      ...base,
      paths: [{ aodDeg: [0, 0], aoaDeg: [180, 0], delayS: 1e-7, powerDb: -90 }],
      coverage: { origin: [0, 0, 1], columns: 2, rows: 2, stepM: 1 },
    });
    r = runCli(['coverage', explicit, '--out', join(dir, 'x.npz')]);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('paths: a coverage map traces a scene; this scenario gives explicit paths');
    r = runCli(['coverage', '--help']);
    expect(r.status).toBe(0);
    expect(r.stdout).toContain('--origin X,Y,Z');
  });

  describe.skipIf(!hasPython('numpy'))('against numpy', () => {
    beforeAll(() => {
      for (const [file, out] of [
        [room_, 'room.npz'],
        [twoPath_, 'two-path.npz'],
      ] as const) {
        const r = runCli(['coverage', file, '--out', join(dir, out)]);
        expect(r.stderr).toContain('rows (100%)'); // the progress line on stderr
        expect(r.status, r.stderr).toBe(0);
      }
    });

    it('path gain of a LOS-only scene equals the free-space loss of ITU-R P.525 at every point', () => {
      const free = writeScenario(dir, 'free.json', {
        ...base,
        transmitter: { position: [0, 0, 10], array: { kind: 'ula', elements: 1 } },
        scene: {},
        coverage: { origin: [10, 0, 10], columns: 2, rows: 3, uStepM: 90, vStepM: 7.5, vAxis: [0, 0.6, -0.8] },
      });
      const r = runCli(['coverage', free, '--out', join(dir, 'free.npz'), '--quiet']);
      expect(r.status, r.stderr).toBe(0);
      // L = 20 log10(4 pi d / lambda), c = 299 792 458 m/s (ITU-R P.525 eq. (4), M; values C with numpy).
      const ref = pythonJson<{ err: number; first: number[]; valid: number; kind: number[] }>(
        `
import json, sys, numpy as np
z = np.load(sys.argv[1])
p = z['pointsM'].reshape(-1, 3)
d = np.linalg.norm(p - np.array([0, 0, 10.0]), axis=1)
L = 20 * np.log10(4 * np.pi * d * 28e9 / 299792458.0)
g = z['pathGainDb'].reshape(-1)
print(json.dumps({'err': float(np.max(np.abs(g + L))), 'first': [float(g[0]), float(g[1])], 'valid': int(z['valid'].sum()), 'kind': z['strongestKind'].reshape(-1).tolist()}))
`,
        [join(dir, 'free.npz')],
      );
      expect(ref.err).toBeLessThan(1e-9);
      // check-values.md: 28 GHz at 10 m 81.391 dB, at 100 m 101.391 dB (C).
      expect(ref.first[0]).toBeCloseTo(-81.391, 3);
      expect(ref.first[1]).toBeCloseTo(-101.391, 3);
      expect(ref.valid).toBe(6);
      expect(ref.kind).toEqual([0, 0, 0, 0, 0, 0]); // code 0: los
    });

    it('delay spread and K-factor of a two-path point equal numpy on paths --json of the same position', () => {
      // Grid point (row 1, column 2) = origin + 2 * 2 m east + 1 * 2 m north = [14, -1, 1.5].
      const at = writeScenario(dir, 'two-path-at.json', { ...twoPath, receiver: { position: [14, -1, 1.5], array: { kind: 'ula', elements: 1 } } });
      const r = runCli(['paths', at, '--json']);
      expect(r.status, r.stderr).toBe(0);
      const paths = JSON.parse(r.stdout) as { kind: string }[];
      expect(paths.map((p) => p.kind)).toEqual(['los', 'reflection']);
      // RMS delay spread: the power-weighted second central moment (ITU-R P.1407-6 section 2.2.3, M);
      // Rician K = LOS power over the rest (M); computed with numpy (C).
      const ref = pythonJson<{ ds: number; k: number; gain: number; got: number[]; count: number; point: number[] }>(
        `
import json, sys, numpy as np
paths = json.loads(sys.stdin.read())
P = np.array([10 ** (p['powerDb'] / 10) for p in paths]); tau = np.array([p['delayS'] for p in paths])
mean = np.sum(P * tau) / np.sum(P)
ds = np.sqrt(np.sum(P * (tau - mean) ** 2) / np.sum(P))
los = np.array([p['kind'] == 'los' for p in paths])
k = 10 * np.log10(P[los].sum() / P[~los].sum())
z = np.load(sys.argv[1])
got = [float(z['delaySpreadS'][1, 2]), float(z['ricianKDb'][1, 2]), float(z['pathGainDb'][1, 2])]
print(json.dumps({'ds': float(ds), 'k': float(k), 'gain': float(10 * np.log10(P.sum())), 'got': got, 'count': int(z['pathCount'][1, 2]), 'point': z['pointsM'][1, 2].tolist()}))
`,
        [join(dir, 'two-path.npz')],
        r.stdout,
      );
      expect(ref.point).toEqual([14, -1, 1.5]);
      expect(ref.count).toBe(2);
      expect(ref.ds).toBeGreaterThan(1e-10); // a real spread: the reflection is 3.7 ns behind
      expect(Math.abs(ref.got[0]! - ref.ds) / ref.ds).toBeLessThan(1e-9);
      // The printed powerDb has about 12 significant digits (paths --json): 1e-9 dB is far below that.
      expect(Math.abs(ref.got[1]! - ref.k)).toBeLessThan(1e-9);
      expect(Math.abs(ref.got[2]! - ref.gain)).toBeLessThan(1e-9);
    });

    it('azimuth spreads of a multi-path point equal the 3GPP TR 38.901 Annex A.1 formula in numpy', () => {
      // Grid point (row 3, column 1) = [3 + 1, -2 + 4.5, 1.5] = [4, 2.5, 1.5].
      const at = writeScenario(dir, 'room-at.json', { ...room, receiver: { position: [4, 2.5, 1.5], array: { kind: 'ula', elements: 1 } } });
      const r = runCli(['paths', at, '--json']);
      expect(r.status, r.stderr).toBe(0);
      expect((JSON.parse(r.stdout) as unknown[]).length).toBeGreaterThan(4);
      // TR 38.901 Annex A.1 (M): AS = sqrt(-2 ln(|sum_n P_n exp(j phi_n)| / sum_n P_n)), computed with numpy (C).
      const ref = pythonJson<{ asa: number; asd: number; got: number[] }>(
        `
import json, sys, numpy as np
paths = json.loads(sys.stdin.read())
P = np.array([10 ** (p['powerDb'] / 10) for p in paths])
def spread(key):
    phi = np.radians([p[key][0] for p in paths])
    return float(np.degrees(np.sqrt(-2 * np.log(np.abs(np.sum(P * np.exp(1j * phi))) / np.sum(P)))))
z = np.load(sys.argv[1])
print(json.dumps({'asa': spread('aoaDeg'), 'asd': spread('aodDeg'), 'got': [float(z['azimuthSpreadArrivalDeg'][3, 1]), float(z['azimuthSpreadDepartureDeg'][3, 1])]}))
`,
        [join(dir, 'room.npz')],
        r.stdout,
      );
      expect(ref.asa).toBeGreaterThan(5);
      expect(Math.abs(ref.got[0]! - ref.asa)).toBeLessThan(1e-7);
      expect(Math.abs(ref.got[1]! - ref.asd)).toBeLessThan(1e-7);
    });

    it('marks a point inside a blocker invalid (NaN maps, no path, kind -1)', () => {
      // Grid point (row 1, column 4) = [3 + 4, -2 + 1.5, 1.5] = [7, -0.5, 1.5], inside the blocker.
      const ref = pythonJson<{ valid: number[]; gain: (number | null)[]; kind: number[]; count: number[] }>(
        `
import json, sys, numpy as np
z = np.load(sys.argv[1])
pick = lambda a: [a[1, 4].item(), a[0, 0].item()]
g = z['pathGainDb']
print(json.dumps({'valid': pick(z['valid']), 'gain': [None if np.isnan(g[1, 4]) else float(g[1, 4]), float(g[0, 0])], 'kind': pick(z['strongestKind']), 'count': pick(z['pathCount'])}))
`,
        [join(dir, 'room.npz')],
      );
      expect(ref.valid).toEqual([0, 1]);
      expect(ref.gain[0]).toBeNull();
      expect(ref.gain[1]).toBeLessThan(-60);
      expect(ref.kind[0]).toBe(-1);
      expect(ref.count[0]).toBe(0);
      expect(ref.count[1]).toBeGreaterThan(1);
    });

    it('sharded over grid rows and merged equals the unsharded run byte for byte (.npz, .npy), and so do worker threads', () => {
      for (const format of ['npz', 'npy'] as const) {
        const whole = join(dir, `whole.${format}`);
        expect(runCli(['coverage', room_, '--out', whole, '--quiet']).status).toBe(0);
        const parts: string[] = [];
        for (const i of [0, 1, 2]) {
          const r = runCli(['coverage', room_, '--out', join(dir, `part-{index}-of-{count}.${format}`), '--shard', `${i}/3`]);
          expect(r.status, r.stderr).toBe(0);
          expect(r.stderr).toContain(`.manifest.json (part ${i} of 3, from the command line)`);
          parts.push(join(dir, `part-${i}-of-3.${format}`));
        }
        // A part left out is refused (exit 2), naming the rows no part holds.
        const missing = runCli(['merge', parts[0]!, parts[2]!, '--out', join(dir, `gap.${format}`)]);
        expect(missing.status).toBe(2);
        expect(missing.stderr).toContain('grid rows 1:3 are in no part'); // rows floor(5/3) = 1 to floor(10/3) = 3
        const merged = join(dir, `merged.${format}`);
        const r = runCli(['merge', ...parts, '--out', merged]);
        expect(r.status, r.stderr).toBe(0);
        expect(r.stdout).toContain('coverage 5 x 7 points from 3 parts');
        expect(readFileSync(merged).equals(readFileSync(whole))).toBe(true);
        if (format === 'npy') expect(readFileSync(`${merged}.json`).equals(readFileSync(`${whole}.json`))).toBe(true);
      }
      // Worker threads trace the rows in batches: the same bytes as one thread.
      const threaded = join(dir, 'threaded.npz');
      const r = runCli(['coverage', room_, '--out', threaded, '--workers', '2', '--quiet']);
      expect(r.status, r.stderr).toBe(0);
      expect(readFileSync(threaded).equals(readFileSync(join(dir, 'whole.npz')))).toBe(true);
    });

    it.runIf(hasPython('numpy', 'h5py'))('h5py reads the maps, units and attributes; merged .h5 parts equal the unsharded .npz', () => {
      const parts = [0, 1].map((i) => {
        const r = runCli(['coverage', room_, '--out', join(dir, 'h5part-{index}.h5'), '--shard', `${i}/2`, '--quiet']);
        expect(r.status, r.stderr).toBe(0);
        return join(dir, `h5part-${i}.h5`);
      });
      expect(runCli(['merge', ...parts, '--out', join(dir, 'merged.h5')]).status).toBe(0);
      const ref = pythonJson<{ equal: boolean; units: string; shape: number[]; kinds: string[]; rowRange: string; dtype: string }>(
        `
import json, sys, numpy as np, h5py
f = h5py.File(sys.argv[1], 'r'); z = np.load(sys.argv[2])
names = ['pathGainDb', 'pathCount', 'delaySpreadS', 'azimuthSpreadArrivalDeg', 'azimuthSpreadDepartureDeg', 'ricianKDb', 'strongestKind', 'valid', 'pointsM']
equal = all(np.array_equal(f[n][()], z[n], equal_nan=True) and f[n].dtype == z[n].dtype for n in names)
text = lambda v: v.decode() if isinstance(v, bytes) else str(v)
a = lambda k: text(f.attrs[k])
print(json.dumps({'equal': bool(equal), 'units': text(f['delaySpreadS'].attrs['units']),
  'shape': list(f['pointsM'].shape), 'kinds': json.loads(a('pathKindNames')), 'rowRange': a('rowRange'), 'dtype': str(f['strongestKind'].dtype)}))
`,
        [join(dir, 'merged.h5'), join(dir, 'room.npz')],
      );
      expect(ref.equal).toBe(true);
      expect(ref.units).toBe('s');
      expect(ref.shape).toEqual([5, 7, 3]);
      expect(ref.kinds).toEqual(['los', 'reflection', 'scatter', 'diffraction', 'transmission', 'diffuse']);
      expect(ref.rowRange).toBe('0:5');
      expect(ref.dtype).toBe('int32');
    });

    it('plot --kind coverage draws the map with its walls, transmitter and colour bar', () => {
      const out = join(dir, 'room.svg');
      const r = runCli(['plot', join(dir, 'room.npz'), '--kind', 'coverage', '--out', out]);
      expect(r.status, r.stderr).toBe(0);
      const svg = readFileSync(out, 'utf8');
      expect(svg.match(/class="wall"/g)?.length).toBe(3);
      expect(svg).toContain('path gain (dB)');
      expect(svg).toContain('class="cell no-path"');
      expect(svg).toContain('class="transmitter"');
    });
  });
});
