/**
 * Diffraction through the whole pipeline: a street crossing of box buildings at 28 GHz where the
 * receiver around the corner gets no path from reflections alone, and gets one with
 * `scene.diffraction`; the traced list pasted back reproduces H; a receiver walking around the
 * corner sees the power change smoothly.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { prepareScene, traceScene, type Scene } from '@pathweave/geometry';
import { decodeNpy } from '@pathweave/io';
import { runCli, tempDir, writeScenario } from './support/run.js';

const box = (x0: number, y0: number, x1: number, y1: number): { vertices: number[][]; material: string }[] =>
  [
    [
      [x0, y0],
      [x1, y0],
    ],
    [
      [x1, y0],
      [x1, y1],
    ],
    [
      [x1, y1],
      [x0, y1],
    ],
    [
      [x0, y1],
      [x0, y0],
    ],
  ].map((vertices) => ({ vertices, material: 'brick' }));

/** Three 54 m blocks around a crossing of two 12 m streets; tx in the east-west street, rx down the north-south one. */
function crossing(diffraction: boolean | undefined): Record<string, any> {
  return {
    carrierHz: 28e9,
    timing: { subframeS: 1e-3, subframes: 4 },
    band: { subcarriers: 16, spacingHz: 120e3 },
    transmitter: { position: [-40, 0], array: { kind: 'ula', elements: 4 } },
    receiver: { position: [0, -40], array: { kind: 'ula', elements: 2, orientation: { yawDeg: 90 } } },
    scene: {
      walls: [...box(-60, -60, -6, -6), ...box(6, -60, 60, -6), ...box(-60, 6, -6, 60)],
      maxReflectionOrder: 2,
      ...(diffraction === undefined ? {} : { diffraction }),
    },
    fading: { model: 'static' },
    seed: 5,
    precision: 'complex128',
  };
}

describe('a receiver around a street corner', () => {
  it('gets no path without diffraction, and diffracted paths named by their edge with scene.diffraction', () => {
    const dir = tempDir();
    const off = runCli(['generate', writeScenario(dir, 'off.json', crossing(undefined)), '--out', join(dir, 'off.npy')]);
    expect(off.status).toBe(2);
    expect(off.stderr).toContain('the geometry yields no path at all');
    const file = writeScenario(dir, 'on.json', crossing(true));
    const listing = runCli(['paths', file, '--json']);
    expect(listing.status, listing.stderr).toBe(0);
    const paths = JSON.parse(listing.stdout) as {
      id: string;
      kind: string;
      powerDb: number;
      interactions: { type: string; object: string; point: number[] }[];
    }[];
    expect(paths.length).toBeGreaterThan(0);
    expect(paths.every((p) => p.kind === 'diffraction')).toBe(true);
    // strongest: the corner (-6, -6) of the first block; free space over 68.1 m would be -98.0 dB
    expect(paths[0]!.id).toBe('D:walls[1].vertices[1]');
    expect(paths[0]!.interactions).toEqual([expect.objectContaining({ type: 'diffraction', object: 'walls[1].vertices[1]', point: [-6, -6, 0] })]);
    expect(paths[0]!.powerDb).toBeLessThan(-98);
    // the listing pasted back as explicit static paths gives the same H
    const traced = runCli(['generate', file, '--out', join(dir, 'a.npy'), '--quiet']);
    expect(traced.status, traced.stderr).toBe(0);
    const explicit = { ...crossing(true), scene: undefined, paths: paths };
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
    expect(Math.sqrt(num / den)).toBeLessThan(1e-9);
  });

  it("walking at 1.4 m/s past the corner's shadow boundary, the channel follows the diffracted field without a step", () => {
    // rx walks south from (0, -6.2) to (0, -8.3) in 1.5 s (1.4 mm per 1 ms subframe, 0.13 wavelength),
    // geometry updated every 50 ms; the line of sight is cut by the corner (-6, -6) at y = -7.059
    // (t = 0.61 s). Between updates the direct path fades out while the diffracted path is blended
    // from both updates' sides of the shadow boundary (utd.ts): the sum must stay within 1 dB of
    // the field traced afresh at every subframe's position (UTD continuous across the boundary).
    const s = crossing(true);
    s.receiver.position = [0, -6.2];
    s.receiver.velocity = [0, -1.4];
    s.timing = { subframeS: 1e-3, subframes: 1500, geometryUpdateS: 0.05 };
    s.band = { subcarriers: 1, spacingHz: 120e3 };
    s.transmitter.array = { kind: 'ula', elements: 1 };
    s.receiver.array = { kind: 'ula', elements: 1 };
    const dir = tempDir();
    const r = runCli(['generate', writeScenario(dir, 'walk.json', s), '--out', join(dir, 'walk.npy'), '--quiet']);
    expect(r.status, r.stderr).toBe(0);
    const H = decodeNpy(readFileSync(join(dir, 'walk.npy'))).data as Float64Array;
    const ps = prepareScene(s.scene as Scene);
    let worstDb = 0,
      worstAt = -1;
    for (let i = 0; i < 1500; i++) {
      const paths = traceScene(ps, { position: [-40, 0, 0] }, { position: [0, -6.2 - 1.4e-3 * i, 0] }, 28e9).paths;
      let re = 0,
        im = 0;
      for (const p of paths) {
        re += p.amplitude[0];
        im += p.amplitude[1];
      }
      const d = Math.abs(10 * Math.log10((H[2 * i]! ** 2 + H[2 * i + 1]! ** 2) / (re * re + im * im)));
      if (d > worstDb) {
        worstDb = d;
        worstAt = i;
      }
    }
    expect(worstDb, `worst at subframe ${worstAt}`).toBeLessThan(1);
  });
});
