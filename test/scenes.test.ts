/**
 * Traced scenes through the whole pipeline: the demo scenarios run, the traced path list pasted
 * back as explicit paths with fading "static" reproduces the same H (docs/guide.md, `pathweave
 * paths --json`), and bad scene input is refused with dotted paths.
 */
import { cpSync, readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { decodeNpy } from '@pathweave/io';
import { hasPython, pythonJson } from './support/python.js';
import { ROOT, runCli, tempDir, writeScenario } from './support/run.js';

const example = (name: string): Record<string, any> => JSON.parse(readFileSync(join(ROOT, 'examples', name), 'utf8')) as Record<string, any>;

describe('demo scenarios of examples/', () => {
  const scenes = readdirSync(join(ROOT, 'examples')).filter((f) => f.endsWith('.json'));
  it.each(scenes)('%s validates and generates', (name) => {
    const dir = tempDir();
    const s = example(name);
    s.timing.subframes = Math.min(s.timing.subframes, 40); // keep the suite quick; the full runs are the demo's
    const file = writeScenario(dir, name, s);
    if (s.scene?.imports !== undefined) cpSync(join(ROOT, 'examples', 'scenes'), join(dir, 'scenes'), { recursive: true }); // imported files beside the scenario
    expect(runCli(['validate', file]).status).toBe(0);
    const r = runCli(['generate', file, '--out', join(dir, 'out.npy'), '--quiet']);
    expect(r.status, r.stderr).toBe(0);
    const H = decodeNpy(readFileSync(join(dir, 'out.npy')));
    expect(H.shape[0]).toBe(s.timing.subframes);
    let power = 0;
    for (const v of H.data as Float32Array) power += v * v;
    expect(power).toBeGreaterThan(0);
  });

  it.runIf(hasPython('numpy', 'h5py'))('factory floor: the worker blocks the line of sight smoothly for a while', () => {
    const dir = tempDir();
    const out = join(dir, 'ff.h5');
    expect(runCli(['generate', join(ROOT, 'examples', 'factory-floor-60ghz.json'), '--out', out, '--quiet']).status).toBe(0);
    const r = pythonJson<{ los: number[]; ids: string[] }>(
      `import h5py, json, sys, numpy as np
f = h5py.File(sys.argv[1], 'r')
ids = [x.decode() for x in f['paths/id'][()]]
print(json.dumps({'los': f['truth/powerDb'][:, ids.index('los')].tolist(), 'ids': ids}))`,
      [out],
    );
    const los = r.los;
    const clear = los[0]!;
    const deepest = Math.min(...los);
    // a person at 60 GHz: one knife edge alone would cost 15-25 dB (ITU-R P.526, C); the wave passes
    // the cylinder on both sides, whose fields add in phase when it is centred (P.526 finite-width
    // screen, minimum loss, M): 6 dB less, so more than 10 dB
    expect(clear - deepest).toBeGreaterThan(10);
    let biggestStep = 0;
    for (let i = 1; i < los.length; i++) biggestStep = Math.max(biggestStep, Math.abs(los[i]! - los[i - 1]!));
    // P.526: J(v) rises at most 20 / ln(10) = 8.69 dB per unit of v. The vehicle moves 3.75 mm per
    // subframe; with d1 ~ 7.2 m, d2 ~ 1.8 m and lambda = 5 mm, v changes by about 0.06 per
    // subframe, so about 0.5 dB per subframe at most (C, from the P.526 formula): allow 1 dB.
    expect(biggestStep).toBeLessThan(1);
    expect(los[los.length - 1]!).toBeGreaterThan(clear - 1); // and recovers
  });

  it('highway: the Doppler of the line of sight matches v cos(angle) / lambda (docs/conventions.md sign)', () => {
    const r = runCli(['paths', join(ROOT, 'examples', 'highway-39ghz.json'), '--json']);
    expect(r.status).toBe(0);
    const paths = JSON.parse(r.stdout) as { id: string; dopplerHz: number; aoaDeg: [number, number] }[];
    const los = paths.find((p) => p.id === 'los')!;
    const s = example('highway-39ghz.json');
    const lambda = 299792458 / s.carrierHz;
    const u = [
      Math.cos((los.aoaDeg[1] * Math.PI) / 180) * Math.cos((los.aoaDeg[0] * Math.PI) / 180),
      Math.cos((los.aoaDeg[1] * Math.PI) / 180) * Math.sin((los.aoaDeg[0] * Math.PI) / 180),
    ];
    const v = s.receiver.velocity as number[];
    expect(los.dopplerHz).toBeCloseTo((v[0]! * u[0]! + v[1]! * u[1]!) / lambda, 6);
    expect(los.dopplerHz).toBeGreaterThan(0); // approaching the gantry shortens the path: positive shift
  });
});

describe('paths --json pasted back as explicit static paths reproduces H', () => {
  it.each([['street-corner-28ghz.json'], ['factory-floor-60ghz.json']])('%s at t = 0', (name) => {
    const dir = tempDir();
    const s = example(name);
    s.timing.subframes = 1;
    delete s.receiver.velocity;
    delete s.receiver.trajectory;
    s.precision = 'complex128';
    const traced = writeScenario(dir, 'traced.json', s);
    const listing = runCli(['paths', traced, '--json']);
    expect(listing.status, listing.stderr).toBe(0);
    const explicit = { ...s, scene: undefined, paths: JSON.parse(listing.stdout), fading: { model: 'static' } };
    const pasted = writeScenario(dir, 'explicit.json', JSON.parse(JSON.stringify(explicit)));
    expect(runCli(['generate', traced, '--out', join(dir, 'a.npy'), '--quiet']).status).toBe(0);
    const r = runCli(['generate', pasted, '--out', join(dir, 'b.npy'), '--quiet']);
    expect(r.status, r.stderr).toBe(0);
    const a = decodeNpy(readFileSync(join(dir, 'a.npy'))).data as Float64Array;
    const b = decodeNpy(readFileSync(join(dir, 'b.npy'))).data as Float64Array;
    let num = 0,
      den = 0;
    for (let i = 0; i < a.length; i++) {
      num += (a[i]! - b[i]!) ** 2;
      den += a[i]! ** 2;
    }
    expect(Math.sqrt(num / den)).toBeLessThan(1e-9); // JSON keeps 17 significant digits
  });
});

describe('bad scene input', () => {
  const base = example('street-corner-28ghz.json');
  const refuse = (edit: (s: Record<string, any>) => void, expected: string): void => {
    const s = structuredClone(base);
    edit(s);
    const dir = tempDir();
    const r = runCli(['validate', writeScenario(dir, 's.json', s)]);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain(expected);
  };
  it('non-coplanar or degenerate walls', () => {
    refuse((s) => (s.scene.walls[0].vertices[2] = [40, 15, 18]), 'scene.walls[0].vertices');
    refuse(
      (s) =>
        (s.scene.walls[1].vertices = [
          [0, 0, 0],
          [1, 1, 1],
          [2, 2, 2],
        ]),
      'scene.walls[1].vertices',
    );
  });
  it('mixed 2-D and 3-D coordinates', () => {
    refuse(
      (s) =>
        (s.scene.walls[2].vertices = [
          [40, -6],
          [40, 14],
        ]),
      'scene.walls',
    );
  });
  it('a terminal inside a blocker, and transmitter and receiver at the same point', () => {
    refuse((s) => (s.scene.blockers = [{ shape: 'box', min: [21, 8, 0], max: [23, 10, 2] }]), 'receiver.position');
    refuse((s) => (s.receiver.position = [...s.transmitter.position]), 'receiver.position');
  });
  it('a trajectory whose times do not increase', () => {
    refuse(
      (s) =>
        (s.receiver.trajectory = [
          { t: 0, position: [1, 1, 1.5] },
          { t: 0, position: [2, 1, 1.5] },
        ]),
      'receiver.trajectory[1].t: times must increase, got 0 after 0',
    );
  });
  it('geometry that yields no path at all is reported, not written as a zero channel', () => {
    const s = structuredClone(base);
    s.scene.lineOfSight = false;
    s.scene.walls = [];
    const dir = tempDir();
    const r = runCli(['generate', writeScenario(dir, 's.json', s), '--out', join(dir, 'x.npy')]);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('the geometry yields no path at all');
    expect(readdirSync(dir)).toEqual(['s.json']);
  });
});

describe('reciprocity of traced channels, polarisation included', () => {
  it('swapping transmitter and receiver gives H^T (street corner, slant and vertical arrays)', () => {
    const s = example('street-corner-28ghz.json');
    s.timing.subframes = 1;
    s.precision = 'complex128';
    delete s.receiver.velocity;
    s.transmitter.array.polarization = { slantDeg: 45 };
    s.receiver.array.polarization = 'vertical';
    const swapped = structuredClone(s);
    swapped.transmitter = s.receiver;
    swapped.receiver = s.transmitter;
    const dir = tempDir();
    expect(runCli(['generate', writeScenario(dir, 'a.json', s), '--out', join(dir, 'a.npy'), '--quiet']).status).toBe(0);
    expect(runCli(['generate', writeScenario(dir, 'b.json', swapped), '--out', join(dir, 'b.npy'), '--quiet']).status).toBe(0);
    const A = decodeNpy(readFileSync(join(dir, 'a.npy')));
    const B = decodeNpy(readFileSync(join(dir, 'b.npy')));
    const [, K, Nr, Nt] = A.shape as [number, number, number, number];
    expect(B.shape).toEqual([1, K, Nt, Nr]);
    const a = A.data as Float64Array,
      b = B.data as Float64Array;
    let num = 0,
      den = 0;
    for (let k = 0; k < K; k++) {
      for (let m = 0; m < Nr; m++) {
        for (let n = 0; n < Nt; n++) {
          const i = 2 * ((k * Nr + m) * Nt + n);
          const j = 2 * ((k * Nt + n) * Nr + m);
          num += (a[i]! - b[j]!) ** 2 + (a[i + 1]! - b[j + 1]!) ** 2;
          den += a[i]! ** 2 + a[i + 1]! ** 2;
        }
      }
    }
    expect(Math.sqrt(num / den)).toBeLessThan(1e-9);
  });
});
