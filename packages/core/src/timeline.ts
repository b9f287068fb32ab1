/**
 * Path timelines: the L paths of a run and their parameters at any time. The path set is fixed
 * for the whole run (the union over geometry updates, in a stable order), so gains [S, L] and
 * every shard agree on what column l means. A frame holds the L paths at one time, as
 * structure-of-arrays: delay [L], departure and arrival [3 L] (global unit vectors), complex
 * amplitude [2 L] (interleaved; includes the visibility fade), signed Doppler [L], visibility [L].
 */
import {
  AntennaArray,
  prepareScene,
  retracePaths,
  rotationFromOrientation,
  specularImageMap,
  traceScene,
  wavefrontRangesM,
  type Orientation,
  type Polarization,
  type PreparedScene,
  type Scene,
  type TraceOptions,
  type TracedPath,
  type Vec3,
} from '@pathweave/geometry';
import type { Motion } from './motion.js';

/**
 * The L paths at one time.
 * @example
 * const frame = new PathSetFrame(1);
 * new ExplicitTimeline([{ id: 'los', delayS: 33e-9, power: 0.25, phaseRad: 0, departure: [1, 0, 0], arrival: [-1, 0, 0] }]).frameAt(0, frame);
 * [frame.delayS, frame.amplitude] // [Float64Array [3.3e-8], Float64Array [0.5, 0]]: amplitude sqrt(0.25)
 */
export class PathSetFrame {
  readonly delayS: Float64Array;
  readonly departure: Float64Array;
  readonly arrival: Float64Array;
  readonly amplitude: Float64Array;
  readonly dopplerHz: Float64Array;
  readonly visibility: Float64Array;
  /** Unfolded length of each path, metres (for spherical wavefronts). */
  readonly lengthM: Float64Array;
  /**
   * Range of each path's wavefront at the transmitter and at the receiver [2 L], metres: the
   * distance along the path to the nearest scatterer or edge, else the unfolded length
   * (geometry's wavefrontRangesM). NaN where the timeline does not know: lengthM is used.
   */
  readonly rangeM: Float64Array;
  /**
   * Image map of each specular path [9 L] (geometry's specularImageMap: transmit element offsets
   * to their images' offsets; the identity for a line of sight). NaN in the first value of a path
   * with no image (a scatterer, an edge) or whose geometry the timeline does not know.
   */
  readonly image: Float64Array;
  /** Line of sight between the terminals at this time (a LOS path is visible). */
  lineOfSight = false;

  constructor(readonly count: number) {
    this.delayS = new Float64Array(count);
    this.departure = new Float64Array(3 * count);
    this.arrival = new Float64Array(3 * count);
    this.amplitude = new Float64Array(2 * count);
    this.dopplerHz = new Float64Array(count);
    this.visibility = new Float64Array(count);
    this.lengthM = new Float64Array(count);
    this.rangeM = new Float64Array(2 * count).fill(Number.NaN);
    this.image = new Float64Array(9 * count).fill(Number.NaN);
  }
}

/**
 * A source of path frames over time.
 * @example
 * const timeline: PathTimeline = new ExplicitTimeline([{ id: 'los', delayS: 0, power: 1, phaseRad: 0, departure: [1, 0, 0], arrival: [-1, 0, 0] }]);
 * [timeline.ids, timeline.kinds, timeline.constant] // [['los'], ['explicit'], true]
 */
export interface PathTimeline {
  /** Stable path ids (keys of the random streams), column order of gains. */
  readonly ids: readonly string[];
  /** Path kinds ("explicit", "los", "reflection", "scatter"). */
  readonly kinds: readonly string[];
  /** True when no frame differs from the frame at t = 0. */
  readonly constant: boolean;
  /** Fill `frame` with the paths at time t (seconds). */
  frameAt(timeS: number, frame: PathSetFrame): void;

  // Optional capabilities: a timeline states what it provides, so callers read these members
  // instead of probing its class.

  /** Diffuse part: true for the columns that are diffuse sub-paths (they carry a cross-polar ratio). */
  readonly diffuse?: readonly boolean[] | undefined;
  /**
   * Polarimetric transfer: fill `out` (8 L values: per path the 2x2 complex [tt, tp, pt, pp],
   * polarization-ports.ts) with every path's transfer at time t (seconds).
   */
  polarimetricAt?(timeS: number, out: Float64Array): void;
  /** Per-path Doppler given with the paths (explicit paths): signed shift and statistical spread, Hz. */
  readonly pathDoppler?: readonly { readonly dopplerHz?: number | undefined; readonly maxDopplerHz?: number | undefined }[] | undefined;
  /** Epochs: the traced path set of each geometry update (id to path), at `epochTimesS`. */
  readonly epochs?: readonly ReadonlyMap<string, TracedPath>[] | undefined;
  /** Times of the geometry updates, seconds (with `epochs`). */
  readonly epochTimesS?: readonly number[] | undefined;
  /** The traced paths at time t (with `epochs`; for listings). */
  pathsAt?(timeS: number): TracedPath[];
  /** The epochs as plain data (with `epochs`), to rebuild the timeline without tracing (a worker thread). */
  tracedEpochs?(): TracedEpochs;
}

/**
 * The traced epochs of a timeline as plain data (structured-clone safe: worker threads receive
 * them and trace nothing): the update times, each update's paths in trace order, the warnings.
 * @example
 * const timeline = new TracedTimeline({}, { motion: new Motion([0, 0, 0]) }, { motion: new Motion([10, 0, 0]) }, 28e9, 0, 1);
 * const epochs: TracedEpochs = timeline.tracedEpochs();
 * [epochs.epochTimesS, epochs.paths[0]!.map((p) => p.id)] // [[0], ['los']]
 */
export interface TracedEpochs {
  epochTimesS: number[];
  paths: TracedPath[][];
  warnings: string[];
}

/**
 * One explicit path (a scenario's `paths` entry), in SI units.
 * @example const echo: ExplicitPathSpec = { id: 'wall', delayS: 80e-9, power: 1e-9, phaseRad: Math.PI, departure: [0.6, 0.8, 0], arrival: [-0.6, 0.8, 0] };
 */
export interface ExplicitPathSpec {
  id: string;
  delayS: number;
  /** E|rho|^2, linear. */
  power: number;
  phaseRad: number;
  departure: Vec3;
  arrival: Vec3;
  dopplerHz?: number | undefined;
  maxDopplerHz?: number | undefined;
}

/**
 * Paths given explicitly: the same frame at every time.
 * @example new ExplicitTimeline([{ id: 'los', delayS: 0, power: 1, phaseRad: 0, departure: [1, 0, 0], arrival: [-1, 0, 0] }]).ids // ['los']
 */
export class ExplicitTimeline implements PathTimeline {
  readonly ids: readonly string[];
  readonly kinds: readonly string[];
  readonly constant = true;
  readonly pathDoppler: readonly ExplicitPathSpec[];

  constructor(readonly paths: readonly ExplicitPathSpec[]) {
    this.ids = paths.map((p) => p.id);
    this.kinds = paths.map(() => 'explicit');
    this.pathDoppler = paths;
  }

  frameAt(_timeS: number, frame: PathSetFrame): void {
    this.paths.forEach((p, l) => {
      frame.delayS[l] = p.delayS;
      frame.departure.set(p.departure, 3 * l);
      frame.arrival.set(p.arrival, 3 * l);
      const a = Math.sqrt(p.power);
      frame.amplitude[2 * l] = a * Math.cos(p.phaseRad);
      frame.amplitude[2 * l + 1] = a * Math.sin(p.phaseRad);
      frame.dopplerHz[l] = p.dopplerHz ?? 0;
      frame.visibility[l] = 1;
      frame.lengthM[l] = p.delayS * 299_792_458;
    });
    frame.lineOfSight = false;
  }
}

/**
 * A terminal as the traced timeline sees it.
 * @example const ue: MovingTerminal = { motion: new Motion([10, 0, 1.5], [0, 1, 0]), polarization: 'horizontal' };
 */
export interface MovingTerminal {
  motion: Motion;
  polarization?: Polarization | undefined;
  /** The array's own orientation (used when the motion does not turn). */
  orientation?: Orientation | undefined;
}

/**
 * Paths traced from a scene. Which paths exist is decided at each geometry update
 * (t_e = e * updateS); between updates every present path is re-traced from its interaction
 * list at the current positions (delay, angles, Doppler, spreading and carrier phase change
 * continuously). A path present at one update and absent at the next fades linearly over the
 * update interval (and likewise fades in), so nothing jumps.
 * @example
 * const scene = { walls: [{ vertices: [[0, 5], [40, 5]] }] };
 * const timeline = new TracedTimeline(scene, { motion: new Motion([0, 0, 0]) }, { motion: new Motion([10, 0, 0], [1, 0, 0]) }, 28e9, 1, 0.5);
 * [timeline.ids, timeline.epochTimesS] // [['los', 'R:walls[0]'], [0, 0.5, 1]]: updates every 0.5 s over [0, 1] s
 */
export class TracedTimeline implements PathTimeline {
  readonly ids: string[];
  readonly kinds: string[];
  readonly constant: boolean;
  /** Per update: id to traced path. */
  readonly epochs: Map<string, TracedPath>[];
  readonly epochTimesS: number[];
  readonly warnings: string[] = [];
  readonly prepared: PreparedScene;
  private readonly index = new Map<string, number>();
  private readonly scratchTx: Vec3 = [0, 0, 0];
  private readonly scratchRx: Vec3 = [0, 0, 0];
  private readonly scratchVt: Vec3 = [0, 0, 0];
  private readonly scratchVr: Vec3 = [0, 0, 0];

  /**
   * @param endS time of the last step of the run (the updates cover [0, endS])
   * @param updateS time between geometry updates (ignored when nothing moves)
   * @param traced the epochs of an earlier trace of the same scene and motion (`tracedEpochs()`): used instead of tracing
   */
  constructor(
    scene: Scene,
    private readonly tx: MovingTerminal,
    private readonly rx: MovingTerminal,
    private readonly carrierHz: number,
    endS: number,
    private readonly updateS: number,
    private readonly options: TraceOptions = {},
    traced?: TracedEpochs,
  ) {
    this.prepared = prepareScene(scene);
    const moving = movesOrTurns(tx, rx);
    this.epochTimesS = epochTimesOf(tx, rx, endS, updateS);
    const count = this.epochTimesS.length;
    if (traced !== undefined && (traced.paths.length !== count || traced.epochTimesS.some((t, e) => t !== this.epochTimesS[e]))) {
      throw new RangeError(
        `TracedTimeline(): traced holds ${traced.paths.length} epochs at [${traced.epochTimesS.join(', ')}] s, this timeline has ${count} at [${this.epochTimesS.join(', ')}] s`,
      );
    }
    this.epochs = [];
    this.ids = [];
    this.kinds = [];
    if (traced !== undefined) this.warnings.push(...traced.warnings);
    for (const [e, t] of this.epochTimesS.entries()) {
      const r =
        traced !== undefined
          ? { paths: traced.paths[e]!, warnings: [] }
          : traceScene(this.prepared, terminalAt(tx, t, this.scratchTx, this.scratchVt), terminalAt(rx, t, this.scratchRx, this.scratchVr), carrierHz, options);
      for (const w of r.warnings) {
        const text = `${w.path}: ${w.message}`;
        if (!this.warnings.includes(text)) this.warnings.push(text);
      }
      const map = new Map<string, TracedPath>();
      for (const p of r.paths) {
        map.set(p.id, p);
        if (!this.index.has(p.id)) {
          this.index.set(p.id, this.ids.length);
          this.ids.push(p.id);
          this.kinds.push(p.kind);
        }
      }
      this.epochs.push(map);
    }
    this.constant = !moving;
  }

  private terminal(t: MovingTerminal, timeS: number, position: Vec3, velocity: Vec3): ReturnType<typeof terminalAt> {
    return terminalAt(t, timeS, position, velocity);
  }

  /** The update interval holding t, and the fraction of the way to the next update. */
  private locate(t: number): { e: number; f: number } {
    if (this.epochs.length === 1) return { e: 0, f: 0 };
    const e = Math.min(this.epochs.length - 1, Math.max(0, Math.floor(t / this.updateS + 1e-12)));
    const f = e + 1 < this.epochs.length ? Math.min(1, Math.max(0, (t - e * this.updateS) / this.updateS)) : 0;
    return { e, f };
  }

  frameAt(timeS: number, frame: PathSetFrame): void {
    frame.amplitude.fill(0);
    frame.visibility.fill(0);
    frame.lineOfSight = false;
    const { e, f } = this.locate(timeS);
    const now = this.epochs[e]!;
    const next = this.epochs[e + 1];
    const present: TracedPath[] = [];
    const weights: number[] = [];
    const seen = new Set<string>();
    for (const [id, p] of now) {
      const w = 1 - f + (next?.has(id) === true || next === undefined ? f : 0);
      present.push(p);
      weights.push(w);
      seen.add(id);
    }
    if (next !== undefined) {
      for (const [id, p] of next) {
        if (seen.has(id) || f === 0) continue;
        present.push(p);
        weights.push(f);
      }
    }
    if (present.length === 0) return;
    const refreshed = this.constant
      ? present
      : retracePaths(
          this.prepared,
          present,
          this.terminal(this.tx, timeS, this.scratchTx, this.scratchVt),
          this.terminal(this.rx, timeS, this.scratchRx, this.scratchVr),
          this.carrierHz,
          this.options,
        );
    // Where the terminals are now, for the wavefront ranges and image maps (retracePaths has set
    // them when something moves; a still scene or traced epochs from a worker have not).
    this.tx.motion.positionAt(timeS, this.scratchTx);
    this.rx.motion.positionAt(timeS, this.scratchRx);
    refreshed.forEach((p, i) => {
      const l = this.index.get(p.id)!;
      let w = weights[i]!;
      // Blocker losses are found at the updates; between two updates where the path exists the
      // loss is interpolated linearly in dB, so blockage rises and falls without steps.
      const before = now.get(p.id);
      const after = next?.get(p.id);
      if (before !== undefined && after !== undefined && f > 0 && before.blockageDb !== after.blockageDb) {
        const db = (1 - f) * before.blockageDb + f * after.blockageDb;
        w *= 10 ** (-(db - p.blockageDb) / 20);
      }
      let [re, im] = p.amplitude;
      // A diffracted path whose shadow or reflection boundaries lie on different sides at the two
      // updates is blended from both (each held on its update's sides, geometry utd.ts), as the
      // direct and reflected paths fade between the updates: their sum stays continuous.
      if (p.kind === 'diffraction' && before !== undefined && after !== undefined && f > 0 && !sameSides(before, after)) {
        const q = retracePaths(
          this.prepared,
          [after],
          this.terminal(this.tx, timeS, this.scratchTx, this.scratchVt),
          this.terminal(this.rx, timeS, this.scratchRx, this.scratchVr),
          this.carrierHz,
          this.options,
        )[0]!;
        re = (1 - f) * re + f * q.amplitude[0];
        im = (1 - f) * im + f * q.amplitude[1];
      }
      frame.delayS[l] = p.delayS;
      frame.departure.set(p.departure, 3 * l);
      frame.arrival.set(p.arrival, 3 * l);
      frame.amplitude[2 * l] = w * re;
      frame.amplitude[2 * l + 1] = w * im;
      frame.dopplerHz[l] = p.dopplerHz;
      frame.visibility[l] = w;
      frame.lengthM[l] = p.lengthM;
      wavefrontRangesM(frame.rangeM, 2 * l, p, this.scratchTx, this.scratchRx, p.lengthM);
      if (!specularImageMap(frame.image, 9 * l, p, this.scratchTx, this.scratchRx)) frame.image[9 * l] = Number.NaN;
      if (p.kind === 'los' && w > 0) frame.lineOfSight = true;
    });
    // Paths absent at this time keep a defined direction so array responses stay finite.
    for (let l = 0; l < this.ids.length; l++) {
      if (frame.visibility[l] === 0 && frame.departure[3 * l] === 0 && frame.departure[3 * l + 1] === 0 && frame.departure[3 * l + 2] === 0) {
        frame.departure[3 * l] = 1;
        frame.arrival[3 * l] = 1;
      }
    }
  }

  /** The epochs as plain data (see TracedEpochs). */
  tracedEpochs(): TracedEpochs {
    return { epochTimesS: [...this.epochTimesS], paths: this.epochs.map((m) => [...m.values()]), warnings: [...this.warnings] };
  }

  /** The traced paths of the update holding time t (for listings). */
  pathsAt(timeS: number): TracedPath[] {
    const { e } = this.locate(timeS);
    const list = [...this.epochs[e]!.values()];
    if (timeS === this.epochTimesS[e]) return list;
    return retracePaths(
      this.prepared,
      list,
      this.terminal(this.tx, timeS, this.scratchTx, this.scratchVt),
      this.terminal(this.rx, timeS, this.scratchRx, this.scratchVr),
      this.carrierHz,
      this.options,
    );
  }
}

/** True when two traces of a diffracted path hold its boundary terms on the same sides. */
function sameSides(a: TracedPath, b: TracedPath): boolean {
  const sa = a.interactions.find((it) => it.type === 'diffraction')?.diffraction?.sides;
  const sb = b.interactions.find((it) => it.type === 'diffraction')?.diffraction?.sides;
  return sa === undefined || sb === undefined || sa.every((v, i) => v === sb[i]);
}

/**
 * The array of a terminal at a time (a new AntennaArray only when the motion turns it).
 * @example
 * const base = AntennaArray.ula(2, 0.005);
 * const spin = new Motion([0, 0, 0], [0, 0, 0], [{ t: 0, position: [0, 0, 0] }, { t: 1, position: [0, 0, 0], orientation: { yawDeg: 90 } }]);
 * arrayAt(base, undefined, 0.5) === base // true
 * arrayAt(base, spin, 1).globalOffsets // Float64Array [0.0025, -1.5e-19, 0, -0.0025, 1.5e-19, 0]: turned 90 degrees, the line now along x
 */
export function arrayAt(base: AntennaArray, motion: Motion | undefined, timeS: number): AntennaArray {
  if (motion === undefined || !motion.turns) return base;
  return new AntennaArray(base.localOffsets, motion.orientationAt(timeS), base.pattern);
}

/** Whether either end moves or turns (then the path set is traced at every geometry update). */
function movesOrTurns(tx: MovingTerminal, rx: MovingTerminal): boolean {
  return tx.motion.moves || rx.motion.moves || tx.motion.turns || rx.motion.turns;
}

/** Times of the geometry updates over [0, endS]: one update when nothing moves. */
function epochTimesOf(tx: MovingTerminal, rx: MovingTerminal, endS: number, updateS: number): number[] {
  const count = movesOrTurns(tx, rx) ? Math.floor(endS / updateS + 1e-9) + 1 : 1;
  return Array.from({ length: count }, (_, e) => e * updateS);
}

/** A terminal at time t as the tracer takes it (position and velocity written into the given vectors). */
function terminalAt(
  t: MovingTerminal,
  timeS: number,
  position: Vec3,
  velocity: Vec3,
): { position: Vec3; velocity: Vec3; rotation: Float64Array; polarization?: Polarization } {
  t.motion.positionAt(timeS, position);
  t.motion.velocityAt(timeS, velocity);
  const orientation = t.motion.turns ? t.motion.orientationAt(timeS) : (t.orientation ?? {});
  return { position, velocity, rotation: rotationFromOrientation(orientation), ...(t.polarization !== undefined ? { polarization: t.polarization } : {}) };
}

/**
 * Trace the geometry updates of a `TracedTimeline` one at a time, awaiting `between()` before
 * each, so a caller can serve timers and signals (and stop, by throwing from `between`) while a
 * long run is set up. The result is what `new TracedTimeline(...).tracedEpochs()` gives for the
 * same arguments; pass it as the constructor's `traced` to build the timeline without tracing.
 * @param between awaited before each update with the updates traced so far and their count (default: one turn of the event loop)
 * @example
 * const scene = { walls: [{ vertices: [[0, 5], [40, 5]] }] };
 * const epochs = await traceEpochs(scene, { motion: new Motion([0, 0, 0]) }, { motion: new Motion([10, 0, 0], [1, 0, 0]) }, 28e9, 1, 0.5);
 * [epochs.epochTimesS, epochs.paths[0]!.map((p) => p.id)] // [[0, 0.5, 1], ['los', 'R:walls[0]']]
 */
export async function traceEpochs(
  scene: Scene,
  tx: MovingTerminal,
  rx: MovingTerminal,
  carrierHz: number,
  endS: number,
  updateS: number,
  options: TraceOptions = {},
  between: (done: number, total: number) => Promise<void> = () => new Promise((resolve) => setImmediate(resolve)),
): Promise<TracedEpochs> {
  const prepared = prepareScene(scene);
  const epochTimesS = epochTimesOf(tx, rx, endS, updateS);
  const pt: Vec3 = [0, 0, 0],
    vt: Vec3 = [0, 0, 0],
    pr: Vec3 = [0, 0, 0],
    vr: Vec3 = [0, 0, 0];
  const paths: TracedPath[][] = [];
  const warnings: string[] = [];
  for (const [e, t] of epochTimesS.entries()) {
    await between(e, epochTimesS.length);
    const r = traceScene(prepared, terminalAt(tx, t, pt, vt), terminalAt(rx, t, pr, vr), carrierHz, options);
    // The warnings as the constructor words and orders them (once each, first seen first).
    for (const w of r.warnings) {
      const text = `${w.path}: ${w.message}`;
      if (!warnings.includes(text)) warnings.push(text);
    }
    // Through a map, as the constructor keeps them: one path per id, in first-seen order.
    paths.push([...new Map(r.paths.map((p) => [p.id, p])).values()]);
  }
  return { epochTimesS, paths, warnings };
}
