/**
 * Where the figures' data come from: a scenario run in memory, or a file pathweave wrote
 * (.h5, .npz, or .npy with its side file), whose stored scenario rebuilds the geometry.
 *
 * Tensor layout read here: [S, (U,) (symbols,) K or count, Nr, Nt], complex interleaved; gains
 * [S, (U,) (symbols,) L]; truth/* [S, (U,) L (, 2)].
 */
import { readFile } from 'node:fs/promises';
import { besselJ0 } from '@pathweave/core';
import { buildScenario, summarizeTraced, type BuiltScenario, type PathSummary } from '../scenario/build.js';
import { fillBlock, maxPathCount, RequestError } from '../dataset/generate.js';
import { checkScenarioAttribute } from '../dataset/manifest.js';
import { attributeOf, openDatasetReader, tensorOf, type DatasetReader } from '../formats/reader.js';
import { parseScenarioText } from '../scenario/validate.js';
import type { Scenario } from '../scenario/schema.js';
import type { FigureTerminal, SceneFigureInput } from './scene.js';
import type { ProfilePath } from './profiles.js';
import { gainCorrelation, type CorrelationSeries, type TimeFrequencyInput } from './fields.js';

/**
 * A scenario, built, and (for a file) the open file it came with.
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.h5', format: 'h5', range: [0, 4] }); // H [4, 64, 4, 32] with its truth tables
 * (await openPlotSource('run.h5')).reader?.format // 'h5'
 */
export interface PlotSource {
  /** The file name given. */
  file: string;
  scenario: Scenario;
  built: BuiltScenario;
  /** The open dataset when `file` is an output file; close it with `closePlotSource`. */
  reader?: DatasetReader;
}

/** Files that hold a scenario rather than data. */
const SCENARIO_FILE = /\.json$/i;

/**
 * Open a scenario file (run in memory on demand) or an output file (its stored scenario is rebuilt).
 * @example
 * const src = await openPlotSource('examples/street-corner-28ghz.json');
 * src.built.paths.length // 8
 */
export async function openPlotSource(file: string): Promise<PlotSource> {
  if (SCENARIO_FILE.test(file)) {
    const text = await readFile(file, 'utf8');
    const { scenario } = parseScenarioText(text, file);
    return { file, scenario, built: buildScenario(scenario) };
  }
  const reader = await openDatasetReader(file);
  try {
    const text = attributeOf(reader, 'scenario');
    if (typeof text !== 'string') throw new RequestError(`${file} carries no scenario attribute (was it written by pathweave generate?)`);
    checkScenarioAttribute(reader); // the figure is computed from the scenario: it must be the tensor's
    const { scenario } = parseScenarioText(text, `${file}: scenario`);
    const seed = attributeOf(reader, 'seed');
    const built = buildScenario(scenario, {
      domain: tensorOf(reader).name === 'h' ? 'taps' : reader.format === 'npy' ? undefined : 'frequency',
      ...(typeof seed === 'number' ? { seed } : {}),
    });
    return { file, scenario, built, reader };
  } catch (e) {
    await reader.close();
    throw e;
  }
}

/**
 * A source from a scenario object already in memory (validated: use parseScenarioText or safeParseScenario first).
 * @example
 * const { scenario } = parseScenarioText(readFileSync('examples/street-corner-28ghz.json', 'utf8'));
 * scenarioPlotSource(scenario, 'my scene').built.domain // 'frequency'
 */
export function scenarioPlotSource(scenario: Scenario, label: string): PlotSource {
  return { file: label, scenario, built: buildScenario(scenario) };
}

/**
 * Release the file of a source (a no-op for a scenario).
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.h5', format: 'h5', range: [0, 4] }); // H [4, 64, 4, 32] with its truth tables
 * await closePlotSource(await openPlotSource('run.h5')) // undefined: the HDF5 file is closed
 */
export async function closePlotSource(source: PlotSource): Promise<void> {
  await source.reader?.close();
}

/**
 * The index of a receiver given by its id or its index (an id is matched first).
 * @example userIndexOf(await openPlotSource('examples/street-corner-users-28ghz.json'), 'crossing-a') // 1
 */
export function userIndexOf(source: PlotSource, user: number | string): number {
  const ids = source.built.users.map((u) => u.id);
  const U = ids.length;
  // An id first (ids are the stable names), then an index.
  if (typeof user === 'string') {
    const byId = ids.indexOf(user);
    if (byId >= 0 && user !== '') return byId;
    if (/^\d+$/.test(user)) user = Number(user);
  }
  if (!(typeof user === 'number' && Number.isInteger(user) && user >= 0 && user < U)) {
    const named = ids.filter((id) => id !== '');
    throw new RequestError(
      `user must be ${named.length > 0 ? `a receiver id (${named.join(', ')}) or ` : ''}an index in [0, ${U - 1}], got ${JSON.stringify(user)}`,
    );
  }
  return user;
}

/**
 * Paths of a user at time t: traced again at t for a scene, the explicit list otherwise.
 * @example pathsAt(await openPlotSource('examples/street-corner-28ghz.json'))[0].kind // "los"
 */
export function pathsAt(source: PlotSource, atS = 0, user: number | string = 0): PathSummary[] {
  const u = source.built.users[userIndexOf(source, user)]!;
  return u.timeline.pathsAt !== undefined ? u.timeline.pathsAt(atS).map(summarizeTraced) : u.paths;
}

/**
 * The scene figure's input at time t: the scenario's scene, the terminals (receiver tracks over
 * the run) and the paths of `user` at t. Explicit-path scenarios have no scene and are refused.
 * @example sceneInputOf(await openPlotSource('examples/street-corner-28ghz.json')).paths.length // 8
 */
export function sceneInputOf(source: PlotSource, atS = 0, user: number | string = 0): SceneFigureInput {
  const s = source.scenario;
  if (s.scene === undefined) throw new RequestError(`${source.file}: the scene figure needs a scenario with a scene; this one lists its paths explicitly`);
  const b = source.built;
  const end = (b.plan.timing.subframes - 1) * b.plan.timing.subframeS;
  const steps = 40;
  const receivers: FigureTerminal[] = b.users.map((u) => {
    const motion = u.spec.receiver.motion!;
    const terminal: FigureTerminal = {
      position: motion.positionAt(atS, [0, 0, 0]),
      orientation: motion.turns ? motion.orientationAt(atS) : u.receiver.array.orientation,
      label: b.multiUser ? `Rx ${u.id}` : 'Rx',
    };
    if (motion.moves) terminal.track = Array.from({ length: steps + 1 }, (_, k) => motion.positionAt((k * end) / steps, [0, 0, 0]));
    return terminal;
  });
  const ui = userIndexOf(source, user);
  [receivers[0], receivers[ui]] = [receivers[ui]!, receivers[0]!];
  const txm = b.users[0]!.spec.transmitter.motion!;
  return {
    title: `${s.name ?? source.file}: paths at t = ${atS} s`,
    scene: s.scene as unknown as SceneFigureInput['scene'],
    transmitter: { position: txm.positionAt(atS, [0, 0, 0]), orientation: txm.turns ? txm.orientationAt(atS) : s.transmitter.array.orientation, label: 'Tx' },
    receivers,
    paths: pathsAt(source, atS, ui),
  };
}

/**
 * Paths for the profile figures at time t: a file's own truth tables at the subframe holding t
 * (what the file carries), else the scenario's paths traced at t.
 * @example
 * const { scenario, text } = await loadScenario('examples/street-corner-28ghz.json');
 * await generate(scenario, text, { out: 'run.h5', format: 'h5', range: [0, 4] }); // H [4, 64, 4, 32] with its truth tables
 * (await profilePathsOf(await openPlotSource('run.h5'))).origin // 'run.h5, truth tables at subframe 0 (t = 0.000 s)'
 */
export async function profilePathsOf(source: PlotSource, atS = 0, user: number | string = 0): Promise<{ paths: ProfilePath[]; origin: string }> {
  const ui = userIndexOf(source, user);
  const r = source.reader;
  if (r !== undefined && r.arrays.some((a) => a.name === 'truth/delayS')) {
    const times = (await r.readArray('subframeTimesS')).data as Float64Array;
    let s = 0;
    while (s + 1 < times.length && times[s + 1]! <= atS + 1e-12) s++;
    const L = maxPathCount(source.built);
    const row = async (name: string, width: number): Promise<Float64Array> => {
      const data = (await r.readRows(name, s, s + 1)) as Float64Array;
      return data.subarray(ui * L * width, (ui + 1) * L * width);
    };
    const delay = await row('truth/delayS', 1),
      power = await row('truth/powerDb', 1),
      aod = await row('truth/aodDeg', 2),
      aoa = await row('truth/aoaDeg', 2);
    const ids = (await r.readArray('paths/id')).strings ?? [];
    const kinds = (await r.readArray('paths/kind')).strings ?? [];
    const paths: ProfilePath[] = [];
    for (let l = 0; l < L; l++) {
      if (!Number.isFinite(power[l]!) || !Number.isFinite(delay[l]!)) continue;
      paths.push({
        id: ids[ui * L + l] ?? `path ${l}`,
        kind: kinds[ui * L + l] ?? 'path',
        delayS: delay[l]!,
        powerDb: power[l]!,
        aodDeg: [aod[2 * l]!, aod[2 * l + 1]!],
        aoaDeg: [aoa[2 * l]!, aoa[2 * l + 1]!],
      });
    }
    return { paths, origin: `${source.file}, truth tables at subframe ${s} (t = ${(times[s] ?? 0).toPrecision(4)} s)` };
  }
  return { paths: pathsAt(source, atS, ui), origin: `${source.file}, paths at t = ${atS} s` };
}

/**
 * Options of the data figures.
 * @example const o: FieldOptions = { element: [1, 0] }; // receive element 1, transmit element 0 of user 0
 */
export interface FieldOptions {
  user?: number;
  /** Receive and transmit element shown (default [0, 0]). */
  element?: [number, number];
  /** Subframes of a scenario run in memory (default: all of them, at most 2000). */
  subframes?: number;
}

/** Index layout of one subframe of the tensor. */
function subframeLayout(built: BuiltScenario, shape: readonly number[]): { bins: number; Nr: number; Nt: number; perUser: number; symbols: number } {
  const n = shape.length;
  const Nt = shape[n - 1]!,
    Nr = shape[n - 2]!,
    bins = shape[n - 3]!;
  const symbols = built.generator.stepsPerSubframe;
  return { bins, Nr, Nt, perUser: symbols * bins * Nr * Nt, symbols };
}

/**
 * |H| in dB of one element pair (symbol 0 of each subframe) over time and subcarriers (or taps),
 * from the file's tensor or a run of the scenario in memory.
 * @example (await timeFrequencyOf(await openPlotSource('examples/street-corner-28ghz.json'))).magnitudeDb.length // 12800: 200 subframes x 64 subcarriers
 */
export async function timeFrequencyOf(source: PlotSource, options: FieldOptions = {}): Promise<Omit<TimeFrequencyInput, 'title'>> {
  const b = source.built;
  const ui = userIndexOf(source, options.user ?? 0);
  const [er, et] = options.element ?? [0, 0];
  const r = source.reader;
  const shape = r !== undefined ? tensorOf(r).shape : b.shape;
  const { bins, Nr, Nt, perUser } = subframeLayout(b, shape);
  if (!(Number.isInteger(er) && er >= 0 && er < Nr && Number.isInteger(et) && et >= 0 && et < Nt))
    throw new RequestError(`element must be [r, t] with r in [0, ${Nr - 1}] and t in [0, ${Nt - 1}], got [${er}, ${et}]`);
  const S = r !== undefined ? shape[0]! : Math.min(options.subframes ?? b.plan.timing.subframes, b.plan.timing.subframes, 2000);
  const out = new Float64Array(S * bins);
  const pick = (block: Float32Array | Float64Array, count: number, firstRow: number): void => {
    const stride = b.multiUser ? b.users.length * perUser : perUser;
    for (let s = 0; s < count; s++) {
      for (let k = 0; k < bins; k++) {
        const i = s * stride + ui * perUser + (k * Nr + er) * Nt + et;
        const re = block[2 * i]!,
          im = block[2 * i + 1]!;
        out[(firstRow + s) * bins + k] = 10 * Math.log10(re * re + im * im);
      }
    }
  };
  const blockRows = Math.max(1, Math.floor(4e6 / (b.valuesPerSubframe || 1)));
  let timesS: Float64Array;
  if (r !== undefined) {
    const name = tensorOf(r).name;
    for (let s = 0; s < S; s += blockRows) {
      const n = Math.min(blockRows, S - s);
      pick((await r.readRows(name, s, s + n)) as Float32Array | Float64Array, n, s);
    }
    timesS = r.arrays.some((a) => a.name === 'subframeTimesS')
      ? ((await r.readArray('subframeTimesS')).data as Float64Array)
      : Float64Array.from({ length: S }, (_, s) => s * b.plan.timing.subframeS);
  } else {
    const buffer =
      b.plan.precision === 'complex128' ? new Float64Array(2 * blockRows * b.valuesPerSubframe) : new Float32Array(2 * blockRows * b.valuesPerSubframe);
    for (let s = 0; s < S; s += blockRows) {
      const n = Math.min(blockRows, S - s);
      const view = buffer.subarray(0, 2 * n * b.valuesPerSubframe);
      fillBlock(b, view, s, n);
      pick(view, n, s);
    }
    timesS = Float64Array.from({ length: S }, (_, s) => s * b.plan.timing.subframeS);
  }
  const grid = b.plan.grid;
  const binsAxis = grid.domain === 'frequency' ? centredOffsets(bins, b) : Float64Array.from({ length: bins }, (_, n) => n / grid.sampleRateHz);
  return {
    magnitudeDb: out,
    timesS,
    bins: binsAxis,
    domain: b.domain,
    subtitle: `${source.reader !== undefined ? source.file : `${source.file}, run in memory`}; element pair rx ${er}, tx ${et}${b.multiUser ? `, user ${b.users[ui]!.id}` : ''}${b.generator.stepsPerSubframe > 1 ? ', first symbol of each subframe' : ''}`,
  };
}

function centredOffsets(K: number, b: BuiltScenario): Float64Array {
  const g = b.generator.spec.grid;
  const df = g.domain === 'frequency' ? g.spacingHz : 0;
  return Float64Array.from({ length: K }, (_, k) => (k - Math.floor(K / 2)) * df);
}

/**
 * Gain correlation against lag: the estimate from the gains (the file's `gains`, or a run of the
 * scenario in memory) and the model's references, the Clarke/Jakes product of J0 per moving end
 * and, for Gauss-Markov, alpha^k. Paths are averaged (each normalised to its own power).
 * @example (await correlationOf(await openPlotSource('examples/highway-39ghz.json'))).series.map((s) => s.style) // ["markers", "line"]
 */
export async function correlationOf(
  source: PlotSource,
  options: { user?: number; lags?: number; subframes?: number } = {},
): Promise<{ lagsS: Float64Array; series: CorrelationSeries[]; subtitle: string }> {
  const b = source.built;
  const ui = userIndexOf(source, options.user ?? 0);
  const gen = b.users[ui]!.generator;
  const L = gen.pathCount,
    Lmax = maxPathCount(b);
  const U = b.users.length;
  const N = gen.stepsPerSubframe;
  let S: number;
  let rows: Float64Array; // [S, Lmax] of user ui, symbol 0
  const fromFile = source.reader !== undefined;
  const take = (g: Float64Array, n: number, first: number, into: Float64Array): void => {
    const perRow = (b.multiUser ? U : 1) * N * Lmax;
    for (let s = 0; s < n; s++)
      for (let l = 0; l < Lmax; l++) {
        const src = 2 * (s * perRow + (b.multiUser ? ui * N * Lmax : 0) + l);
        into[2 * ((first + s) * Lmax + l)] = g[src]!;
        into[2 * ((first + s) * Lmax + l) + 1] = g[src + 1]!;
      }
  };
  if (source.reader !== undefined) {
    const r = source.reader;
    if (!r.arrays.some((a) => a.name === 'gains'))
      throw new RequestError(`${source.file} holds no gains array (an .npy holds the tensor only); plot the scenario or an .h5/.npz file`);
    const g = (await r.readArray('gains')).data as Float64Array;
    S = r.arrays.find((a) => a.name === 'gains')!.shape[0]!;
    rows = new Float64Array(2 * S * Lmax);
    take(g, S, 0, rows);
  } else {
    S = Math.min(options.subframes ?? b.plan.timing.subframes, b.plan.timing.subframes);
    rows = new Float64Array(2 * S * Lmax);
    const block = Math.max(1, Math.min(S, Math.floor(4e6 / (b.valuesPerSubframe || 1))));
    const tensor = gen.precision === 'complex128' ? new Float64Array(2 * block * b.valuesPerSubframe) : new Float32Array(2 * block * b.valuesPerSubframe);
    const gains = new Float64Array(2 * block * (b.multiUser ? U : 1) * N * Lmax);
    for (let s = 0; s < S; s += block) {
      const n = Math.min(block, S - s);
      fillBlock(b, tensor.subarray(0, 2 * n * b.valuesPerSubframe), s, n, gains);
      take(gains, n, s, rows);
    }
  }
  // Default: four Doppler periods (J0's first few swings), within a quarter of the run.
  const T = b.plan.timing.subframeS;
  const fastest = Math.max(0, ...gen.correlations.flatMap((c) => c.dopplersHz));
  const periods = fastest > 0 ? Math.ceil(4 / (fastest * T)) : 200;
  const maxLag = Math.min(options.lags ?? Math.min(200, Math.max(20, periods), Math.floor(S / 4)), S);
  if (maxLag < 2) throw new RequestError(`the correlation needs at least 8 subframes, got ${S}`);
  // Only the user's own L columns; the rest are padding.
  const own = new Float64Array(2 * S * L);
  for (let s = 0; s < S; s++) own.set(rows.subarray(2 * s * Lmax, 2 * (s * Lmax + L)), 2 * s * L);
  const estimate = gainCorrelation(own, S, L, maxLag);
  const lagsS = Float64Array.from({ length: maxLag }, (_, k) => k * T);
  const j0 = new Float64Array(maxLag),
    ak = new Float64Array(maxLag);
  const model = b.plan.fading.model;
  for (const c of gen.correlations) {
    for (let k = 0; k < maxLag; k++) {
      let v = 1;
      for (const f of c.dopplersHz) v *= besselJ0(2 * Math.PI * f * k * T);
      j0[k]! += v / gen.correlations.length;
      ak[k]! += c.alpha ** k / gen.correlations.length;
    }
  }
  const dopplers = [...new Set(gen.correlations.flatMap((c) => c.dopplersHz.map((f) => f.toFixed(1))))];
  const series: CorrelationSeries[] = [
    { label: `${model} gains (estimate)`, values: estimate, style: 'markers' },
    { label: 'Clarke/Jakes J0(2 pi fD k T)', values: j0, style: 'line' },
  ];
  if (model === 'gauss-markov') series.push({ label: 'AR(1) alpha^k', values: ak, style: 'dashed' });
  return {
    lagsS,
    series,
    subtitle: `${fromFile ? source.file : `${source.file}, run in memory`}: ${S} subframes of ${T * 1e3} ms, ${L} path${L === 1 ? '' : 's'}, fD = ${dopplers.join(', ') || '0'} Hz`,
  };
}
