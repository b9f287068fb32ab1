import { readFileSync } from 'node:fs';
/**
 * Named benchmark workloads: scenarios of our own, written as pathweave scenario files, with the
 * per-path Gauss-Markov alpha the numpy side needs (numpy has no Bessel function; the value is
 * the Clarke/Jakes J0 lag correlation of docs/conventions.md, taken from pathweave's own generator).
 * Tensor layout of every output: [S, K or taps, Nr, Nt] complex64, row-major, interleaved.
 */

/** Eight explicit paths around a 28 GHz small cell: angles, delays and powers of our own. */
export function eightPaths() {
  const paths = [];
  for (let l = 0; l < 8; l++) {
    paths.push({
      id: `p${l}`,
      aodDeg: [-50 + 13 * l, -12 + 2.5 * l],
      aoaDeg: [170 - 29 * l, 8 - 3 * l],
      delayS: 60e-9 + 37e-9 * l + 3.3e-9 * l * l,
      powerDb: -95 - 2.2 * l,
    });
  }
  return paths;
}

function base({ subcarriers, subframes, rows = 8, columns = 8, rxRows = 4, rxColumns = 4 }) {
  return {
    carrierHz: 28e9,
    timing: { subframeS: 0.000125, subframes },
    ...(subcarriers !== undefined ? { band: { subcarriers, spacingHz: 120e3 } } : {}),
    transmitter: { position: [0, 0, 10], array: { kind: 'upa', rows, columns } },
    receiver: { position: [60, 20, 1.5], velocity: [3, 0, 0], array: { kind: 'upa', rows: rxRows, columns: rxColumns } },
    paths: eightPaths(),
    fading: { model: 'gauss-markov' },
    seed: 20261201,
    precision: 'complex64',
  };
}

/** The workloads of docs/performance.md. `coefficients` = S x bins x Nr x Nt complex values. */
export const WORKLOADS = {
  dataset: {
    description: 'tx UPA 8x8, rx UPA 4x4, 8 paths, Gauss-Markov, 256 subcarriers, 600 subframes, complex64 to .npy',
    scenario: base({ subcarriers: 256, subframes: 600 }),
    endToEnd: true,
  },
  wideband: {
    description: '64 x 16 elements, 1024 subcarriers, 8 paths, 20 subframes',
    scenario: base({ subcarriers: 1024, subframes: 20 }),
  },
  taps: {
    description: '64 taps, sinc pulse, 64 x 16 elements, 8 paths, 200 subframes',
    scenario: { ...base({ subframes: 200 }), taps: { sampleRateHz: 122.88e6, count: 64, pulse: 'sinc' } },
  },
  tracer: {
    description: 'traceScene: a 20 x 12 x 4 m room (6 surfaces) with 14 metal panels (20 walls), reflection order 2',
    tracer: true,
  },
};

/** The 20-wall room of the tracer workload (test/fixtures/twenty-wall-room.json, shared with the geometry tests). */
export function twentyWallRoom() {
  return JSON.parse(readFileSync(new URL('../test/fixtures/twenty-wall-room.json', import.meta.url), 'utf8')).scene;
}

/** Complex values of a workload's whole tensor. */
export function coefficientsOf(scenario) {
  const bins = scenario.band?.subcarriers ?? scenario.taps.count;
  const n = (a) => a.rows * a.columns;
  return scenario.timing.subframes * bins * n(scenario.transmitter.array) * n(scenario.receiver.array);
}
