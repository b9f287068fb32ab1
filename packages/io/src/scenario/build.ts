/**
 * From a validated scenario to the core's generators: degrees to unit vectors, decibels to
 * linear power, spacings in wavelengths to metres at the carrier, arrays with their
 * orientation, motion, explicit or traced paths, fading model, time resolution, and one
 * generator per user (receiver).
 */
import {
  AntennaArray,
  degFromVector,
  dualPolarizedPortVectors,
  gasAttenuationP676,
  isotropic,
  sector38901,
  tabulatedPattern,
  unitFromDeg,
  wavelength,
  type ElementPattern,
  type Scene,
  type PathInteraction,
  type SceneObjectRef,
  type TracedPath,
  type Vec3,
} from '@pathweave/geometry';
import {
  ChannelGenerator,
  ClusteredTimeline,
  ExplicitTimeline,
  PathSetFrame,
  PolarimetricTracedTimeline,
  clusterPreset,
  Motion,
  TracedTimeline,
  alignmentShiftS,
  nrNumerology,
  numerologyClock,
  type ChannelSpec,
  type ClusterSpread,
  type ExplicitPathSpec,
  type FadingSpec,
  type OutputGrid,
  type PathTimeline,
  type SymbolTiming,
  type Terminal,
} from '@pathweave/core';
import type { ArrayConfig, ClusterConfig, ExplicitPathConfig, Scenario, TerminalConfig } from './schema.js';
import { ScenarioError } from './validate.js';

/**
 * Output domain of a run.
 * @example const domain: Domain = 'taps'; // tap-delay output, [S, count, Nr, Nt]
 */
export type Domain = 'frequency' | 'taps';

/**
 * A path as listed by `pathweave paths` and stored in the path table.
 * @example
 * const scenario: Scenario = {
 *   carrierHz: 28e9, timing: { subframeS: 1e-3, subframes: 10 }, band: { subcarriers: 64, spacingHz: 120e3 },
 *   transmitter: { position: [0, 0, 10], array: { kind: 'ula', elements: 4 } },
 *   receiver: { position: [50, 0, 1.5], array: { kind: 'ula', elements: 2 } },
 *   paths: [{ aodDeg: [0, -10], aoaDeg: [180, 10], delayS: 1.7e-7, powerDb: -90 }], fading: { model: 'static' }, seed: 1,
 * };
 * const [record]: PathSummary[] = buildScenario(scenario).paths;
 * record // { id: 'paths[0]', kind: 'explicit', delayS: 1.7e-7, powerDb: -90, phaseDeg: 0, aodDeg: [0, -10], aoaDeg: [180, 10], dopplerHz: 0, maxDopplerHz: undefined }
 */
export interface PathSummary {
  id: string;
  kind: string;
  delayS: number;
  powerDb: number;
  phaseDeg: number;
  aodDeg: [number, number];
  aoaDeg: [number, number];
  dopplerHz: number;
  maxDopplerHz?: number | undefined;
  lengthM?: number;
  aodLocalDeg?: [number, number];
  aoaLocalDeg?: [number, number];
  /** Traced paths: what the path meets, structured (rendered as text only for output, see paths.ts). */
  interactions?: { type: PathInteraction['type']; object: SceneObjectRef; point: number[] }[];
  blockageDb?: number;
}

/**
 * One user's channel: its receiver, generator and paths.
 * @example
 * const scenario: Scenario = {
 *   carrierHz: 28e9, timing: { subframeS: 1e-3, subframes: 10 }, band: { subcarriers: 64, spacingHz: 120e3 },
 *   transmitter: { position: [0, 0, 10], array: { kind: 'ula', elements: 4 } },
 *   receiver: { position: [50, 0, 1.5], array: { kind: 'ula', elements: 2 } },
 *   paths: [{ aodDeg: [0, -10], aoaDeg: [180, 10], delayS: 1.7e-7, powerDb: -90 }], fading: { model: 'static' }, seed: 1,
 * };
 * const [user]: UserChannel[] = buildScenario(scenario).users;
 * [user!.id, user!.generator.shape, user!.paths.length] // ['', [10, 64, 2, 4], 1]: a lone receiver without id
 */
export interface UserChannel {
  /** The user's identity: its `id`, else its index in `receivers` ("" for a lone `receiver` without id). */
  id: string;
  receiver: TerminalConfig;
  generator: ChannelGenerator;
  timeline: PathTimeline;
  /** Paths at t = 0 (for tables and the path table). */
  paths: PathSummary[];
  /** With clusters: the specular paths at t = 0 that the sub-paths of `paths` come from. */
  specularPaths?: PathSummary[];
  spec: ChannelSpec;
}

/**
 * A scenario made ready to generate.
 * @example
 * const scenario: Scenario = {
 *   carrierHz: 28e9, timing: { subframeS: 1e-3, subframes: 10 }, band: { subcarriers: 64, spacingHz: 120e3 },
 *   transmitter: { position: [0, 0, 10], array: { kind: 'ula', elements: 4 } },
 *   receiver: { position: [50, 0, 1.5], array: { kind: 'ula', elements: 2 } },
 *   paths: [{ aodDeg: [0, -10], aoaDeg: [180, 10], delayS: 1.7e-7, powerDb: -90 }], fading: { model: 'static' }, seed: 1,
 * };
 * const built: BuiltScenario = buildScenario(scenario);
 * [built.domain, built.multiUser, built.shape, built.valuesPerSubframe] // ['frequency', false, [10, 64, 2, 4], 512]
 */
export interface BuiltScenario {
  scenario: Scenario;
  domain: Domain;
  /** One entry per receiver. */
  users: UserChannel[];
  /** True when the scenario uses `receivers` (the tensor has a user axis after S). */
  multiUser: boolean;
  /** Full tensor shape: [S, (U,) (symbols,) K or count, Nr, Nt]. */
  shape: number[];
  /** Complex values per subframe, all users. */
  valuesPerSubframe: number;
  /** The first user's generator and paths (the whole run when there is one receiver). */
  generator: ChannelGenerator;
  paths: PathSummary[];
  warnings: string[];
}

/**
 * Vector of a 2- or 3-component point (z = 0 for 2-D).
 * @example vec3Of([4, 5]) // [4, 5, 0]
 */
export function vec3Of(p: readonly number[] | undefined): Vec3 {
  if (p === undefined) return [0, 0, 0];
  return [p[0] ?? 0, p[1] ?? 0, p[2] ?? 0];
}

function patternOf(element: ArrayConfig['element']): ElementPattern {
  if (element === undefined || element === 'isotropic') return isotropic;
  if (element === '3gpp-38.901') return sector38901;
  return tabulatedPattern(element.table.azimuthsDeg, element.table.elevationsDeg, element.table.gainsDbi);
}

/**
 * Build the array of a scenario terminal at the given carrier.
 * @example buildArray({ kind: 'ula', elements: 2 }, 30e9).localOffsets // Float64Array [0, -0.002498, 0, 0, 0.002498, 0]: half a wavelength (4.997 mm at 30 GHz) apart
 */
export function buildArray(config: ArrayConfig, carrierHz: number): AntennaArray {
  const spacingM = (config.spacingWavelengths ?? 0.5) * wavelength(carrierHz);
  const pattern = patternOf(config.element);
  const orientation = config.orientation ?? {};
  switch (config.kind) {
    case 'ula':
      return AntennaArray.ula(config.elements!, spacingM, orientation, pattern);
    case 'upa':
      return AntennaArray.upa(config.rows!, config.columns!, spacingM, orientation, pattern);
    case 'custom':
      return AntennaArray.custom(config.positions!, orientation, pattern);
  }
}

/**
 * Number of elements of an array description without building it.
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
  return elementCount(config) * (config.dualPolarized !== undefined ? 2 : 1);
}

/**
 * True when a scenario needs the polarised-port assembly (a dual-polarised array or an XPR).
 * @example
 * const scenario: Scenario = {
 *   carrierHz: 28e9, timing: { subframeS: 1e-3, subframes: 10 }, band: { subcarriers: 64, spacingHz: 120e3 },
 *   transmitter: { position: [0, 0, 10], array: { kind: 'ula', elements: 4 } },
 *   receiver: { position: [50, 0, 1.5], array: { kind: 'ula', elements: 2 } },
 *   paths: [{ aodDeg: [0, -10], aoaDeg: [180, 10], delayS: 1.7e-7, powerDb: -90 }], fading: { model: 'static' }, seed: 1,
 * };
 * usesPorts(scenario) // false
 * usesPorts({ ...scenario, fading: { model: 'ar', xprDb: 9 } }) // true
 */
export function usesPorts(scenario: Scenario): boolean {
  const arrays = [scenario.transmitter, ...(scenario.receivers ?? []), ...(scenario.receiver !== undefined ? [scenario.receiver] : [])].map((t) => t.array);
  return scenario.fading.xprDb !== undefined || arrays.some((a) => a.dualPolarized !== undefined);
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
      : { subPaths: 20, method: 'gaussian', azimuthSpreadDepartureDeg: 0, elevationSpreadDepartureDeg: 0, azimuthSpreadArrivalDeg: 0, elevationSpreadArrivalDeg: 0, delaySpreadS: 0 };
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

/** Records of a clustered timeline's sub-paths at t = 0 (the path table's rows). */
function clusteredRecords(timeline: ClusteredTimeline, parents: PathSummary[]): PathSummary[] {
  const frame = new PathSetFrame(timeline.ids.length);
  timeline.frameAt(0, frame);
  const byId = new Map(parents.map((p) => [p.id, p]));
  const members = new Map<number, number>();
  for (const l of timeline.parent) members.set(l, (members.get(l) ?? 0) + 1);
  const a = frame.amplitude;
  return timeline.ids.map((id, i) => {
    const l = timeline.parent[i]!;
    const parent = byId.get(timeline.inner.ids[l]!);
    // A sub-path carries 1 / M of its path's power (the path's powerDb keeps its polarisation factor).
    const powerDb = parent !== undefined ? parent.powerDb - 10 * Math.log10(members.get(l)!) : 10 * Math.log10(a[2 * i]! ** 2 + a[2 * i + 1]! ** 2);
    return {
      id,
      kind: timeline.kinds[i]!,
      delayS: frame.delayS[i]!,
      powerDb,
      phaseDeg: (Math.atan2(a[2 * i + 1]!, a[2 * i]!) * 180) / Math.PI,
      aodDeg: degFromVector([frame.departure[3 * i]!, frame.departure[3 * i + 1]!, frame.departure[3 * i + 2]!]),
      aoaDeg: degFromVector([frame.arrival[3 * i]!, frame.arrival[3 * i + 1]!, frame.arrival[3 * i + 2]!]),
      dopplerHz: frame.dopplerHz[i]!,
      maxDopplerHz: parent?.maxDopplerHz,
    };
  });
}

/**
 * The motion of a terminal: constant velocity or its trajectory.
 * @example motionOf({ position: [0, 0], velocity: [1, 2], array: { kind: 'ula', elements: 1 } }).positionAt(3) // [3, 6, 0]
 */
export function motionOf(t: TerminalConfig): Motion {
  const trajectory = t.trajectory?.map((w) => ({ t: w.t, position: vec3Of(w.position), orientation: w.orientation }));
  return new Motion(vec3Of(trajectory?.[0]?.position ?? t.position), vec3Of(t.velocity), trajectory, t.array.orientation ?? {});
}

function buildTerminal(t: TerminalConfig, carrierHz: number): Terminal {
  const motion = motionOf(t);
  return {
    array: buildArray(t.array, carrierHz),
    position: motion.positionAt(0),
    velocity: motion.velocityAt(0),
    motion,
    wavefront: t.array.wavefront,
    ...(t.array.dualPolarized !== undefined ? { ports: dualPolarizedPortVectors(t.array.dualPolarized) } : {}),
    ...(t.array.polarization !== undefined ? { polarization: t.array.polarization } : {}),
  };
}

/**
 * The stable id of explicit path i: its own `id`, else its place in the list.
 * @example explicitPathId({ aodDeg: [0, 0], aoaDeg: [180, 0], delayS: 0, powerDb: -80 }, 2) // "paths[2]"
 */
export function explicitPathId(p: ExplicitPathConfig, index: number): string {
  return p.id ?? `paths[${index}]`;
}

function explicitPaths(scenario: Scenario): { paths: ExplicitPathSpec[]; records: PathSummary[] } {
  const paths: ExplicitPathSpec[] = [];
  const records: PathSummary[] = [];
  (scenario.paths ?? []).forEach((p, i) => {
    const id = explicitPathId(p, i);
    const phaseDeg = p.phaseDeg ?? 0;
    paths.push({
      id,
      delayS: p.delayS,
      power: 10 ** (p.powerDb / 10),
      phaseRad: (phaseDeg * Math.PI) / 180,
      departure: unitFromDeg(p.aodDeg[0], p.aodDeg[1]),
      arrival: unitFromDeg(p.aoaDeg[0], p.aoaDeg[1]),
      dopplerHz: p.dopplerHz,
      maxDopplerHz: p.maxDopplerHz,
    });
    records.push({ id, kind: 'explicit', delayS: p.delayS, powerDb: p.powerDb, phaseDeg, aodDeg: [...p.aodDeg], aoaDeg: [...p.aoaDeg], dopplerHz: p.dopplerHz ?? 0, maxDopplerHz: p.maxDopplerHz });
  });
  return { paths, records };
}

/**
 * A traced path as a record (angles in degrees, phase = arg(rho) with carrier and reflection phases).
 * @example summarizeTraced(traceScene({}, { position: [0, 0, 0] }, { position: [10, 0, 0] }, 28e9).paths[0]!) // { id: 'los', kind: 'los', delayS: 3.3356e-8, powerDb: -81.391, phaseDeg: 7.392, aodDeg: [0, 0], aoaDeg: [180, 0], dopplerHz: 0, lengthM: 10, aodLocalDeg: [0, 0], aoaLocalDeg: [180, 0], interactions: [], blockageDb: 0 }
 */
export function summarizeTraced(p: TracedPath): PathSummary {
  return {
    id: p.id,
    kind: p.kind,
    delayS: p.delayS,
    powerDb: p.powerDb,
    phaseDeg: p.phaseDeg,
    aodDeg: [...p.aodDeg],
    aoaDeg: [...p.aoaDeg],
    dopplerHz: p.dopplerHz,
    lengthM: p.lengthM,
    aodLocalDeg: [...p.aodLocalDeg],
    aoaLocalDeg: [...p.aoaLocalDeg],
    interactions: p.interactions.map((i) => ({ type: i.type, object: { ...i.object }, point: [...i.point] })),
    blockageDb: p.blockageDb,
  };
}

/**
 * Choose the output domain: the only one given, or `prefer` when the scenario has both.
 * @example
 * const scenario: Scenario = {
 *   carrierHz: 28e9, timing: { subframeS: 1e-3, subframes: 10 }, band: { subcarriers: 64, spacingHz: 120e3 },
 *   transmitter: { position: [0, 0, 10], array: { kind: 'ula', elements: 4 } },
 *   receiver: { position: [50, 0, 1.5], array: { kind: 'ula', elements: 2 } },
 *   paths: [{ aodDeg: [0, -10], aoaDeg: [180, 10], delayS: 1.7e-7, powerDb: -90 }], fading: { model: 'static' }, seed: 1,
 * };
 * chooseDomain(scenario) // "frequency"
 * chooseDomain({ ...scenario, taps: { sampleRateHz: 1e9, count: 16 } }, 'taps') // "taps"
 */
export function chooseDomain(scenario: Scenario, prefer?: Domain): Domain {
  if (prefer === 'taps' && scenario.taps === undefined) throw new ScenarioError([{ path: 'taps', message: 'is required for tap-delay output (--domain taps)' }]);
  if (prefer === 'frequency' && scenario.band === undefined) throw new ScenarioError([{ path: 'band', message: 'is required for frequency-domain output (--domain frequency)' }]);
  return prefer ?? (scenario.band !== undefined ? 'frequency' : 'taps');
}

/**
 * The receivers of a scenario with their identities.
 * @example
 * const scenario: Scenario = {
 *   carrierHz: 28e9, timing: { subframeS: 1e-3, subframes: 10 }, band: { subcarriers: 64, spacingHz: 120e3 },
 *   transmitter: { position: [0, 0, 10], array: { kind: 'ula', elements: 4 } },
 *   receiver: { position: [50, 0, 1.5], array: { kind: 'ula', elements: 2 } },
 *   paths: [{ aodDeg: [0, -10], aoaDeg: [180, 10], delayS: 1.7e-7, powerDb: -90 }], fading: { model: 'static' }, seed: 1,
 * };
 * const { receiver, ...common } = scenario;
 * receiversOf({ ...common, receivers: [receiver!, { ...receiver!, id: 'ue-b' }] }).map((r) => [r.id, r.streamKey]) // [['0', '0'], ['ue-b', 'ue-b']]: ids (and stream keys) from id, else the index
 */
export function receiversOf(scenario: Scenario): { id: string; config: TerminalConfig; streamKey: string | undefined }[] {
  if (scenario.receivers !== undefined) {
    return scenario.receivers.map((r, i) => ({ id: r.id ?? String(i), config: r, streamKey: r.id ?? String(i) }));
  }
  const r = scenario.receiver!;
  return [{ id: r.id ?? '', config: r, streamKey: r.id }];
}

/**
 * Symbol timing of a scenario (undefined: one step per subframe, no symbol axis).
 * @example
 * const scenario: Scenario = {
 *   carrierHz: 28e9, timing: { subframeS: 1e-3, subframes: 10 }, band: { subcarriers: 64, spacingHz: 120e3 },
 *   transmitter: { position: [0, 0, 10], array: { kind: 'ula', elements: 4 } },
 *   receiver: { position: [50, 0, 1.5], array: { kind: 'ula', elements: 2 } },
 *   paths: [{ aodDeg: [0, -10], aoaDeg: [180, 10], delayS: 1.7e-7, powerDb: -90 }], fading: { model: 'static' }, seed: 1,
 * };
 * symbolTimingOf(scenario) // undefined
 * symbolTimingOf({ ...scenario, timing: { subframeS: 1e-3, subframes: 10, symbolsPerSubframe: 14 } })!.perSubframe // 14
 */
export function symbolTimingOf(scenario: Scenario): SymbolTiming | undefined {
  const t = scenario.timing;
  if (t.numerology !== undefined) {
    const nr = nrNumerology(t.numerology, t.cyclicPrefix ?? 'normal');
    return { perSubframe: nr.symbolsPerSubframe, clock: numerologyClock(nr, 'start', t.subframeS) };
  }
  if (t.symbolsPerSubframe !== undefined) return { perSubframe: t.symbolsPerSubframe };
  return undefined;
}

/**
 * Subcarrier spacing: band.spacingHz, or 15 kHz 2^mu from the numerology.
 * @example
 * const scenario: Scenario = {
 *   carrierHz: 28e9, timing: { subframeS: 1e-3, subframes: 10 }, band: { subcarriers: 64, spacingHz: 120e3 },
 *   transmitter: { position: [0, 0, 10], array: { kind: 'ula', elements: 4 } },
 *   receiver: { position: [50, 0, 1.5], array: { kind: 'ula', elements: 2 } },
 *   paths: [{ aodDeg: [0, -10], aoaDeg: [180, 10], delayS: 1.7e-7, powerDb: -90 }], fading: { model: 'static' }, seed: 1,
 * };
 * spacingOf(scenario) // 120000
 * spacingOf({ ...scenario, band: { subcarriers: 64 }, timing: { subframeS: 1e-3, subframes: 10, numerology: 3 } }) // 120000 (15 kHz * 2^3)
 */
export function spacingOf(scenario: Scenario): number {
  const band = scenario.band!;
  if (band.spacingHz !== undefined) return band.spacingHz;
  return 15e3 * 2 ** (scenario.timing.numerology ?? 0);
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
 * The geometry's scene from the scenario's `scene` object.
 * @example
 * const scenario: Scenario = {
 *   carrierHz: 28e9, timing: { subframeS: 1e-3, subframes: 10 }, band: { subcarriers: 64, spacingHz: 120e3 },
 *   transmitter: { position: [0, 0, 10], array: { kind: 'ula', elements: 4 } },
 *   receiver: { position: [50, 0, 1.5], array: { kind: 'ula', elements: 2 } },
 *   paths: [{ aodDeg: [0, -10], aoaDeg: [180, 10], delayS: 1.7e-7, powerDb: -90 }], fading: { model: 'static' }, seed: 1,
 * };
 * const { paths, ...traced } = scenario;
 * sceneOf({ ...traced, scene: { walls: [{ vertices: [[0, 20], [80, 20]] }], atmosphere: { method: 'p676-13-line-by-line' } } }).gasAttenuationDbPerKm // 0.1018: ITU-R P.676 at 28 GHz, sea level
 */
export function sceneOf(scenario: Scenario): Scene {
  if (scenario.scene?.imports !== undefined) {
    throw new ScenarioError([{ path: 'scene.imports', message: 'the imported files are not read yet: load the scenario with loadScenario() or expand it with expandSceneImports(scenario, folder) first' }]);
  }
  const { atmosphere, ...scene } = scenario.scene!;
  if (atmosphere === undefined) return scene as unknown as Scene;
  // Narrowband: the specific attenuation at the carrier applies across the band.
  const gas = gasAttenuationP676(scenario.carrierHz, atmosphere);
  return { ...(scene as unknown as Scene), gasAttenuationDbPerKm: gas.totalDbPerKm };
}

/**
 * Build the generators of a validated scenario.
 * @example
 * const scenario: Scenario = {
 *   carrierHz: 28e9, timing: { subframeS: 1e-3, subframes: 10 }, band: { subcarriers: 64, spacingHz: 120e3 },
 *   transmitter: { position: [0, 0, 10], array: { kind: 'ula', elements: 4 } },
 *   receiver: { position: [50, 0, 1.5], array: { kind: 'ula', elements: 2 } },
 *   paths: [{ aodDeg: [0, -10], aoaDeg: [180, 10], delayS: 1.7e-7, powerDb: -90 }], fading: { model: 'static' }, seed: 1,
 * };
 * buildScenario(scenario, { domain: 'frequency' }).generator.shape // [10, 64, 2, 4]: [S, K, Nr, Nt]
 */
export function buildScenario(scenario: Scenario, options: { domain?: Domain; seed?: number } = {}): BuiltScenario {
  const domain = chooseDomain(scenario, options.domain);
  const carrierHz = scenario.carrierHz;
  const tx = buildTerminal(scenario.transmitter, carrierHz);
  const symbols = symbolTimingOf(scenario);
  const grid: OutputGrid =
    domain === 'frequency'
      ? { domain, subcarriers: scenario.band!.subcarriers, spacingHz: spacingOf(scenario), beamSquint: scenario.band!.beamSquint ?? false }
      : { domain, sampleRateHz: scenario.taps!.sampleRateHz, count: scenario.taps!.count, pulse: scenario.taps!.pulse ?? 'sinc', rollOff: scenario.taps!.rollOff ?? 0 };
  const S = scenario.timing.subframes;
  const stepsPerSubframe = symbols?.perSubframe ?? 1;
  const lastStepTime = symbols?.clock !== undefined ? symbols.clock.timeS(S * stepsPerSubframe - 1) : ((S * stepsPerSubframe - 1) * scenario.timing.subframeS) / stepsPerSubframe;
  const warnings: string[] = [];
  const users: UserChannel[] = [];
  for (const r of receiversOf(scenario)) {
    const rx = buildTerminal(r.config, carrierHz);
    let timeline: PathTimeline;
    let records: PathSummary[];
    let delays: number[];
    let totalPower: number;
    const seed = options.seed ?? scenario.seed;
    let specular: PathSummary[] | undefined;
    let spreads: (ClusterSpread | undefined)[];
    if (scenario.scene !== undefined) {
      const Timeline = usesPorts(scenario) ? PolarimetricTracedTimeline : TracedTimeline;
      const traced = new Timeline(
        sceneOf(scenario),
        { motion: tx.motion!, polarization: scenario.transmitter.array.polarization, orientation: scenario.transmitter.array.orientation },
        { motion: rx.motion!, polarization: r.config.array.polarization, orientation: r.config.array.orientation },
        carrierHz,
        lastStepTime,
        scenario.timing.geometryUpdateS ?? scenario.timing.subframeS,
      );
      for (const w of traced.warnings) if (!warnings.includes(w)) warnings.push(w);
      timeline = traced;
      records = traced.pathsAt(0).map(summarizeTraced);
      delays = traced.epochs.flatMap((m) => [...m.values()].map((p) => p.delayS));
      totalPower = records.reduce((a, p) => a + 10 ** (p.powerDb / 10), 0);
      spreads = traced.ids.map(() => (scenario.clusters !== undefined ? clusterSpreadOf(scenario.clusters) : undefined));
    } else {
      const explicit = explicitPaths(scenario);
      timeline = new ExplicitTimeline(explicit.paths);
      records = explicit.records;
      delays = explicit.paths.map((p) => p.delayS);
      totalPower = explicit.paths.reduce((a, p) => a + p.power, 0);
      spreads = (scenario.paths ?? []).map((p) => {
        const c = p.cluster ?? scenario.clusters;
        return c !== undefined ? clusterSpreadOf(c) : undefined;
      });
    }
    if (spreads.some((c) => c !== undefined)) {
      const clustered = new ClusteredTimeline(timeline, spreads, seed, r.streamKey);
      specular = records;
      records = clusteredRecords(clustered, records);
      timeline = clustered;
    }
    if (timeline.ids.length === 0) {
      const who = scenario.receivers !== undefined ? `receivers[${users.length}]` : 'receiver';
      throw new ScenarioError([{ path: scenario.scene !== undefined ? 'scene' : 'paths', message: `the geometry yields no path at all between the transmitter and the ${who} (check lineOfSight, walls, blockers and maxReflectionOrder)` }]);
    }
    const delayShiftS = scenario.taps?.alignFirstPath === true ? alignmentShiftS(delays, scenario.taps.sampleRateHz) : 0;
    const spec: ChannelSpec = {
      carrierHz,
      subframeS: scenario.timing.subframeS,
      subframes: S,
      transmitter: tx,
      receiver: rx,
      timeline,
      fading: fadingOf(scenario.fading),
      grid,
      delayShiftS,
      seed,
      precision: scenario.precision ?? 'complex64',
      symbols,
      streamKey: r.streamKey,
      amplitudeScale: scenario.fading.normalize === true && totalPower > 0 ? 1 / Math.sqrt(totalPower) : 1,
      ...(scenario.fading.xprDb !== undefined ? { xprDb: scenario.fading.xprDb } : {}),
    };
    let generator: ChannelGenerator;
    try {
      generator = new ChannelGenerator(spec);
    } catch (e) {
      // The AR fit can refuse an order its Yule-Walker system cannot carry: that is the input's fault.
      if (e instanceof RangeError && scenario.fading.model === 'ar' && /AutoregressiveGains|fitAutoregressive/.test(e.message)) {
        throw new ScenarioError([{ path: 'fading.order', message: e.message.replace(/^.*?: (?=order|the )/, '') }]);
      }
      throw e;
    }
    for (const w of generator.warnings) if (!warnings.includes(w)) warnings.push(w);
    users.push({ id: r.id, receiver: r.config, generator, timeline, paths: records, ...(specular !== undefined ? { specularPaths: specular } : {}), spec });
  }
  const first = users[0]!;
  const multiUser = scenario.receivers !== undefined;
  const userShape = first.generator.shape.slice(1);
  const shape = multiUser ? [S, users.length, ...userShape] : [S, ...userShape];
  return {
    scenario,
    domain,
    users,
    multiUser,
    shape,
    valuesPerSubframe: users.length * first.generator.valuesPerSubframe,
    generator: first.generator,
    paths: first.paths,
    warnings,
  };
}

/**
 * Tensor shape and size of a scenario, computed without building anything.
 * @example
 * const scenario: Scenario = {
 *   carrierHz: 28e9, timing: { subframeS: 1e-3, subframes: 10 }, band: { subcarriers: 64, spacingHz: 120e3 },
 *   transmitter: { position: [0, 0, 10], array: { kind: 'ula', elements: 4 } },
 *   receiver: { position: [50, 0, 1.5], array: { kind: 'ula', elements: 2 } },
 *   paths: [{ aodDeg: [0, -10], aoaDeg: [180, 10], delayS: 1.7e-7, powerDb: -90 }], fading: { model: 'static' }, seed: 1,
 * };
 * outputEstimate(scenario, 'frequency') // { shape: [10, 64, 2, 4], bytes: 40960, bytesPerSubframe: 4096 }: complex64
 */
export function outputEstimate(scenario: Scenario, domain: Domain, subframes = scenario.timing.subframes): { shape: number[]; bytes: number; bytesPerSubframe: number } {
  const receivers = scenario.receivers ?? (scenario.receiver !== undefined ? [scenario.receiver] : []);
  const nr = receivers.length === 0 ? 0 : portCount(receivers[0]!.array);
  const nt = portCount(scenario.transmitter.array);
  const bins = domain === 'frequency' ? (scenario.band?.subcarriers ?? 0) : (scenario.taps?.count ?? 0);
  const bytesPerValue = scenario.precision === 'complex128' ? 16 : 8;
  let symbols: number | undefined;
  if (scenario.timing.numerology !== undefined) symbols = (scenario.timing.cyclicPrefix === 'extended' ? 12 : 14) * 2 ** scenario.timing.numerology;
  else symbols = scenario.timing.symbolsPerSubframe;
  const shape = [subframes, ...(scenario.receivers !== undefined ? [receivers.length] : []), ...(symbols !== undefined ? [symbols] : []), bins, nr, nt];
  const bytesPerSubframe = (shape.slice(1).reduce((a, b) => a * b, 1) || 0) * bytesPerValue;
  return { shape, bytes: subframes * bytesPerSubframe, bytesPerSubframe };
}

/**
 * Bytes of the per-subframe side arrays held in memory until the file is committed (gains and
 * ground truth: S x U x L values each), for `count` subframes and `pathCount` paths per user.
 * @example
 * const { scenario } = await loadScenario('examples/street-corner-28ghz.json'); // one receiver, no symbol axis
 * sideArrayBytes(scenario, 1000, 8) // 721000 = 1000 * (16 * 8 + 56 * 8 + 145)
 */
export function sideArrayBytes(scenario: Scenario, count: number, pathCount: number): number {
  const users = scenario.receivers?.length ?? 1;
  const symbols = symbolTimingOf(scenario)?.perSubframe ?? 1;
  const gains = 16 * users * symbols * pathCount;
  const truth = 56 * users * pathCount + 72 * (1 + users) + users;
  return count * (gains + truth);
}
