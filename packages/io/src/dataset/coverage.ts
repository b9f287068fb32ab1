/**
 * Coverage maps (`pathweave coverage`): the scenario's transmitter, arrays (orientation and
 * polarisation), carrier and scene, with the receiver moved to every point of a grid, at one
 * instant (t = 0), and per point the summary of the traced paths (docs/coverage.md).
 *
 * Grid: point (row r, column c) = origin + c uStepM u + r vStepM v, u and v the unit vectors of
 * `coverage.uAxis` and `coverage.vAxis` (default east and north). Layout: every map is
 * [R, C] row-major (R rows along v, C columns along u), `pointsM` is [R, C, 3]; axis 0 is the
 * row axis, the one `--shard` splits and merge concatenates.
 *
 * Per point, from the traced paths l with power P_l = |rho_l|^2 (isotropic elements of 0 dBi,
 * the polarisation factor of the arrays included as the tracer includes it):
 * - pathGainDb = 10 log10(sum P_l);
 * - delaySpreadS = sqrt(sum P_l (tau_l - tau_bar)^2 / sum P_l), tau_bar = sum P_l tau_l / sum P_l;
 * - azimuth spreads (3GPP TR 38.901 Annex A.1, the circular definition):
 *   AS = sqrt(-2 ln(|sum P_l exp(j phi_l)| / sum P_l)), in degrees;
 * - ricianKDb = 10 log10(P_los / sum of the other P_l): -Infinity without a LOS path, +Infinity
 *   when the LOS path is the only one;
 * - strongestKind: the code (index in PATH_KIND_NAMES) of the strongest path's kind.
 * A point is invalid (valid = 0, the maps NaN, pathCount 0, strongestKind -1) when the receiver
 * cannot stand there (inside a blocker, on a scatterer or on the transmitter) or no path reaches it.
 */
import { Worker } from 'node:worker_threads';
import { prepareScene, rotationFromOrientation, traceScene, type TerminalState, type Vec3 } from '@pathweave/geometry';
import { commitWithSideFile, writeFileAtomic } from '../formats/atomic.js';
import { openSink, type OutputFormat } from '../formats/index.js';
import { encodeNpy } from '../formats/npy.js';
import type { Attribute, DType, NamedArray } from '../formats/sink.js';
import { motionOf, sceneOf } from '../scenario/build.js';
import { ScenarioError } from '../scenario/problems.js';
import type { CoverageConfig, Scenario } from '../scenario/schema.js';
import { PATHWEAVE_VERSION } from '../version.js';

/**
 * Path kinds by code: a path of kind PATH_KIND_NAMES[k] has strongestKind k (stored as the
 * `pathKindNames` attribute); -1 marks an invalid point.
 * @example PATH_KIND_NAMES.indexOf('reflection') // 1
 */
export const PATH_KIND_NAMES: readonly string[] = Object.freeze(['los', 'reflection', 'scatter', 'diffraction', 'transmission', 'diffuse']);

/**
 * A coverage grid with its directions made unit vectors and its steps resolved.
 * @example const grid: CoverageGrid = { origin: [0, 0, 1.5], u: [1, 0, 0], v: [0, 1, 0], uStepM: 2, vStepM: 2, columns: 11, rows: 6 };
 */
export interface CoverageGrid {
  /** Point (row 0, column 0), m. */
  origin: Vec3;
  /** Unit vector along the columns. */
  u: Vec3;
  /** Unit vector along the rows. */
  v: Vec3;
  uStepM: number;
  vStepM: number;
  columns: number;
  rows: number;
}

/**
 * The grid of a validated `coverage` section (docs/coverage.md).
 * @example coverageGridOf({ origin: [0, 0], columns: 3, rows: 2, stepM: 0.5, uAxis: [0, 2, 0], vAxis: [-1, 0, 0] }) // { origin: [0, 0, 0], u: [0, 1, 0], v: [-1, 0, 0], uStepM: 0.5, vStepM: 0.5, columns: 3, rows: 2 }
 */
export function coverageGridOf(config: CoverageConfig): CoverageGrid {
  const unit = (a: readonly number[]): Vec3 => {
    const n = Math.hypot(a[0]!, a[1]!, a[2]!);
    return [a[0]! / n, a[1]! / n, a[2]! / n];
  };
  return {
    origin: [config.origin[0], config.origin[1], config.origin[2] ?? 0],
    u: unit(config.uAxis ?? [1, 0, 0]),
    v: unit(config.vAxis ?? [0, 1, 0]),
    uStepM: (config.uStepM ?? config.stepM)!,
    vStepM: (config.vStepM ?? config.stepM)!,
    columns: config.columns,
    rows: config.rows,
  };
}

/**
 * The position of grid point (row, column), written into `out`.
 * @example gridPoint({ origin: [1, 2, 1.5], u: [1, 0, 0], v: [0, 1, 0], uStepM: 2, vStepM: 0.5, columns: 4, rows: 3 }, 2, 3, [0, 0, 0]) // [7, 3, 1.5]
 */
export function gridPoint(grid: CoverageGrid, row: number, column: number, out: Vec3): Vec3 {
  const a = column * grid.uStepM,
    b = row * grid.vStepM;
  out[0] = grid.origin[0] + a * grid.u[0] + b * grid.v[0];
  out[1] = grid.origin[1] + a * grid.u[1] + b * grid.v[1];
  out[2] = grid.origin[2] + a * grid.u[2] + b * grid.v[2];
  return out;
}

/**
 * What a point's summary reads of a path (a TracedPath or a PathSummary has these fields).
 * @example const los: CoveragePath = { kind: 'los', powerDb: -81.391, delayS: 3.3356e-8, aodDeg: [0, 0], aoaDeg: [180, 0] };
 */
export interface CoveragePath {
  kind: string;
  powerDb: number;
  delayS: number;
  aodDeg: readonly number[];
  aoaDeg: readonly number[];
}

/**
 * The summary of one point's paths (the module comment gives the formulas).
 * @example const metrics: PointMetrics = { pathGainDb: -81.4, pathCount: 1, delaySpreadS: 0, azimuthSpreadArrivalDeg: 0, azimuthSpreadDepartureDeg: 0, ricianKDb: Infinity, strongestKind: 0 };
 */
export interface PointMetrics {
  pathGainDb: number;
  pathCount: number;
  delaySpreadS: number;
  azimuthSpreadArrivalDeg: number;
  azimuthSpreadDepartureDeg: number;
  ricianKDb: number;
  strongestKind: number;
}

/** 3GPP TR 38.901 Annex A.1: sqrt(-2 ln R), R = |sum P exp(j phi)| / sum P, in degrees (0 when rounding gives R > 1). */
function circularSpreadDeg(paths: readonly CoveragePath[], which: 'aodDeg' | 'aoaDeg', total: number): number {
  let re = 0,
    im = 0;
  for (const p of paths) {
    const w = 10 ** (p.powerDb / 10);
    const phi = (p[which][0]! * Math.PI) / 180;
    re += w * Math.cos(phi);
    im += w * Math.sin(phi);
  }
  const r = Math.hypot(re, im) / total;
  return r >= 1 ? 0 : (Math.sqrt(-2 * Math.log(r)) * 180) / Math.PI;
}

/**
 * The summary of a point's paths; undefined when no path carries power.
 * @example
 * pointMetrics([
 *   { kind: 'los', powerDb: -80, delayS: 0, aodDeg: [0, 0], aoaDeg: [180, 0] },
 *   { kind: 'reflection', powerDb: -80, delayS: 2e-8, aodDeg: [90, 0], aoaDeg: [90, 0] },
 * ]) // { pathGainDb: -76.99, pathCount: 2, delaySpreadS: 1e-8, azimuthSpreadArrivalDeg: 67.3, azimuthSpreadDepartureDeg: 47.6, ricianKDb: 0, strongestKind: 0 }
 */
export function pointMetrics(paths: readonly CoveragePath[]): PointMetrics | undefined {
  let total = 0,
    los = 0,
    mean = 0,
    best = -1,
    bestPower = -Infinity;
  paths.forEach((p, i) => {
    const w = 10 ** (p.powerDb / 10);
    total += w;
    mean += w * p.delayS;
    if (p.kind === 'los') los += w;
    if (w > bestPower) {
      bestPower = w;
      best = i;
    }
  });
  if (!(total > 0)) return undefined;
  mean /= total;
  // Second pass about the mean: no cancellation between two large sums.
  let second = 0;
  for (const p of paths) second += 10 ** (p.powerDb / 10) * (p.delayS - mean) ** 2;
  const kind = PATH_KIND_NAMES.indexOf(paths[best]!.kind);
  if (kind < 0) throw new RangeError(`pointMetrics(): path kind must be one of ${PATH_KIND_NAMES.join(', ')}, got ${JSON.stringify(paths[best]!.kind)}`);
  const rest = total - los;
  return {
    pathGainDb: 10 * Math.log10(total),
    pathCount: paths.length,
    delaySpreadS: Math.sqrt(second / total),
    azimuthSpreadArrivalDeg: circularSpreadDeg(paths, 'aoaDeg', total),
    azimuthSpreadDepartureDeg: circularSpreadDeg(paths, 'aodDeg', total),
    ricianKDb: los === 0 ? -Infinity : rest > 0 ? 10 * Math.log10(los / rest) : Infinity,
    strongestKind: kind,
  };
}

/**
 * One array of a coverage file: every one has the row axis first.
 * @example const row: CoverageArray = { name: 'pathGainDb', dtype: 'float64', units: 'dB', axes: ['R', 'C'] };
 */
export interface CoverageArray {
  name: keyof Omit<CoverageMaps, 'rowRange' | 'columns'>;
  dtype: Exclude<DType, 'string' | 'complex64' | 'complex128'>;
  units: string;
  axes: readonly string[];
}

/**
 * The arrays of a coverage file, in the order they are written (R rows, C columns, 3 an [x, y, z] component).
 * @example COVERAGE_ARRAYS.map((a) => a.name).slice(0, 3) // ['pathGainDb', 'pathCount', 'delaySpreadS']
 */
export const COVERAGE_ARRAYS: readonly CoverageArray[] = Object.freeze([
  { name: 'pathGainDb', dtype: 'float64', units: 'dB', axes: ['R', 'C'] },
  { name: 'pathCount', dtype: 'int32', units: '1', axes: ['R', 'C'] },
  { name: 'delaySpreadS', dtype: 'float64', units: 's', axes: ['R', 'C'] },
  { name: 'azimuthSpreadArrivalDeg', dtype: 'float64', units: 'deg', axes: ['R', 'C'] },
  { name: 'azimuthSpreadDepartureDeg', dtype: 'float64', units: 'deg', axes: ['R', 'C'] },
  { name: 'ricianKDb', dtype: 'float64', units: 'dB', axes: ['R', 'C'] },
  { name: 'strongestKind', dtype: 'int32', units: '1', axes: ['R', 'C'] },
  { name: 'valid', dtype: 'uint8', units: '1', axes: ['R', 'C'] },
  { name: 'pointsM', dtype: 'float64', units: 'm', axes: ['R', 'C', '3'] },
] satisfies CoverageArray[]);

/**
 * The maps of grid rows [rowRange[0], rowRange[1]) (module comment: layout and meaning).
 * @example
 * const { paths, ...traced } = scenario;
 * const maps: CoverageMaps = computeCoverage({ ...traced, scene: {} }, coverageGridOf({ origin: [5, 0, 10], columns: 3, rows: 4, stepM: 1 }), [1, 3]);
 * [maps.rowRange, maps.pathGainDb.length, maps.pointsM.slice(0, 3)] // [[1, 3], 6, [5, 1, 10]]: rows 1 and 2 of 3 points each
 */
export interface CoverageMaps {
  rowRange: [number, number];
  columns: number;
  pathGainDb: Float64Array;
  pathCount: Int32Array;
  delaySpreadS: Float64Array;
  azimuthSpreadArrivalDeg: Float64Array;
  azimuthSpreadDepartureDeg: Float64Array;
  ricianKDb: Float64Array;
  strongestKind: Int32Array;
  valid: Uint8Array;
  pointsM: Float64Array;
}

/**
 * Empty maps for `rows` rows of `columns` points (invalid until filled).
 * @example emptyCoverageMaps([2, 4], 3).valid // Uint8Array [0, 0, 0, 0, 0, 0]
 */
export function emptyCoverageMaps(rowRange: [number, number], columns: number): CoverageMaps {
  const n = (rowRange[1] - rowRange[0]) * columns;
  return {
    rowRange,
    columns,
    pathGainDb: new Float64Array(n).fill(NaN),
    pathCount: new Int32Array(n),
    delaySpreadS: new Float64Array(n).fill(NaN),
    azimuthSpreadArrivalDeg: new Float64Array(n).fill(NaN),
    azimuthSpreadDepartureDeg: new Float64Array(n).fill(NaN),
    ricianKDb: new Float64Array(n).fill(NaN),
    strongestKind: new Int32Array(n).fill(-1),
    valid: new Uint8Array(n),
    pointsM: new Float64Array(3 * n),
  };
}

/**
 * Options of computeCoverage.
 * @example const options: CoverageOptions = { onProgress: (rows) => console.error(`${rows} rows done`) };
 */
export interface CoverageOptions {
  /** Called after each row with the rows done so far (of this range). */
  onProgress?: (rowsDone: number) => void;
  /** Checked between rows; when aborted the computation throws its reason. */
  signal?: AbortSignal;
}

/**
 * Refuse a scenario and grid a coverage map cannot be made of (ScenarioError, dotted paths):
 * explicit paths instead of a scene, or grid points off the plane z = 0 of a 2-D scene.
 * @example checkCoverage({ ...scenario, scene: undefined }, coverageGridOf({ origin: [0, 0], columns: 2, rows: 2, stepM: 1 })) // throws ScenarioError "scenario: 1 problem\npaths: a coverage map traces a scene; this scenario gives explicit paths"
 */
export function checkCoverage(scenario: Scenario, grid: CoverageGrid): void {
  if (scenario.scene === undefined) throw new ScenarioError([{ path: 'paths', message: 'a coverage map traces a scene; this scenario gives explicit paths' }]);
  const ps = prepareScene(sceneOf(scenario));
  if (ps.is2D && (grid.origin[2] !== 0 || grid.u[2] !== 0 || grid.v[2] !== 0)) {
    throw new ScenarioError([
      {
        path: grid.origin[2] !== 0 ? 'coverage.origin' : grid.u[2] !== 0 ? 'coverage.uAxis' : 'coverage.vAxis',
        message: `the scene is 2-D, so every grid point must have z = 0; got origin z = ${grid.origin[2]}, uAxis z = ${grid.u[2]}, vAxis z = ${grid.v[2]}`,
      },
    ]);
  }
}

/**
 * Trace the scene from the transmitter (at t = 0) to every point of grid rows [a, b) and
 * summarise each point's paths. The receiver keeps the orientation and polarisation of the
 * scenario's receiver (the first of `receivers`); clusters are not applied (specular paths).
 * @example
 * const { paths, ...traced } = scenario; // the transmitter at [0, 0, 10], 28 GHz
 * const maps = computeCoverage({ ...traced, scene: {} }, coverageGridOf({ origin: [5, 0, 10], columns: 2, rows: 1, stepM: 5 }), [0, 1]);
 * Array.from(maps.pathGainDb, (g) => Math.round(g * 100) / 100) // [-75.37, -81.39]: free space at 5 m and 10 m (ITU-R P.525)
 */
export function computeCoverage(scenario: Scenario, grid: CoverageGrid, rowRange: [number, number], options: CoverageOptions = {}): CoverageMaps {
  const [a, b] = rowRange;
  if (!(Number.isSafeInteger(a) && Number.isSafeInteger(b) && a >= 0 && a < b && b <= grid.rows))
    throw new RangeError(`computeCoverage(): rowRange must be [a, b) with 0 <= a < b <= ${grid.rows}, got [${a}, ${b})`);
  checkCoverage(scenario, grid);
  const ps = prepareScene(sceneOf(scenario));
  const txMotion = motionOf(scenario.transmitter);
  const receiver = scenario.receiver ?? scenario.receivers![0]!;
  const rxMotion = motionOf(receiver);
  const orientationOf = (motion: ReturnType<typeof motionOf>, fixed: Parameters<typeof rotationFromOrientation>[0]) =>
    rotationFromOrientation(motion.turns ? motion.orientationAt(0) : (fixed ?? {}));
  const tx: TerminalState = {
    position: txMotion.positionAt(0),
    rotation: orientationOf(txMotion, scenario.transmitter.array.orientation),
    ...(scenario.transmitter.array.polarization !== undefined ? { polarization: scenario.transmitter.array.polarization } : {}),
  };
  const point: Vec3 = [0, 0, 0];
  const rx: TerminalState = {
    position: point,
    rotation: orientationOf(rxMotion, receiver.array.orientation),
    ...(receiver.array.polarization !== undefined ? { polarization: receiver.array.polarization } : {}),
  };
  const maps = emptyCoverageMaps(rowRange, grid.columns);
  for (let r = a; r < b; r++) {
    if (options.signal?.aborted) throw options.signal.reason ?? new Error('aborted');
    for (let c = 0; c < grid.columns; c++) {
      const i = (r - a) * grid.columns + c;
      gridPoint(grid, r, c, point);
      maps.pointsM[3 * i] = point[0];
      maps.pointsM[3 * i + 1] = point[1];
      maps.pointsM[3 * i + 2] = point[2];
      // A receiver inside a blocker or on a scatterer or the transmitter: no channel there.
      if (ps.terminalProblems(tx.position as Vec3, point).length > 0) continue;
      const m = pointMetrics(traceScene(ps, tx, rx, scenario.carrierHz).paths);
      if (m === undefined) continue;
      maps.valid[i] = 1;
      maps.pathGainDb[i] = m.pathGainDb;
      maps.pathCount[i] = m.pathCount;
      maps.delaySpreadS[i] = m.delaySpreadS;
      maps.azimuthSpreadArrivalDeg[i] = m.azimuthSpreadArrivalDeg;
      maps.azimuthSpreadDepartureDeg[i] = m.azimuthSpreadDepartureDeg;
      maps.ricianKDb[i] = m.ricianKDb;
      maps.strongestKind[i] = m.strongestKind;
    }
    options.onProgress?.(r - a + 1);
  }
  return maps;
}

/**
 * Where the compiled coverage worker lives (dist/dataset/workers/coverage-worker.js), reached the
 * same way from src/ (tests run the sources) and from dist/.
 * @example COVERAGE_WORKER_URL.pathname.endsWith('/dist/dataset/workers/coverage-worker.js') // true
 */
export const COVERAGE_WORKER_URL: URL = new URL('../../dist/dataset/workers/coverage-worker.js', import.meta.url);

/**
 * computeCoverage spread over `workers` worker threads, a few grid rows at a time; the maps are
 * the same bytes as computeCoverage's in one thread (each point is traced on its own).
 * `onProgress` is called as each batch of rows comes back.
 * @example
 * const { paths, ...traced } = scenario; // the transmitter at [0, 0, 10], 28 GHz
 * const grid = coverageGridOf({ origin: [5, 0, 10], columns: 2, rows: 4, stepM: 5 });
 * const maps = await computeCoverageInWorkers({ ...traced, scene: {} }, grid, [0, 4], 2);
 * Math.round(maps.pathGainDb[1]! * 100) / 100 // -81.39: free space at 10 m (ITU-R P.525)
 */
export async function computeCoverageInWorkers(
  scenario: Scenario,
  grid: CoverageGrid,
  rowRange: [number, number],
  workers: number,
  options: CoverageOptions = {},
): Promise<CoverageMaps> {
  const [a, b] = rowRange;
  if (!(Number.isSafeInteger(workers) && workers >= 1)) throw new RangeError(`computeCoverageInWorkers(): workers must be an integer >= 1, got ${workers}`);
  checkCoverage(scenario, grid);
  const maps = emptyCoverageMaps(rowRange, grid.columns);
  // Batches small enough to balance threads over rows of unequal cost (open streets, courtyards).
  const batch = Math.max(1, Math.ceil((b - a) / (4 * workers)));
  const batches: [number, number][] = [];
  for (let r = a; r < b; r += batch) batches.push([r, Math.min(b, r + batch)]);
  const pool = Array.from({ length: Math.min(workers, batches.length) }, () => new Worker(COVERAGE_WORKER_URL, { workerData: { scenario, grid } }));
  let done = 0;
  try {
    await Promise.all(
      pool.map(
        (w) =>
          new Promise<void>((resolve, reject) => {
            const next = (): void => {
              if (options.signal?.aborted) return reject(options.signal.reason ?? new Error('aborted'));
              const job = batches.shift();
              if (job === undefined) return resolve();
              w.postMessage({ first: job[0], end: job[1] });
            };
            w.on('message', (m: { first: number; maps?: CoverageMaps; error?: string }) => {
              if (m.error !== undefined || m.maps === undefined) return reject(new Error(`coverage worker: ${m.error ?? 'no maps'}`));
              const offset = (m.first - a) * grid.columns;
              for (const arr of COVERAGE_ARRAYS)
                (maps[arr.name] as Float64Array).set(m.maps[arr.name] as Float64Array, arr.name === 'pointsM' ? 3 * offset : offset);
              done += m.maps.rowRange[1] - m.maps.rowRange[0];
              options.onProgress?.(done);
              next();
            });
            w.on('error', reject);
            next();
          }),
      ),
    );
  } finally {
    await Promise.all(pool.map((w) => w.terminate()));
  }
  return maps;
}

/**
 * What a coverage file records besides its maps (its root attributes, or a .npy's side file).
 * @example const facts: CoverageFacts = { scenarioText: '{"carrierHz": 28e9}', grid: coverageGridOf({ origin: [0, 0], columns: 2, rows: 6, stepM: 1 }), rowsTotal: 6 };
 */
export interface CoverageFacts {
  /** The scenario file's text. */
  scenarioText: string;
  grid: CoverageGrid;
  rowsTotal: number;
}

/** Root attributes of a coverage file, in the order they are written. */
function coverageAttributes(facts: CoverageFacts, rowRange: [number, number]): Attribute[] {
  return [
    { name: 'product', dtype: 'string', value: 'coverage' },
    { name: 'scenario', dtype: 'string', value: facts.scenarioText },
    { name: 'pathweaveVersion', dtype: 'string', value: PATHWEAVE_VERSION },
    { name: 'coverageGrid', dtype: 'string', value: JSON.stringify(facts.grid) },
    { name: 'rowRange', dtype: 'string', value: `${rowRange[0]}:${rowRange[1]}` },
    { name: 'rowsTotal', dtype: 'int64', value: facts.rowsTotal },
    { name: 'pathKindNames', dtype: 'string', value: JSON.stringify(PATH_KIND_NAMES) },
    { name: 'pathGain', dtype: 'string', value: 'sum of the path powers, isotropic elements (0 dBi), polarisation as traced' },
    { name: 'ricianKNoLineOfSight', dtype: 'string', value: '-Infinity' },
  ];
}

/**
 * The named arrays of coverage maps (COVERAGE_ARRAYS order).
 * @example coverageArrays(emptyCoverageMaps([0, 2], 3))[8]!.shape // [2, 3, 3]: pointsM
 */
export function coverageArrays(maps: CoverageMaps): NamedArray[] {
  const rows = maps.rowRange[1] - maps.rowRange[0];
  return COVERAGE_ARRAYS.map((a) => ({
    name: a.name,
    dtype: a.dtype,
    shape: a.axes.length === 3 ? [rows, maps.columns, 3] : [rows, maps.columns],
    data: maps[a.name],
    units: a.units,
  }));
}

/**
 * The side file of a coverage .npy (`<file>.json`): a .npy holds one array, `pathGainDb`; the
 * side file says so and carries the attributes (docs/coverage.md).
 */
function npySideFileText(facts: CoverageFacts, maps: CoverageMaps): string {
  const attributes = Object.fromEntries(coverageAttributes(facts, maps.rowRange).map((a) => [a.name, a.name === 'scenario' ? undefined : a.value]));
  const doc = {
    ...attributes,
    // Not `tensor`: that names a channel tensor (H or h) in generate's side files.
    array: { name: 'pathGainDb', dtype: 'float64', shape: [maps.rowRange[1] - maps.rowRange[0], maps.columns], units: 'dB' },
    scenario: JSON.parse(facts.scenarioText) as unknown,
  };
  return JSON.stringify(doc, null, 2) + '\n';
}

/**
 * Write coverage maps to `out` atomically (temporary file, then rename): .npz and .h5 hold every
 * array of COVERAGE_ARRAYS and the attributes; a .npy holds `pathGainDb` with a side file
 * `<out>.json` (written first, as generate does). Returns the bytes of `out`.
 * @example
 * const grid = coverageGridOf({ origin: [0, 0, 1.5], columns: 3, rows: 2, stepM: 1 });
 * const facts: CoverageFacts = { scenarioText: JSON.stringify(scenario), grid, rowsTotal: 2 };
 * await writeCoverage('map.npy', 'npy', emptyCoverageMaps([0, 2], 3), facts) // 176: a 128-byte header and 2 x 3 float64 values (all NaN: nothing computed)
 * JSON.parse(readFileSync('map.npy.json', 'utf8')).array.name // "pathGainDb"
 */
export async function writeCoverage(out: string, format: OutputFormat, maps: CoverageMaps, facts: CoverageFacts): Promise<number> {
  const arrays = coverageArrays(maps);
  if (format === 'npy') {
    const bytes = encodeNpy(arrays[0]!);
    return commitWithSideFile(`${out}.json`, npySideFileText(facts, maps), async () => {
      await writeFileAtomic(out, bytes);
      return bytes.length;
    });
  }
  const sink = await openSink(format, out);
  try {
    for (const a of arrays) await sink.addArray(a);
    for (const a of coverageAttributes(facts, maps.rowRange)) await sink.setAttribute(a);
    return await sink.commit();
  } catch (e) {
    await sink.abort();
    throw e;
  }
}
