/**
 * Worker-thread entry of a coverage run with `--workers` (coverage.ts, computeCoverageInWorkers):
 * workerData holds the scenario (imports already expanded: plain data) and the grid; each
 * message { first, end } asks for grid rows [first, end), answered with the maps of those rows
 * (their buffers transferred) or { error }. The maps come from the same computeCoverage the main
 * thread runs, so a point's values do not depend on which thread traced it.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { COVERAGE_ARRAYS, computeCoverage, type CoverageGrid } from '../coverage.js';
import type { Scenario } from '../../scenario/schema.js';

const data = workerData as { scenario: Scenario; grid: CoverageGrid };
parentPort!.on('message', (m: { first: number; end: number }) => {
  try {
    const maps = computeCoverage(data.scenario, data.grid, [m.first, m.end]);
    parentPort!.postMessage(
      { first: m.first, maps },
      COVERAGE_ARRAYS.map((a) => maps[a.name].buffer as ArrayBuffer),
    );
  } catch (e) {
    parentPort!.postMessage({ first: m.first, error: e instanceof Error ? e.message : String(e) });
  }
});
