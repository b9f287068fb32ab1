/**
 * From a plan (plan.ts: a validated scenario with every default applied) to the core's
 * generators: degrees to unit vectors, decibels to linear power, spacings in wavelengths to
 * metres at the carrier, arrays with their orientation, motion, explicit or traced paths (the
 * traced epochs, given or traced here), fading model, time resolution, and one generator per
 * user (receiver). Building adds what the plan cannot hold as plain data: the traced epochs and
 * the generators.
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
  type PathInteraction,
  type Scene,
  type SceneObjectRef,
  type TracedPath,
  type Vec3,
} from '@pathweave/geometry';
import {
  ArFitError,
  ChannelGenerator,
  ClusteredTimeline,
  ExplicitTimeline,
  PathSetFrame,
  PolarimetricTracedTimeline,
  Motion,
  TracedTimeline,
  alignmentShiftS,
  traceEpochs,
  nrNumerology,
  numerologyClock,
  type ChannelSpec,
  type ClusterSpread,
  type ExplicitPathSpec,
  type OutputGrid,
  type PathTimeline,
  type SymbolTiming,
  type Terminal,
  type TracedEpochs,
} from '@pathweave/core';
import { planScenario, type ArrayPlan, type Domain, type ScenarioPlan, type TerminalPlan } from './plan.js';
import type { ArrayConfig, ExplicitPathConfig, Scenario, TerminalConfig } from './schema.js';
import { ScenarioError } from './validate.js';

/**
 * A path as listed by `pathweave paths` and stored in the path table.
 * @example
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
 * const [user]: UserChannel[] = buildScenario(scenario).users;
 * [user!.id, user!.generator.shape, user!.paths.length] // ['', [10, 64, 2, 4], 1]: a lone receiver without id
 */
export interface UserChannel {
  /** The user's identity: its `id`, else its index in `receivers` ("" for a lone `receiver` without id). */
  id: string;
  receiver: TerminalConfig;
  generator: ChannelGenerator;
  timeline: PathTimeline;
  /** The timeline of the specular paths: `timeline` itself, or the one its clusters widen. */
  specularTimeline: PathTimeline;
  /** The traced epochs of a scene (plain data: a worker thread builds from them without tracing). */
  tracedEpochs?: TracedEpochs;
  /** Paths at t = 0 (for tables and the path table). */
  paths: PathSummary[];
  /** With clusters: the specular paths at t = 0 that the sub-paths of `paths` come from. */
  specularPaths?: PathSummary[];
  spec: ChannelSpec;
}

/**
 * A scenario made ready to generate.
 * @example
 * const built: BuiltScenario = buildScenario(scenario);
 * [built.domain, built.multiUser, built.shape, built.valuesPerSubframe] // ['frequency', false, [10, 64, 2, 4], 512]
 */
export interface BuiltScenario {
  /** The plan it was built from. */
  plan: ScenarioPlan;
  /** The validated scenario (plan.scenario). */
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
 * Build the array of a planned terminal at the given carrier.
 * @example buildArray(planArray({ kind: 'ula', elements: 2 }), 30e9).localOffsets // Float64Array [0, -0.002498, 0, 0, 0.002498, 0]: half a wavelength (4.997 mm at 30 GHz) apart
 */
export function buildArray(array: ArrayPlan, carrierHz: number): AntennaArray {
  const config = array.config;
  const pattern = patternOf(config.element);
  const orientation = config.orientation ?? {};
  switch (config.kind) {
    case 'ula':
      return AntennaArray.ula(config.elements!, array.spacingWavelengths! * wavelength(carrierHz), orientation, pattern);
    case 'upa':
      return AntennaArray.upa(config.rows!, config.columns!, array.spacingWavelengths! * wavelength(carrierHz), orientation, pattern);
    case 'custom':
      return AntennaArray.custom(config.positions!, orientation, pattern);
  }
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

function buildTerminal(t: TerminalPlan, carrierHz: number): Terminal {
  const motion = motionOf(t.config);
  const a = t.array.config;
  return {
    array: buildArray(t.array, carrierHz),
    position: motion.positionAt(0),
    velocity: motion.velocityAt(0),
    motion,
    wavefront: t.array.wavefront,
    ...(a.dualPolarized !== undefined ? { ports: dualPolarizedPortVectors(a.dualPolarized) } : {}),
    ...(a.polarization !== undefined ? { polarization: a.polarization } : {}),
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
  // phaseDeg defaults to 0 (rho's phase at t = 0), the one default of an explicit path.
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
    records.push({
      id,
      kind: 'explicit',
      delayS: p.delayS,
      powerDb: p.powerDb,
      phaseDeg,
      aodDeg: [...p.aodDeg],
      aoaDeg: [...p.aoaDeg],
      dopplerHz: p.dopplerHz ?? 0,
      maxDopplerHz: p.maxDopplerHz,
    });
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
 * Symbol timing of a plan (undefined: one step per subframe, no symbol axis): the NR symbol
 * clock of a numerology, else uniform steps.
 * @example
 * symbolTimingOf(planScenario(scenario)) // undefined
 * symbolTimingOf(planScenario({ ...scenario, timing: { subframeS: 1e-3, subframes: 10, symbolsPerSubframe: 14 } }))!.perSubframe // 14
 */
export function symbolTimingOf(plan: ScenarioPlan): SymbolTiming | undefined {
  const t = plan.timing;
  if (!t.symbolAxis) return undefined;
  if (t.numerology !== undefined)
    return { perSubframe: t.stepsPerSubframe, clock: numerologyClock(nrNumerology(t.numerology, t.cyclicPrefix), 'start', t.subframeS) };
  return { perSubframe: t.stepsPerSubframe };
}

/**
 * The geometry's scene from the scenario's `scene` object.
 * @example
 * const { paths, ...traced } = scenario;
 * sceneOf({ ...traced, scene: { walls: [{ vertices: [[0, 20], [80, 20]] }], atmosphere: { method: 'p676-13-line-by-line' } } }).gasAttenuationDbPerKm // 0.1018: ITU-R P.676 at 28 GHz, sea level
 */
export function sceneOf(scenario: Scenario): Scene {
  if (scenario.scene?.imports !== undefined) {
    throw new ScenarioError([
      {
        path: 'scene.imports',
        message: 'the imported files are not read yet: load the scenario with loadScenario() or expand it with expandSceneImports(scenario, folder) first',
      },
    ]);
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
 * buildScenario(scenario, { domain: 'frequency' }).generator.shape // [10, 64, 2, 4]: [S, K, Nr, Nt]
 */
export function buildScenario(scenario: Scenario, options: { domain?: Domain | undefined; seed?: number | undefined } = {}): BuiltScenario {
  return buildPlan(planScenario(scenario, options));
}

/**
 * Trace the geometry updates of every user of a plan one at a time, awaiting `between(done,
 * total)` before each (the user's updates traced so far and their count: a long set-up then
 * serves signals and shows progress, and stops when `between` throws). The result, given
 * as `buildPlan(plan, { traced })`, builds the same generators as `buildPlan(plan)`, bit for bit;
 * a plan of explicit paths traces nothing (every entry undefined).
 * @example
 * const { scenario: street } = await loadScenario('examples/street-corner-28ghz.json');
 * const traced = await traceUsers(planScenario(street), async () => undefined);
 * traced[0]!.epochTimesS.length // 20: geometry updates every 10 ms over the 200 subframes of 1 ms
 */
export async function traceUsers(plan: ScenarioPlan, between: (done: number, total: number) => Promise<void>): Promise<(TracedEpochs | undefined)[]> {
  if (plan.source !== 'scene') return plan.users.map(() => undefined);
  const scene = sceneOf(plan.scenario);
  const t = plan.transmitter;
  const traced: TracedEpochs[] = [];
  // The same arguments as the TracedTimeline of buildPlan.
  for (const r of plan.users) {
    traced.push(
      await traceEpochs(
        scene,
        { motion: motionOf(t.config), polarization: t.array.config.polarization, orientation: t.array.config.orientation },
        { motion: motionOf(r.config), polarization: r.array.config.polarization, orientation: r.array.config.orientation },
        plan.carrierHz,
        plan.timing.lastStepTimeS,
        plan.timing.geometryUpdateS,
        {},
        between,
      ),
    );
  }
  return traced;
}

/**
 * Build the generators of a plan. With `traced` (one entry per user, from `UserChannel.tracedEpochs`
 * of an earlier build of the same plan) the scene is not traced again: a worker thread builds
 * this way and gets the same generators, bit for bit.
 * @example
 * const plan = planScenario(scenario);
 * buildPlan(plan).generator.shape // [10, 64, 2, 4]: [S, K, Nr, Nt]
 */
export function buildPlan(plan: ScenarioPlan, options: { traced?: readonly (TracedEpochs | undefined)[] | undefined } = {}): BuiltScenario {
  const { scenario, domain, carrierHz, seed } = plan;
  const tx = buildTerminal(plan.transmitter, carrierHz);
  const symbols = symbolTimingOf(plan);
  const g = plan.grid;
  const grid: OutputGrid =
    g.domain === 'frequency'
      ? { domain: g.domain, subcarriers: g.subcarriers, spacingHz: g.spacingHz, beamSquint: g.beamSquint }
      : { domain: g.domain, sampleRateHz: g.sampleRateHz, count: g.count, pulse: g.pulse, rollOff: g.rollOff };
  const S = plan.timing.subframes;
  const warnings: string[] = [];
  const users: UserChannel[] = [];
  for (const [u, r] of plan.users.entries()) {
    const rx = buildTerminal(r, carrierHz);
    let timeline: PathTimeline;
    let records: PathSummary[];
    let delays: number[];
    let totalPower: number;
    let specular: PathSummary[] | undefined;
    let spreads: (ClusterSpread | undefined)[];
    let tracedEpochs: TracedEpochs | undefined;
    if (plan.source === 'scene') {
      const Timeline = plan.polarised ? PolarimetricTracedTimeline : TracedTimeline;
      const traced = new Timeline(
        sceneOf(scenario),
        { motion: tx.motion!, polarization: plan.transmitter.array.config.polarization, orientation: plan.transmitter.array.config.orientation },
        { motion: rx.motion!, polarization: r.array.config.polarization, orientation: r.array.config.orientation },
        carrierHz,
        plan.timing.lastStepTimeS,
        plan.timing.geometryUpdateS,
        {},
        options.traced?.[u],
      );
      for (const w of traced.warnings) if (!warnings.includes(w)) warnings.push(w);
      timeline = traced;
      tracedEpochs = traced.tracedEpochs();
      records = traced.pathsAt(0).map(summarizeTraced);
      delays = traced.epochs.flatMap((m) => [...m.values()].map((p) => p.delayS));
      totalPower = records.reduce((a, p) => a + 10 ** (p.powerDb / 10), 0);
      spreads = traced.ids.map(() => plan.clusters.scene ?? undefined);
    } else {
      const explicit = explicitPaths(scenario);
      timeline = new ExplicitTimeline(explicit.paths);
      records = explicit.records;
      delays = explicit.paths.map((p) => p.delayS);
      totalPower = explicit.paths.reduce((a, p) => a + p.power, 0);
      spreads = plan.clusters.explicit.map((c) => c ?? undefined);
    }
    const specularTimeline = timeline;
    if (spreads.some((c) => c !== undefined)) {
      const clustered = new ClusteredTimeline(timeline, spreads, seed, r.streamKey);
      specular = records;
      records = clusteredRecords(clustered, records);
      timeline = clustered;
    }
    if (timeline.ids.length === 0) {
      const who = plan.multiUser ? `receivers[${users.length}]` : 'receiver';
      throw new ScenarioError([
        {
          path: plan.source === 'scene' ? 'scene' : 'paths',
          message: `the geometry yields no path at all between the transmitter and the ${who} (check lineOfSight, walls, blockers, maxReflectionOrder and diffraction)`,
        },
      ]);
    }
    const delayShiftS = g.domain === 'taps' && g.alignFirstPath ? alignmentShiftS(delays, g.sampleRateHz) : 0;
    const spec: ChannelSpec = {
      carrierHz,
      subframeS: plan.timing.subframeS,
      subframes: S,
      transmitter: tx,
      receiver: rx,
      timeline,
      fading: plan.fading,
      grid,
      delayShiftS,
      seed,
      precision: plan.precision,
      symbols,
      streamKey: r.streamKey,
      amplitudeScale: plan.normalize && totalPower > 0 ? 1 / Math.sqrt(totalPower) : 1,
      ...(plan.xprDb !== undefined ? { xprDb: plan.xprDb } : {}),
    };
    let generator: ChannelGenerator;
    try {
      generator = new ChannelGenerator(spec);
    } catch (e) {
      // The AR fit can refuse an order its Yule-Walker system cannot carry: that is the input's fault.
      if (e instanceof ArFitError) throw new ScenarioError([{ path: 'fading.order', message: e.problem }]);
      throw e;
    }
    for (const w of generator.warnings) if (!warnings.includes(w)) warnings.push(w);
    users.push({
      id: r.id,
      receiver: r.config,
      generator,
      timeline,
      specularTimeline,
      paths: records,
      ...(specular !== undefined ? { specularPaths: specular } : {}),
      ...(tracedEpochs !== undefined ? { tracedEpochs } : {}),
      spec,
    });
  }
  const first = users[0]!;
  return {
    plan,
    scenario,
    domain,
    users,
    multiUser: plan.multiUser,
    shape: plan.tensor.shape,
    valuesPerSubframe: plan.tensor.valuesPerSubframe,
    generator: first.generator,
    paths: first.paths,
    warnings,
  };
}
