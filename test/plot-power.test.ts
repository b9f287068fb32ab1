/**
 * The `power` figure's data (packages/io/src/plot/power.ts): the total path power is
 * sum_l |rho_l|^2, which for static explicit paths is the sum of their stated powers (the
 * scenario's own numbers); the channel's power is mean |H|^2 over subcarriers and element pairs,
 * checked against numpy on the file pathweave wrote (C); a file and the run in memory agree.
 */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { closePlotSource, openPlotSource, plotSource, powerOverTimeFigure, powerOverTimeOf } from '../packages/io/src/plot/index.js';
import { hasPython, pythonJson } from './support/python.js';
import { ROOT, runCli, tempDir } from './support/run.js';

const FIXTURE = join(ROOT, 'test', 'fixtures', 'three-path-static.json');

describe('power over time', () => {
  it('the total path power of static explicit paths is the sum of their stated powers', async () => {
    const p = await powerOverTimeOf(await openPlotSource(FIXTURE));
    const expected = 10 * Math.log10(10 ** (-97.3 / 10) + 10 ** (-106.0 / 10) + 10 ** (-112.4 / 10));
    expect(p.series.map((s) => s.label)).toEqual(['all paths, sum of |rho|^2', 'explicit', 'channel, mean |H|^2']);
    for (const v of p.series[0]!.powerDb) expect(v).toBeCloseTo(expected, 9);
    expect([...p.timesS]).toEqual([0, 0.0005, 0.001]);
  });

  it.runIf(hasPython('numpy'))('a file gives the run in memory, and the channel power is numpy mean |H|^2 of the file (C)', async () => {
    const dir = tempDir();
    const out = join(dir, 'three.npz');
    expect(runCli(['generate', FIXTURE, '--out', out, '--format', 'npz', '--quiet']).status).toBe(0);
    const source = await openPlotSource(out);
    try {
      const fromFile = await powerOverTimeOf(source);
      const inMemory = await powerOverTimeOf(await openPlotSource(FIXTURE));
      const numpy = pythonJson<number[]>(
        'import json, sys, numpy as np\nH = np.load(sys.argv[1])["H"]\nprint(json.dumps((10 * np.log10((np.abs(H.astype(np.complex128)) ** 2).mean(axis=(1, 2, 3)))).tolist()))',
        [out],
      );
      const channel = fromFile.series.at(-1)!.powerDb;
      numpy.forEach((v, s) => expect(channel[s]).toBeCloseTo(v, 9));
      // complex64 in the file, the same numbers in memory: agreement to the single-precision rounding.
      fromFile.series.forEach((s, i) => s.powerDb.forEach((v, k) => expect(v).toBeCloseTo(inMemory.series[i]!.powerDb[k]!, 4)));
      const svg = await plotSource(source, 'power');
      expect(svg.match(/class="series"/g)?.length).toBe(3);
    } finally {
      await closePlotSource(source);
    }
  });

  it('the figure breaks a curve where the power is zero and refuses mismatched series', () => {
    const svg = powerOverTimeFigure({
      title: 'gap',
      timesS: Float64Array.of(0, 1, 2, 3, 4),
      series: [{ label: 'los', powerDb: Float64Array.of(-90, -91, -Infinity, -92, -93), style: 'dashed' }],
    });
    expect(svg.match(/<polyline/g)?.length).toBe(2);
    expect(() =>
      powerOverTimeFigure({ title: 'x', timesS: Float64Array.of(0, 1), series: [{ label: 'a', powerDb: Float64Array.of(1), style: 'line' }] }),
    ).toThrow('series "a" has 1 values for 2 times');
  });
});
