/**
 * The plan: one pure function from a validated scenario to everything a run is made of, with
 * every default applied here and nowhere else (precision, symbol axis and symbol times,
 * subcarrier spacing from the numerology, pulse and roll-off, beam squint, element and port
 * counts, array spacing and orientation, wavefront, geometry update time, seed). The plan is
 * plain data (JSON-serialisable): generate, the worker threads, the sinks, the .npy side file,
 * inspect, plot, the size and memory estimates and validate's summary read it, never the raw
 * scenario. build.ts turns a plan into generators (adding the traced epochs).
 *
 * Tensor layout: [S, (U,) (symbols,) K or count, Nr, Nt] complex interleaved (docs/conventions.md,
 * "Tensor layout"); the other arrays of a file are listed in dataset/layout.ts.
 */
import {
  clusterPreset,
  nrNumerology,
  nrSymbolTimesS,
  numerologyClock,
  uniformSymbolTimesS,
  type ClusterSpread,
  type CyclicPrefix,
  type FadingSpec,
  type Precision,
  type PulseShape,
} from '@pathweave/core';
import { DATASET_ARRAYS, DATASET_ATTRIBUTES, type DatasetArray } from '../dataset/layout.js';
import { CURRENT_FORMAT_VERSION, SCENARIO_DEFAULTS, type ArrayConfig, type ClusterConfig, type Scenario, type TerminalConfig } from './schema.js';
import { ScenarioError } from './problems.js';

/**
 * Output domain of a run.
 * @example const domain: Domain = 'taps'; // tap-delay output, [S, count, Nr, Nt]
 */
export type Domain = 'frequency' | 'taps';

/**
 * An array with its defaults applied.
 * @example
 * const array: ArrayPlan = planArray({ kind: 'upa', rows: 2, columns: 4, dualPolarized: 'vh' });
 * [array.elements, array.ports, array.spacingWavelengths] // [8, 16, 0.5]
 */
export interface ArrayPlan {
  config: ArrayConfig;
  /** Antenna elements (ULA elements, UPA rows x columns, custom positions). */
  elements: number;
  /** Ports per element: 2 for a dual-polarised array, else 1. */
  portsPerElement: 1 | 2;
  /** elements x portsPerElement: the Nr or Nt axis. */
  ports: number;
  /** Element spacing in wavelengths (ULA and UPA; undefined for custom positions). */
  spacingWavelengths: number | undefined;
  orientation: { yawDeg: number; pitchDeg: number; rollDeg: number };
  wavefront: 'plane' | 'spherical' | 'auto';
}

/**
 * A terminal of the plan.
 * @example const where: TerminalPlan['path'] = 'receivers[1]';
 */
export interface TerminalPlan {
  /** Dotted path of the terminal in the scenario ("transmitter", "receiver", "receivers[i]"). */
  path: string;
  config: TerminalConfig;
  array: ArrayPlan;
}

/**
 * A user (receiver) of the plan.
 * @example const user: Pick<UserPlan, 'id' | 'streamKey'> = { id: 'ue-b', streamKey: 'ue-b' };
 */
export interface UserPlan extends TerminalPlan {
  /** Its `id`, else its index in `receivers` ("" for a lone `receiver` without id). */
  id: string;
  /** Prefix of its random-stream keys (undefined for a lone receiver without id). */
  streamKey: string | undefined;
}

/**
 * Time axis of the plan.
 * @example const timing: Pick<TimingPlan, 'stepsPerSubframe' | 'symbolAxis'> = { stepsPerSubframe: 1, symbolAxis: false };
 */
export interface TimingPlan {
  subframeS: number;
  subframes: number;
  /** True when the tensor has a symbol axis after S (and U). */
  symbolAxis: boolean;
  /** Steps per subframe: symbols per subframe, 1 without a symbol axis. */
  stepsPerSubframe: number;
  /** Start of each step within its subframe, seconds (NR symbol starts with a numerology). */
  symbolTimesS: number[];
  numerology: number | undefined;
  cyclicPrefix: CyclicPrefix | undefined;
  /** Time between geometry updates (timing.geometryUpdateS, default one subframe), seconds. */
  geometryUpdateS: number;
  /** Time of the run's last step, seconds (the traced geometry covers [0, lastStepTimeS]). */
  lastStepTimeS: number;
}

/**
 * The output grid with its defaults.
 * @example const grid: GridPlan = { domain: 'frequency', subcarriers: 64, spacingHz: 120e3, beamSquint: false };
 */
export type GridPlan =
  | { domain: 'frequency'; subcarriers: number; spacingHz: number; beamSquint: boolean }
  | { domain: 'taps'; sampleRateHz: number; count: number; pulse: PulseShape; rollOff: number; alignFirstPath: boolean };

/**
 * A scenario made into a plan (plain data; see the module comment).
 * @example
 * const plan: ScenarioPlan = planScenario(scenario);
 * [plan.domain, plan.tensor.shape, plan.tensor.bytesPerSubframe] // ['frequency', [10, 64, 2, 4], 4096]
 */
export interface ScenarioPlan {
  /** The validated scenario (its scene, paths and motion are built from it). */
  scenario: Scenario;
  /** The scenario format version (formatVersion, default the current one). */
  formatVersion: number;
  domain: Domain;
  seed: number;
  precision: Precision;
  /** 8 for complex64, 16 for complex128. */
  bytesPerValue: 8 | 16;
  carrierHz: number;
  timing: TimingPlan;
  grid: GridPlan;
  transmitter: TerminalPlan;
  users: UserPlan[];
  /** True when the scenario uses `receivers` (a user axis after S). */
  multiUser: boolean;
  /** True when the polarised-port assembly is needed (a dual-polarised array or fading.xprDb). */
  polarised: boolean;
  fading: FadingSpec;
  /** fading.normalize: scale the total path power of each user to 1. */
  normalize: boolean;
  xprDb: number | undefined;
  /** Where the paths come from. */
  source: 'scene' | 'explicit';
  /** Explicit paths: their number before clustering; traced: undefined until traced. */
  explicitPathCount: number | undefined;
  /** Cluster spread of each explicit path (its own, else the scenario's), or of every traced path; null: no cluster (JSON keeps null in arrays). */
  clusters: { scene: ClusterSpread | null; explicit: (ClusterSpread | null)[] };
  tensor: {
    name: 'H' | 'h';
    dtype: Precision;
    /** Full shape [S, (U,) (symbols,) K or count, Nr, Nt]. */
    shape: number[];
    /** Output bins: K subcarriers or the tap count. */
    bins: number;
    Nr: number;
    Nt: number;
    /** Complex values per subframe, all users. */
    valuesPerSubframe: number;
    bytesPerSubframe: number;
  };
  /** The arrays this run writes (rows of dataset/layout.ts). */
  arrays: DatasetArray[];
  /** Root attribute names this run writes. */
  attributes: string[];
}

/**
 * Element count of an array description.
 * @example elementCount({ kind: 'upa', rows: 4, columns: 8, dualPolarized: 'vh' }) // 32: ports are counted by portCount
 */
export function elementCount(config: ArrayConfig): number {
  if (config.kind === 'ula') return config.elements ?? 0;
  if (config.kind === 'upa') return (config.rows ?? 0) * (config.columns ?? 0);
  return config.positions?.length ?? 0;
}

/**
 * Number of ports (the Nr or Nt axis): elements, times 2 for a dual-polarised array.
 * @example portCount({ kind: 'ula', elements: 4, dualPolarized: 'slant45' }) // 8
 */
export function portCount(config: ArrayConfig): number {
  return planArray(config).ports;
}

/**
 * An array description with its defaults applied.
 * @example planArray({ kind: 'ula', elements: 4, dualPolarized: 'vh' }) // { config: {...}, elements: 4, portsPerElement: 2, ports: 8, spacingWavelengths: 0.5, orientation: { yawDeg: 0, pitchDeg: 0, rollDeg: 0 }, wavefront: 'plane' }
 */
export function planArray(config: ArrayConfig): ArrayPlan {
  const elements = elementCount(config);
  const portsPerElement = config.dualPolarized !== undefined ? 2 : 1;
  const o = config.orientation ?? {};
  return {
    config,
    elements,
    portsPerElement,
    ports: elements * portsPerElement,
    spacingWavelengths: config.kind === 'custom' ? undefined : (config.spacingWavelengths ?? SCENARIO_DEFAULTS.spacingWavelengths),
    orientation: { yawDeg: o.yawDeg ?? 0, pitchDeg: o.pitchDeg ?? 0, rollDeg: o.rollDeg ?? 0 },
    wavefront: config.wavefront ?? SCENARIO_DEFAULTS.wavefront,
  };
}

/**
 * Choose the output domain: the only one given, or `prefer` when the scenario has both.
 * @example
 * chooseDomain(scenario) // "frequency"
 * chooseDomain({ ...scenario, taps: { sampleRateHz: 1e9, count: 16 } }, 'taps') // "taps"
 */
export function chooseDomain(scenario: Scenario, prefer?: Domain): Domain {
  if (prefer === 'taps' && scenario.taps === undefined)
    throw new ScenarioError([{ path: 'taps', message: 'is required for tap-delay output (--domain taps)' }]);
  if (prefer === 'frequency' && scenario.band === undefined)
    throw new ScenarioError([{ path: 'band', message: 'is required for frequency-domain output (--domain frequency)' }]);
  return prefer ?? (scenario.band !== undefined ? 'frequency' : 'taps');
}

/**
 * The cluster spread a scenario's cluster description asks for: the preset's values (38.901
 * Table 7.5-6) with any key given replacing them; without a preset, method "gaussian",
 * 20 sub-paths and zero spreads where not given.
 * @example clusterSpreadOf({ preset: 'umi-los' }).azimuthSpreadArrivalDeg // 17
 */
export function clusterSpreadOf(c: ClusterConfig): ClusterSpread {
  const base: ClusterSpread =
    c.preset !== undefined
      ? clusterPreset(c.preset)
      : {
          subPaths: 20,
          method: 'gaussian',
          azimuthSpreadDepartureDeg: 0,
          elevationSpreadDepartureDeg: 0,
          azimuthSpreadArrivalDeg: 0,
          elevationSpreadArrivalDeg: 0,
          delaySpreadS: 0,
        };
  return {
    subPaths: c.subPaths ?? base.subPaths,
    method: c.method ?? base.method,
    azimuthSpreadDepartureDeg: c.azimuthSpreadDepartureDeg ?? base.azimuthSpreadDepartureDeg,
    elevationSpreadDepartureDeg: c.elevationSpreadDepartureDeg ?? base.elevationSpreadDepartureDeg,
    azimuthSpreadArrivalDeg: c.azimuthSpreadArrivalDeg ?? base.azimuthSpreadArrivalDeg,
    elevationSpreadArrivalDeg: c.elevationSpreadArrivalDeg ?? base.elevationSpreadArrivalDeg,
    delaySpreadS: c.delaySpreadS ?? base.delaySpreadS,
  };
}

/** The receivers of a scenario with their identities (ids from `id`, else the index). */
function usersOf(scenario: Scenario): UserPlan[] {
  if (scenario.receivers !== undefined) {
    return scenario.receivers.map((r, i) => ({
      path: `receivers[${i}]`,
      config: r,
      array: planArray(r.array),
      id: r.id ?? String(i),
      streamKey: r.id ?? String(i),
    }));
  }
  const r = scenario.receiver!;
  return [{ path: 'receiver', config: r, array: planArray(r.array), id: r.id ?? '', streamKey: r.id }];
}

function timingOf(scenario: Scenario): TimingPlan {
  const t = scenario.timing;
  let symbolTimesS: number[];
  let cyclicPrefix: CyclicPrefix | undefined;
  if (t.numerology !== undefined) {
    cyclicPrefix = t.cyclicPrefix ?? SCENARIO_DEFAULTS.cyclicPrefix;
    symbolTimesS = [...nrSymbolTimesS(nrNumerology(t.numerology, cyclicPrefix), 'start')];
  } else if (t.symbolsPerSubframe !== undefined) symbolTimesS = [...uniformSymbolTimesS(t.symbolsPerSubframe, t.subframeS)];
  else symbolTimesS = [0];
  const symbolAxis = t.numerology !== undefined || t.symbolsPerSubframe !== undefined;
  const steps = symbolTimesS.length;
  const S = t.subframes;
  // The step clock build.ts gives the generator, so the traced epochs cover exactly its steps.
  const lastStepTimeS =
    t.numerology !== undefined
      ? numerologyClock(nrNumerology(t.numerology, cyclicPrefix), 'start', t.subframeS).timeS(S * steps - 1)
      : ((S * steps - 1) * t.subframeS) / steps;
  return {
    subframeS: t.subframeS,
    subframes: S,
    symbolAxis,
    stepsPerSubframe: steps,
    symbolTimesS,
    numerology: t.numerology,
    cyclicPrefix,
    geometryUpdateS: t.geometryUpdateS ?? t.subframeS,
    lastStepTimeS,
  };
}

function gridOf(scenario: Scenario, domain: Domain): GridPlan {
  if (domain === 'frequency') {
    const band = scenario.band!;
    const spacingHz = band.spacingHz ?? SCENARIO_DEFAULTS.numerologyBaseSpacingHz * 2 ** (scenario.timing.numerology ?? 0);
    return { domain, subcarriers: band.subcarriers, spacingHz, beamSquint: band.beamSquint ?? SCENARIO_DEFAULTS.beamSquint };
  }
  const taps = scenario.taps!;
  return {
    domain,
    sampleRateHz: taps.sampleRateHz,
    count: taps.count,
    pulse: taps.pulse ?? SCENARIO_DEFAULTS.pulse,
    rollOff: taps.rollOff ?? SCENARIO_DEFAULTS.rollOff,
    alignFirstPath: taps.alignFirstPath ?? SCENARIO_DEFAULTS.alignFirstPath,
  };
}

function fadingOf(f: Scenario['fading']): FadingSpec {
  switch (f.model) {
    case 'static':
      return { model: 'static' };
    case 'gauss-markov':
      return { model: 'gauss-markov', speedMps: f.speedMps };
    case 'ar':
      return { model: 'ar', order: f.order, speedMps: f.speedMps };
    case 'sum-of-sinusoids':
      return { model: 'sum-of-sinusoids', sinusoids: f.sinusoids, speedMps: f.speedMps };
    case 'geometric':
      return { model: 'geometric', ricianKDb: f.ricianKDb, sinusoids: f.sinusoids, speedMps: f.speedMps };
  }
}

/**
 * Plan a validated scenario: every default applied once, the output's axes, shapes and sizes,
 * the arrays and attributes it writes. Pure: it traces nothing and builds no generator.
 * @example
 * const plan = planScenario(scenario, { seed: 7 });
 * [plan.seed, plan.precision, plan.tensor.shape, plan.timing.stepsPerSubframe] // [7, 'complex64', [10, 64, 2, 4], 1]
 */
export function planScenario(scenario: Scenario, options: { domain?: Domain | undefined; seed?: number | undefined } = {}): ScenarioPlan {
  const domain = chooseDomain(scenario, options.domain);
  const precision = scenario.precision ?? SCENARIO_DEFAULTS.precision;
  const bytesPerValue = precision === 'complex128' ? 16 : 8;
  const timing = timingOf(scenario);
  const grid = gridOf(scenario, domain);
  const transmitter: TerminalPlan = { path: 'transmitter', config: scenario.transmitter, array: planArray(scenario.transmitter.array) };
  const users = usersOf(scenario);
  const multiUser = scenario.receivers !== undefined;
  const polarised = scenario.fading.xprDb !== undefined || [transmitter, ...users].some((t) => t.array.config.dualPolarized !== undefined);
  const bins = grid.domain === 'frequency' ? grid.subcarriers : grid.count;
  const Nr = users[0]!.array.ports;
  const Nt = transmitter.array.ports;
  const S = timing.subframes;
  const shape = [S, ...(multiUser ? [users.length] : []), ...(timing.symbolAxis ? [timing.stepsPerSubframe] : []), bins, Nr, Nt];
  const valuesPerSubframe = users.length * timing.stepsPerSubframe * bins * Nr * Nt;
  const tensorName = domain === 'frequency' ? 'H' : 'h';
  const sceneCluster = scenario.clusters !== undefined ? clusterSpreadOf(scenario.clusters) : null;
  const explicitClusters = (scenario.paths ?? []).map((p) => {
    const c = p.cluster ?? scenario.clusters;
    return c !== undefined ? clusterSpreadOf(c) : null;
  });
  const skip = new Set([tensorName === 'H' ? 'h' : 'H', domain === 'frequency' ? 'tapDelaysS' : 'frequenciesHz']);
  return {
    scenario,
    formatVersion: scenario.formatVersion ?? CURRENT_FORMAT_VERSION,
    domain,
    seed: options.seed ?? scenario.seed,
    precision,
    bytesPerValue,
    carrierHz: scenario.carrierHz,
    timing,
    grid,
    transmitter,
    users,
    multiUser,
    polarised,
    fading: fadingOf(scenario.fading),
    normalize: scenario.fading.normalize ?? SCENARIO_DEFAULTS.normalize,
    xprDb: scenario.fading.xprDb,
    source: scenario.scene !== undefined ? 'scene' : 'explicit',
    explicitPathCount: scenario.paths?.length,
    clusters: { scene: sceneCluster, explicit: explicitClusters },
    tensor: { name: tensorName, dtype: precision, shape, bins, Nr, Nt, valuesPerSubframe, bytesPerSubframe: valuesPerSubframe * bytesPerValue },
    arrays: DATASET_ARRAYS.filter((a) => !skip.has(a.name)).map((a) => ({ ...a, dtype: a.dtype === 'tensor' ? precision : a.dtype })),
    attributes: DATASET_ATTRIBUTES.map((a) => a.name),
  };
}

/**
 * Tensor shape and size of a plan for `subframes` subframes (default all).
 * @example outputEstimate(planScenario(scenario)) // { shape: [10, 64, 2, 4], bytes: 40960, bytesPerSubframe: 4096 }: complex64
 */
export function outputEstimate(plan: ScenarioPlan, subframes = plan.timing.subframes): { shape: number[]; bytes: number; bytesPerSubframe: number } {
  const bytesPerSubframe = plan.tensor.bytesPerSubframe;
  return { shape: [subframes, ...plan.tensor.shape.slice(1)], bytes: subframes * bytesPerSubframe, bytesPerSubframe };
}

/**
 * Bytes of the per-subframe side arrays held in memory until the file is committed (gains and
 * ground truth: S x U x L values each), for `count` subframes and `pathCount` paths per user.
 * @example
 * const { scenario } = await loadScenario('examples/street-corner-28ghz.json'); // one receiver, no symbol axis
 * sideArrayBytes(planScenario(scenario), 1000, 8) // 721000 = 1000 * (16 * 8 + 56 * 8 + 145)
 */
export function sideArrayBytes(plan: ScenarioPlan, count: number, pathCount: number): number {
  const users = plan.users.length;
  const gains = 16 * users * plan.timing.stepsPerSubframe * pathCount;
  const truth = 56 * users * pathCount + 72 * (1 + users) + users;
  return count * (gains + truth);
}

/**
 * Working memory a run needs besides its block buffers, bytes (an estimate).
 * @example
 * const { scenario } = await loadScenario('examples/street-corner-28ghz.json');
 * workingMemoryEstimate(planScenario(scenario), 8) // 43008: 8 paths x (16 x 4 x 32 + 48 x 64) + 16 x 4 x 32 (Nr 4, Nt 32, 64 bins)
 */
export function workingMemoryEstimate(plan: ScenarioPlan, pathCount: number): number {
  const { Nr, Nt, bins } = plan.tensor;
  const users = plan.users.length;
  const squint = plan.grid.domain === 'frequency' && plan.grid.beamSquint;
  const perPath = squint ? 16 * bins * (Nr + Nt) : 16 * Nr * Nt;
  return users * (pathCount * perPath + 48 * bins * pathCount + 16 * Nr * Nt);
}

/**
 * The path count a plan's estimates assume before anything is traced: the explicit paths, or 1.
 * @example estimatedPathCount(planScenario(scenario)) // 1: one explicit path
 */
export function estimatedPathCount(plan: ScenarioPlan): number {
  return plan.explicitPathCount ?? 1;
}
