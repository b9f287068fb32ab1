/**
 * From a validated scenario to the core's ChannelSpec: degrees to unit vectors, decibels to
 * linear power, spacings in wavelengths to metres at the carrier, arrays with their orientation.
 */
import {
  AntennaArray,
  isotropic,
  sector38901,
  tabulatedPattern,
  unitFromDeg,
  wavelength,
  type ElementPattern,
  type Vec3,
} from '@pathweave/geometry';
import { ChannelGenerator, alignmentShiftS, type ChannelPath, type ChannelSpec, type OutputGrid, type Terminal } from '@pathweave/core';
import type { ArrayConfig, PathConfig, Scenario, TerminalConfig } from './schema.js';
import { ScenarioError } from './validate.js';

/** Output domain of a run. */
export type Domain = 'frequency' | 'taps';

/** A path as listed by `pathweave paths` and stored in the path table. */
export interface PathRecord {
  id: string;
  kind: string;
  delayS: number;
  powerDb: number;
  phaseDeg: number;
  aodDeg: [number, number];
  aoaDeg: [number, number];
  dopplerHz: number;
  maxDopplerHz?: number | undefined;
}

/** A scenario made ready to generate. */
export interface BuiltScenario {
  scenario: Scenario;
  domain: Domain;
  spec: ChannelSpec;
  generator: ChannelGenerator;
  paths: PathRecord[];
  warnings: string[];
}

function vec3Of(p: readonly number[] | undefined): Vec3 {
  if (p === undefined) return [0, 0, 0];
  return [p[0] ?? 0, p[1] ?? 0, p[2] ?? 0];
}

function patternOf(element: ArrayConfig['element']): ElementPattern {
  if (element === undefined || element === 'isotropic') return isotropic;
  if (element === '3gpp-38.901') return sector38901;
  return tabulatedPattern(element.table.azimuthsDeg, element.table.elevationsDeg, element.table.gainsDbi);
}

/** Build the array of a scenario terminal at the given carrier. */
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

/** Number of elements of an array description without building it. */
export function elementCount(config: ArrayConfig): number {
  if (config.kind === 'ula') return config.elements ?? 0;
  if (config.kind === 'upa') return (config.rows ?? 0) * (config.columns ?? 0);
  return config.positions?.length ?? 0;
}

/** Velocity of a terminal at t = 0: its `velocity`, or the first leg of its trajectory. */
export function initialVelocity(t: TerminalConfig): Vec3 {
  if (t.trajectory !== undefined && t.trajectory.length >= 2) {
    const [a, b] = t.trajectory as [NonNullable<TerminalConfig['trajectory']>[number], NonNullable<TerminalConfig['trajectory']>[number]];
    const pa = vec3Of(a.position), pb = vec3Of(b.position);
    const dt = b.t - a.t;
    return [(pb[0] - pa[0]) / dt, (pb[1] - pa[1]) / dt, (pb[2] - pa[2]) / dt];
  }
  return vec3Of(t.velocity);
}

function buildTerminal(t: TerminalConfig, carrierHz: number): Terminal {
  return { array: buildArray(t.array, carrierHz), position: vec3Of(t.position), velocity: initialVelocity(t) };
}

/** The stable id of explicit path i: its own `id`, else its place in the list. */
export function explicitPathId(p: PathConfig, index: number): string {
  return p.id ?? `paths[${index}]`;
}

/** Paths of the scenario in the assembler's form, with their table records. */
export type PathSource = (scenario: Scenario, tx: Terminal, rx: Terminal) => { paths: ChannelPath[]; records: PathRecord[]; warnings: string[] };

let traced: PathSource | undefined;

/** Install the scene tracer (kept behind a seam so io does not require geometry scenes). */
export function registerSceneTracer(source: PathSource): void {
  traced = source;
}

function explicitPaths(scenario: Scenario): { paths: ChannelPath[]; records: PathRecord[]; warnings: string[] } {
  const list = scenario.paths ?? [];
  const paths: ChannelPath[] = [];
  const records: PathRecord[] = [];
  list.forEach((p, i) => {
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
  return { paths, records, warnings: [] };
}

/** Choose the output domain: the only one given, or `prefer` when the scenario has both. */
export function chooseDomain(scenario: Scenario, prefer?: Domain): Domain {
  if (prefer === 'taps' && scenario.taps === undefined) throw new ScenarioError([{ path: 'taps', message: 'is required for tap-delay output (--domain taps)' }]);
  if (prefer === 'frequency' && scenario.band === undefined) throw new ScenarioError([{ path: 'band', message: 'is required for frequency-domain output (--domain frequency)' }]);
  return prefer ?? (scenario.band !== undefined ? 'frequency' : 'taps');
}

/** Build the generator of a validated scenario. */
export function buildScenario(scenario: Scenario, options: { domain?: Domain; seed?: number } = {}): BuiltScenario {
  const domain = chooseDomain(scenario, options.domain);
  const carrierHz = scenario.carrierHz;
  const receiverConfig = scenario.receiver ?? scenario.receivers![0]!;
  const tx = buildTerminal(scenario.transmitter, carrierHz);
  const rx = buildTerminal(receiverConfig, carrierHz);
  if (scenario.scene !== undefined && traced === undefined) {
    throw new ScenarioError([{ path: 'scene', message: 'tracing scenes is not available in this build; give explicit "paths"' }]);
  }
  const source = scenario.scene !== undefined ? traced!(scenario, tx, rx) : explicitPaths(scenario);
  if (source.paths.length === 0) {
    throw new ScenarioError([{ path: scenario.scene !== undefined ? 'scene' : 'paths', message: 'the geometry yields no path at all between the transmitter and the receiver' }]);
  }
  const grid: OutputGrid =
    domain === 'frequency'
      ? { domain, subcarriers: scenario.band!.subcarriers, spacingHz: scenario.band!.spacingHz, beamSquint: scenario.band!.beamSquint ?? false }
      : { domain, sampleRateHz: scenario.taps!.sampleRateHz, count: scenario.taps!.count, pulse: scenario.taps!.pulse ?? 'sinc', rollOff: scenario.taps!.rollOff ?? 0 };
  const delayShiftS = scenario.taps?.alignFirstPath === true ? alignmentShiftS(source.paths.map((p) => p.delayS), scenario.taps.sampleRateHz) : 0;
  if (scenario.fading.model !== 'static' && scenario.fading.model !== 'gauss-markov') {
    throw new ScenarioError([{ path: 'fading.model', message: `"${scenario.fading.model}" is not available in this build; use "static" or "gauss-markov"` }]);
  }
  if (scenario.fading.normalize === true) {
    const total = source.paths.reduce((a, p) => a + p.power, 0);
    for (const p of source.paths) p.power /= total;
  }
  const spec: ChannelSpec = {
    carrierHz,
    subframeS: scenario.timing.subframeS,
    subframes: scenario.timing.subframes,
    transmitter: tx,
    receiver: rx,
    paths: source.paths,
    fading: scenario.fading.model === 'static' ? { model: 'static' } : { model: 'gauss-markov', speedMps: scenario.fading.speedMps },
    grid,
    delayShiftS,
    seed: options.seed ?? scenario.seed,
    precision: scenario.precision ?? 'complex64',
  };
  const generator = new ChannelGenerator(spec);
  return { scenario, domain, spec, generator, paths: source.records, warnings: [...source.warnings, ...generator.warnings] };
}

/** Tensor shape and size of a scenario, computed without building anything. */
export function outputEstimate(scenario: Scenario, domain: Domain, subframes = scenario.timing.subframes): { shape: number[]; bytes: number; bytesPerSubframe: number } {
  const receiverConfig = scenario.receiver ?? scenario.receivers?.[0];
  const nr = receiverConfig === undefined ? 0 : elementCount(receiverConfig.array);
  const nt = elementCount(scenario.transmitter.array);
  const bins = domain === 'frequency' ? (scenario.band?.subcarriers ?? 0) : (scenario.taps?.count ?? 0);
  const bytesPerValue = scenario.precision === 'complex128' ? 16 : 8;
  const bytesPerSubframe = bins * nr * nt * bytesPerValue;
  return { shape: [subframes, bins, nr, nt], bytes: subframes * bytesPerSubframe, bytesPerSubframe };
}
