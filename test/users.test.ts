/**
 * Several receivers in one scenario: the user axis after S, a user's channel bit-identical alone
 * or among others, spatial correlation between users, the user axis of the path table and the
 * ground truth, `pathweave paths --user`, and clear messages for bad input.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { buildScenario, fillBlock, safeParseScenario, sideArrays, type Scenario } from '@pathweave/io';
import { ROOT, runCli, tempDir } from './support/run.js';

const example = (): Record<string, any> => JSON.parse(readFileSync(join(ROOT, 'examples', 'street-corner-users-28ghz.json'), 'utf8')) as Record<string, any>;

function parsed(doc: unknown): Scenario {
  const r = safeParseScenario(doc);
  if (!r.ok) throw new Error(JSON.stringify(r.problems));
  return r.scenario;
}

/** |h1^H h2| / (|h1| |h2|) over every subcarrier and antenna pair. */
function correlation(x: ArrayLike<number>, y: ArrayLike<number>): number {
  let re = 0,
    im = 0,
    nx = 0,
    ny = 0;
  for (let i = 0; i < x.length; i += 2) {
    re += x[i]! * y[i]! + x[i + 1]! * y[i + 1]!;
    im += x[i]! * y[i + 1]! - x[i + 1]! * y[i]!;
    nx += x[i]! ** 2 + x[i + 1]! ** 2;
    ny += y[i]! ** 2 + y[i + 1]! ** 2;
  }
  return Math.hypot(re, im) / Math.sqrt(nx * ny);
}

describe('several users', () => {
  it('puts the user axis after S and gives a user the same bits alone or among others', () => {
    const doc = example();
    doc.timing.subframes = 6;
    const all = buildScenario(parsed(doc));
    expect(all.shape).toEqual([6, 5, 64, 4, 32]);
    const out = new Float32Array(2 * 6 * all.valuesPerSubframe);
    fillBlock(all, out, 0, 6);
    const alone = buildScenario(parsed({ ...doc, receivers: [doc.receivers[3]] }));
    const mine = new Float32Array(2 * 6 * alone.valuesPerSubframe);
    fillBlock(alone, mine, 0, 6);
    const per = 2 * alone.valuesPerSubframe;
    for (let s = 0; s < 6; s++) {
      // user "window" is index 3 of 5 in the full run
      const slice = out.subarray(s * 5 * per + 3 * per, s * 5 * per + 4 * per);
      expect(
        Buffer.from(slice.buffer, slice.byteOffset, slice.byteLength).equals(
          Buffer.from(mine.buffer, mine.byteOffset, mine.byteLength).subarray(s * per * 4, (s + 1) * per * 4),
        ),
      ).toBe(true);
    }
  });

  it('decorrelates users far apart and keeps co-located users correlated', () => {
    // Reference: spatial correlation falls from 1 at zero separation towards the random-vector
    // level for separations of hundreds of wavelengths in a scene with several strong paths
    // (Jakes, Microwave Mobile Communications, 1974, spatial correlation J0(k0 d), M): a 1 mm
    // shift (0.09 wavelength) keeps it above 0.99, users 10 m or more apart fall below 0.2.
    const doc = example();
    doc.timing.subframes = 1;
    doc.fading = { model: 'static' };
    const a = doc.receivers[1];
    doc.receivers = [a, { ...a, id: 'beside', position: [a.position[0] + 0.001, a.position[1], a.position[2]] }, doc.receivers[3], doc.receivers[4]];
    const built = buildScenario(parsed(doc));
    const H = built.users.map((u) => u.generator.fill(u.generator.allocate(1), 0, 1));
    expect(correlation(H[0]!, H[1]!)).toBeGreaterThan(0.99);
    expect(correlation(H[0]!, H[2]!)).toBeLessThan(0.2);
    expect(correlation(H[0]!, H[3]!)).toBeLessThan(0.2);
  });

  it('gives the path table, the gains and the ground truth a user axis', () => {
    const doc = example();
    doc.timing.subframes = 3;
    const built = buildScenario(parsed(doc));
    const L = Math.max(...built.users.map((u) => u.generator.pathCount));
    const gains = new Float64Array(2 * 3 * 5 * L);
    fillBlock(built, new Float32Array(2 * 3 * built.valuesPerSubframe), 0, 3, gains);
    const arrays = new Map(sideArrays(built, 0, 3, gains, [3, 5, L]).map((a) => [a.name, a]));
    expect(arrays.get('gains')!.shape).toEqual([3, 5, L]);
    expect(arrays.get('paths/id')!.shape).toEqual([5, L]);
    expect(arrays.get('paths/delayS')!.shape.slice(0, 1)).toEqual([5]);
    expect(arrays.get('truth/delayS')!.shape).toEqual([3, 5, L]);
    expect(arrays.get('truth/receiverPosition')!.shape).toEqual([3, 5, 3]);
    // Each user's first ground-truth delay is its own line-of-sight distance / c.
    const truth = arrays.get('truth/delayS')!.data as Float64Array;
    built.users.forEach((u, i) => expect(truth[i * L]).toBeCloseTo(u.paths.find((p) => p.kind === 'los')!.delayS, 15));
  });

  it("lists one user's paths with pathweave paths --user (id or index)", () => {
    const file = join(ROOT, 'examples', 'street-corner-users-28ghz.json');
    const byId = runCli(['paths', file, '--user', 'across', '--json']);
    const byIndex = runCli(['paths', file, '--user', '4', '--json']);
    expect(byId.status).toBe(0);
    expect(byId.stdout).toBe(byIndex.stdout);
    const built = buildScenario(parsed(example()));
    const listed = JSON.parse(byId.stdout) as { delayS: number }[];
    expect(listed.map((p) => p.delayS)).toEqual(built.users[4]!.paths.map((p) => p.delayS));
    const bad = runCli(['paths', file, '--user', 'nobody']);
    expect(bad.status).toBe(2);
  });

  it('refuses a user without an array, a non-finite XPR and a negative spread with dotted paths', () => {
    const doc = example();
    doc.receivers[2] = { id: 'bare', position: [5, 5, 1.5] };
    doc.fading = { model: 'gauss-markov', xprDb: 'high' };
    doc.clusters = { azimuthSpreadArrivalDeg: -3, delaySpreadS: -1e-9 };
    const r = safeParseScenario(doc);
    expect(r.ok).toBe(false);
    const lines = r.ok ? [] : r.problems.map((p) => `${p.path}: ${p.message}`);
    expect(lines).toContain('receivers[2].array: is required (object)');
    expect(lines).toContain('fading.xprDb: must be a number, got "high"');
    expect(lines).toContain('clusters.azimuthSpreadArrivalDeg: must be >= 0, got -3');
    expect(lines).toContain('clusters.delaySpreadS: must be >= 0, got -1e-9');
    // 1e999 in the file text parses to Infinity: not a finite number of decibels.
    const text = JSON.stringify({ ...example(), fading: { model: 'gauss-markov', xprDb: 7 } }).replace('"xprDb":7', '"xprDb":1e999');
    const file = join(tempDir(), 'infinite-xpr.json');
    writeFileSync(file, text);
    const run = runCli(['validate', file]);
    expect(run.status).toBe(2);
    expect(`${run.stdout}${run.stderr}`).toContain('fading.xprDb: must be a number, got Infinity');
  });
});
