/**
 * docs/conventions.md, Reproducibility: the same scenario and seed give the same bytes; subframes [a, b)
 * generated alone equal the slice [a, b) of the full run bit for bit; a path's random numbers
 * depend on its id, not on the other paths; the subframe stream carries the same bits.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { RANDOM_BLOCK_STEPS, streamSubframes, streamSubframesAsync } from '@pathweave/core';
import { buildScenario, decodeNpy, safeParseScenario, type Scenario } from '@pathweave/io';
import { ROOT, runCli, tempDir, writeScenario } from './support/run.js';

const base = JSON.parse(readFileSync(join(ROOT, 'test', 'fixtures', 'explicit-street-corner.json'), 'utf8')) as Scenario;

function scenario(edit: (s: Record<string, any>) => void = () => undefined): Scenario {
  const s = structuredClone(base) as Record<string, any>;
  s.timing.subframes = 600;
  s.band.subcarriers = 8;
  edit(s);
  const r = safeParseScenario(s);
  if (!r.ok) throw new Error(JSON.stringify(r.problems));
  return r.scenario;
}

function tensor(s: Scenario, first: number, count: number): Float32Array {
  const g = buildScenario(s).generator;
  return g.fill(g.allocate(count), first, count) as Float32Array;
}

describe('reproducibility', () => {
  it('a slice [a, b) generated alone equals the same slice of the full run, across random blocks', () => {
    const s = scenario();
    const full = tensor(s, 0, 600);
    const per = full.length / 600;
    for (const [a, b] of [
      [250, 530],
      [RANDOM_BLOCK_STEPS - 1, RANDOM_BLOCK_STEPS + 1],
      [599, 600],
      [0, 1],
    ] as [number, number][]) {
      const part = tensor(s, a, b - a);
      expect(Buffer.compare(Buffer.from(part.buffer), Buffer.from(full.buffer, a * per * 4, (b - a) * per * 4))).toBe(0);
    }
  });

  it('the same scenario and seed give the same bytes; another seed gives others', () => {
    const a = tensor(scenario(), 0, 50);
    const b = tensor(scenario(), 0, 50);
    const c = tensor(
      scenario((s) => (s.seed = 7)),
      0,
      50,
    );
    expect(Buffer.compare(Buffer.from(a.buffer), Buffer.from(b.buffer))).toBe(0);
    expect(Buffer.compare(Buffer.from(a.buffer), Buffer.from(c.buffer))).not.toBe(0);
  });

  it("a path's gains do not change when another path is added before it", () => {
    const one = buildScenario(scenario()).generator;
    const more = buildScenario(scenario((s) => s.paths.unshift({ id: 'extra', aodDeg: [5, -3], aoaDeg: [170, 2], delayS: 9e-8, powerDb: -120 }))).generator;
    const g1 = one.gains(0, 300);
    const g2 = more.gains(0, 300);
    const L1 = one.pathCount,
      L2 = more.pathCount;
    for (let s = 0; s < 300; s++) {
      for (let l = 0; l < L1; l++) {
        expect(g2[2 * (s * L2 + l + 1)]).toBe(g1[2 * (s * L1 + l)]);
        expect(g2[2 * (s * L2 + l + 1) + 1]).toBe(g1[2 * (s * L1 + l) + 1]);
      }
    }
  });

  it('the subframe stream (sync and async) yields the bits of fill', async () => {
    const s = scenario();
    const full = tensor(s, 0, 600);
    const per = full.length / 600;
    const g = buildScenario(s).generator;
    let n = 0;
    for (const item of streamSubframes(g, { first: 300, count: 20 })) {
      expect(item.index).toBe(300 + n);
      expect(Array.from(item.tensor)).toEqual(Array.from(full.subarray((300 + n) * per, (301 + n) * per)));
      n++;
    }
    expect(n).toBe(20);
    const g2 = buildScenario(s).generator;
    let m = 0;
    for await (const item of streamSubframesAsync(g2, { first: 590 })) {
      expect(Array.from(item.tensor)).toEqual(Array.from(full.subarray(item.index * per, (item.index + 1) * per)));
      m++;
    }
    expect(m).toBe(10);
  });

  it('the CLI writes a --subframes range equal to the slice of the full file', () => {
    const dir = tempDir();
    const file = writeScenario(dir, 's.json', scenario());
    expect(runCli(['generate', file, '--out', join(dir, 'full.npy'), '--quiet']).status).toBe(0);
    expect(runCli(['generate', file, '--out', join(dir, 'part.npy'), '--subframes', '255:300', '--quiet']).status).toBe(0);
    const full = decodeNpy(readFileSync(join(dir, 'full.npy')));
    const part = decodeNpy(readFileSync(join(dir, 'part.npy')));
    expect(part.shape).toEqual([45, ...full.shape.slice(1)]);
    const per = full.data.length / 600;
    expect(Array.from(part.data as Float32Array)).toEqual(Array.from((full.data as Float32Array).subarray(255 * per, 300 * per)));
  });
});
