/**
 * Diffuse scattering through the whole pipeline: a 28 GHz street canyon of two rough 3-D facades
 * (`scene.diffuse`): kind `diffuse` and `walls[i].tiles[j]` objects in `paths --json`, the listing
 * pasted back reproduces H, `paths/kind` of a written dataset, the delay profile's legend, a
 * scenario refused with exit 2 naming the key, and the channel power of a receiver walking along
 * the street changing smoothly from subframe to subframe.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { decodeNpy, openDatasetReader } from '@pathweave/io';
import { runCli, tempDir, writeScenario } from './support/run.js';

const facade = (y: number): { vertices: number[][]; material: string } => ({
  vertices: [
    [-20, y, 0],
    [40, y, 0],
    [40, y, 12],
    [-20, y, 12],
  ],
  material: 'concrete',
});

function canyon(diffuse: Record<string, unknown> | undefined, moving = false): Record<string, any> {
  return {
    carrierHz: 28e9,
    timing: moving ? { subframeS: 1e-3, subframes: 200, geometryUpdateS: 0.01 } : { subframeS: 1e-3, subframes: 4 },
    band: { subcarriers: 16, spacingHz: 120e3 },
    transmitter: { position: [0, 2, 6], array: { kind: 'ula', elements: 4 } },
    receiver: { position: [25, -3, 1.5], ...(moving ? { velocity: [1, 0, 0] } : {}), array: { kind: 'ula', elements: 2 } },
    scene: {
      walls: [facade(8), facade(-8)],
      maxReflectionOrder: 1,
      ...(diffuse === undefined ? {} : { diffuse }),
    },
    fading: { model: 'static' },
    seed: 3,
    precision: 'complex128',
  };
}

describe('diffuse scattering in a scenario', () => {
  it('lists diffuse paths named by wall and tile, whose listing pasted back reproduces H, and writes their kind into the dataset', async () => {
    const dir = tempDir();
    const file = writeScenario(dir, 'rough.json', canyon({ tileM: 3, maxPathsPerWall: 6, scatteringCoefficient: 0.5, alphaR: 3 }));
    const listing = runCli(['paths', file, '--json']);
    expect(listing.status, listing.stderr).toBe(0);
    const paths = JSON.parse(listing.stdout) as { id: string; kind: string; powerDb: number; interactions: { type: string; object: string }[] }[];
    const diffuse = paths.filter((p) => p.kind === 'diffuse');
    expect(diffuse.length).toBe(12); // 6 per facade
    for (const p of diffuse) {
      expect(p.interactions).toHaveLength(1);
      expect(p.interactions[0]!.type).toBe('diffuse');
      expect(p.interactions[0]!.object).toMatch(/^walls\[[01]\]\.tiles\[\d+\]$/);
      expect(p.id).toBe(`F:${p.interactions[0]!.object}`);
    }
    // weaker than the specular reflections of the same walls, which lost 1 - S^2 = 0.75 of their power
    const smooth = JSON.parse(runCli(['paths', writeScenario(dir, 'smooth.json', canyon(undefined)), '--json']).stdout) as typeof paths;
    for (const id of ['R:walls[0]', 'R:walls[1]']) {
      const a = paths.find((p) => p.id === id)!,
        b = smooth.find((p) => p.id === id)!;
      expect(a.powerDb - b.powerDb).toBeCloseTo(10 * Math.log10(0.75), 3); // paths --json rounds powers to 1e-3 dB
      expect(Math.max(...diffuse.map((p) => p.powerDb))).toBeLessThan(a.powerDb);
    }
    const traced = runCli(['generate', file, '--out', join(dir, 'a.npy'), '--quiet']);
    expect(traced.status, traced.stderr).toBe(0);
    const explicit = { ...canyon(undefined), scene: undefined, paths };
    const pasted = runCli(['generate', writeScenario(dir, 'explicit.json', JSON.parse(JSON.stringify(explicit))), '--out', join(dir, 'b.npy'), '--quiet']);
    expect(pasted.status, pasted.stderr).toBe(0);
    const a = decodeNpy(readFileSync(join(dir, 'a.npy'))).data as Float64Array,
      b = decodeNpy(readFileSync(join(dir, 'b.npy'))).data as Float64Array;
    let num = 0,
      den = 0;
    for (let i = 0; i < a.length; i++) {
      num += (a[i]! - b[i]!) ** 2;
      den += a[i]! ** 2;
    }
    expect(Math.sqrt(num / den)).toBeLessThan(1e-5); // the listing rounds powers to 1e-3 dB and phases to 1e-3 degrees
    // the dataset's path table names the kind
    const npz = join(dir, 'rough.npz');
    expect(runCli(['generate', file, '--out', npz, '--quiet']).status).toBe(0);
    const reader = await openDatasetReader(npz);
    const kinds = (await reader.readArray('paths/kind')).strings ?? [];
    await reader.close();
    expect(kinds.filter((k) => k === 'diffuse').length).toBe(12);
    // and the delay profile draws them with a legend entry of their own
    const svg = join(dir, 'profile.svg');
    const plot = runCli(['plot', npz, '--kind', 'delay-profile', '--out', svg]);
    expect(plot.status, plot.stderr).toBe(0);
    expect(readFileSync(svg, 'utf8')).toMatch(/>diffuse</);
  });

  it('refuses a bad diffuse key with exit 2, naming it, the value and what is allowed', () => {
    const dir = tempDir();
    const r = runCli(['generate', writeScenario(dir, 'bad.json', canyon({ tileM: 2, alphaR: 0 })), '--out', join(dir, 'x.npy')]);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('scene.diffuse.alphaR');
    const r2 = runCli(['generate', writeScenario(dir, 'bad2.json', canyon({ tileM: 2, scatteringCoefficient: 2 })), '--out', join(dir, 'x.npy')]);
    expect(r2.status).toBe(2);
    expect(r2.stderr).toContain('scene.diffuse.scatteringCoefficient');
  });

  it('a receiver walking 0.2 m along the street (traced every 10 ms) sees the channel power change by less than 0.5 dB between subframes', () => {
    const dir = tempDir();
    const out = join(dir, 'walk.npy');
    const r = runCli(['generate', writeScenario(dir, 'walk.json', canyon({ tileM: 2, maxPathsPerWall: 8 }, true)), '--out', out, '--quiet']);
    expect(r.status, r.stderr).toBe(0);
    const t = decodeNpy(readFileSync(out));
    const data = t.data as Float64Array;
    const S = t.shape[0]!,
      per = data.length / S;
    let worst = 0,
      prev = NaN;
    for (let s = 0; s < S; s++) {
      let p = 0;
      for (let i = 0; i < per; i++) p += data[s * per + i]! ** 2;
      const db = 10 * Math.log10(p);
      if (s > 0) worst = Math.max(worst, Math.abs(db - prev));
      prev = db;
    }
    expect(S).toBe(200);
    expect(worst).toBeLessThan(0.5);
  });
});
