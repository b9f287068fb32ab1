/**
 * Ray launching through the command line: the street-corner demo traced with `scene.method:
 * "launch"` lists the image method's paths and writes the same channel tensor, byte for byte
 * (each launched path is refined by the image method, docs/conventions.md, "Ray launching");
 * conflicting launch settings are refused with exit 2.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROOT, runCli, tempDir, writeScenario } from './support/run.js';

const demo = (): Record<string, any> => JSON.parse(readFileSync(join(ROOT, 'examples', 'street-corner-28ghz.json'), 'utf8'));

describe('scene.method "launch" from a scenario file', () => {
  it('gives the image method paths and the same tensor bytes on the street-corner demo', () => {
    const dir = tempDir();
    const image = demo();
    image.timing = { ...image.timing, subframes: 4 };
    const launch = { ...image, scene: { ...image.scene, method: 'launch', launch: { rays: 40962 } } };
    const a = writeScenario(dir, 'image.json', image),
      b = writeScenario(dir, 'launch.json', launch);
    const pa = runCli(['paths', a, '--json']),
      pb = runCli(['paths', b, '--json']);
    expect(pa.status, pa.stderr).toBe(0);
    expect(pb.status, pb.stderr).toBe(0);
    const ids = (JSON.parse(pa.stdout) as { id: string }[]).map((p) => p.id);
    expect(ids.length).toBeGreaterThan(4); // not vacuous: the direct path and reflections up to order 2
    expect(JSON.parse(pb.stdout)).toEqual(JSON.parse(pa.stdout));
    for (const [file, out] of [
      [a, 'image.npy'],
      [b, 'launch.npy'],
    ] as const) {
      const r = runCli(['generate', file, '--out', join(dir, out), '--quiet']);
      expect(r.status, r.stderr).toBe(0);
    }
    expect(readFileSync(join(dir, 'launch.npy')).equals(readFileSync(join(dir, 'image.npy')))).toBe(true);
  });

  it('refuses rays together with angularSpacingDeg, and maxBounces above the limit, with exit 2', () => {
    const dir = tempDir();
    const s = demo();
    const both = writeScenario(dir, 'both.json', { ...s, scene: { ...s.scene, method: 'launch', launch: { rays: 1000, angularSpacingDeg: 1 } } });
    const r = runCli(['paths', both]);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('scene.launch.rays: give rays or angularSpacingDeg, not both');
    const deep = writeScenario(dir, 'deep.json', { ...s, scene: { ...s.scene, method: 'launch', launch: { maxBounces: 7 } } });
    const q = runCli(['paths', deep]);
    expect(q.status).toBe(2);
    expect(q.stderr).toContain('scene.launch.maxBounces');
  });
});
