/**
 * Path listings render the structured interaction records as the text users see (the naming of
 * docs/conventions.md, "Path ids"): `paths --json`, the table and the side file.
 */
import { traceScene } from '@pathweave/geometry';
import { describe, expect, it } from 'vitest';
import { summarizeTraced, type PathSummary } from '../src/scenario/build.js';
import { pathsJson, pathsTable, sideFilePaths } from '../src/scenario/paths.js';

// One wall (y = 5) and one scatterer; the reflection point of Tx (0, 0) -> Rx (10, 0) is (5, 5).
const traced = traceScene(
  {
    walls: [
      {
        vertices: [
          [0, 5],
          [20, 5],
        ],
      },
    ],
    scatterers: [{ position: [5, -3], rcsM2: 1 }],
  },
  { position: [0, 0, 0] },
  { position: [10, 0, 0] },
  28e9,
).paths;
const summaries = traced.map(summarizeTraced);
const byId = (id: string): PathSummary => summaries.find((p) => p.id === id)!;

describe('path listings', () => {
  it('keep the interactions as records in the summary', () => {
    expect(summaries.map((p) => p.id).sort()).toEqual(['R:walls[0]', 'S:scatterers[0]', 'los']);
    expect(byId('R:walls[0]').interactions).toEqual([{ type: 'reflection', object: { kind: 'wall', index: 0 }, point: [5, 5, 0] }]);
    expect(byId('S:scatterers[0]').interactions).toEqual([{ type: 'scatter', object: { kind: 'scatterer', index: 0 }, point: [5, -3, 0] }]);
  });

  it('print the objects by their scene names in JSON, the table and the side file', () => {
    const json = pathsJson(summaries);
    expect(json.find((p) => p.id === 'R:walls[0]')!.interactions).toEqual([{ type: 'reflection', object: 'walls[0]', point: [5, 5, 0] }]);
    expect(json.find((p) => p.id === 'S:scatterers[0]')!.interactions).toEqual([{ type: 'scatter', object: 'scatterers[0]', point: [5, -3, 0] }]);
    const rows = pathsTable(summaries)
      .split('\n')
      .slice(2)
      .map((r) => r.split(/\s{2,}/)[2]);
    expect(rows.sort()).toEqual(['R:walls[0]', 'S:scatterers[0]', 'direct']);
    const side = sideFilePaths(summaries);
    side.forEach((p, i) => expect(Object.keys(p)).toEqual(Object.keys(summaries[i]!)));
    expect(side.find((p) => p.id === 'R:walls[0]')!.interactions).toEqual([{ type: 'reflection', object: 'walls[0]', point: [5, 5, 0] }]);
  });

  it('leave a summary without interactions as it is', () => {
    const explicit: PathSummary = { id: 'paths[0]', kind: 'explicit', delayS: 1e-7, powerDb: -90, phaseDeg: 0, aodDeg: [0, 0], aoaDeg: [180, 0], dopplerHz: 0 };
    expect(sideFilePaths([explicit])).toEqual([explicit]);
    expect(pathsJson([explicit])[0]!.interactions).toBeUndefined();
  });
});
