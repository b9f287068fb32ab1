/**
 * The path tracer: line of sight, image-method specular reflections up to `maxReflectionOrder`
 * and single-bounce point scatterers, with Fresnel coefficients, polarisation, blocker losses,
 * optional gas absorption, delays, angles and geometric Doppler (docs/conventions.md).
 *
 * Image method: for every sequence of walls w1..wK (no wall twice in a row) the transmitter is
 * mirrored through w1, then w2, ... (images I1..IK); from the receiver the line towards IK meets
 * wK at the last reflection point, from there the line towards I(K-1) meets w(K-1), and so on.
 * A candidate is kept when every reflection point lies between its two neighbours' images
 * (strictly on the segment), inside its finite polygon (2-D: within the segment, at any height),
 * and no segment of the path crosses another wall. Walls reflect on both sides and are opaque.
 * Scenes of 32 walls or more skip, exactly, the sequences that cannot pass: walls outside the
 * beam of the sequence so far, walls hidden by one convex wall; the part of that search that
 * depends on the transmitter alone is kept per prepared scene and replayed while the
 * transmitter stays where it was (traceReflections).
 *
 * Amplitude of a path (one complex number, `amplitude`):
 *   LOS, reflections: lambda / (4 pi d) * F * 10^(-blockageDb / 20) * G * exp(-j k0 d);
 *   scatterers:       lambda / (4 pi d1 d2) * sqrt(rcs / (4 pi)) * F * 10^(-blockageDb / 20) * G * exp(-j k0 d),
 * so |amplitude|^2 is the free-space loss (ITU-R P.525) or the bistatic radar equation
 * lambda^2 rcs / ((4 pi)^3 d1^2 d2^2); d the unfolded length, F the polarisation factor
 * (`polarizationFactor`, Fresnel coefficients and polarisation mismatch together, see
 * polarization.ts and fresnel.ts), G = 10^(-gamma d / 20000) the gas absorption.
 * A point scatterer re-radiates like a small induced dipole: the scattered field is the incident
 * field projected perpendicular to the scattered direction (not renormalised: this keeps the
 * path reciprocal); `rcsM2` is the cross-section for a field parallel to that projection.
 * With the scene's `diffuse` key, the walls' tiles add first-order diffuse paths and the walls'
 * reflection coefficients are reduced by R = sqrt(1 - S^2) (diffuse.ts).
 */
import { SPEED_OF_LIGHT } from '../constants.js';
import { degFromVector, type AnglesDeg } from '../direction.js';
import { applyInverseRotation, identity, type Mat3 } from '../rotation.js';
import type { Vec3 } from '../vec3.js';
import { gasAmplitudeFactor } from './atmosphere.js';
import { segmentBlockageDb } from './blockage.js';
import type { Complex } from './complex.js';
import { diffractField, diffractionPoints, traceDiffractions, wedgeDiffraction, type DiffractionStep } from './diffraction.js';
import { sceneWedges } from './edges.js';
import type { DiffractionCoefficients } from './utd.js';
import { surfaceCoefficients, type FresnelCoefficients } from './fresnel.js';
import { slabCoefficients } from './slab.js';
import { diffuseTileFactor, reflectionReduction, rotateField, sceneDiffuseTiles, scaleCoefficients, traceDiffuse } from './diffuse.js';
import { directionBasis, polarizationVectorLocal, projectFieldPerpendicular, reflectField, terminalFieldVector, type Polarization } from './polarization.js';
import { launchReflections, launchSettingsProblems, type LaunchSettings } from './launch.js';
import { sceneOcclusion, wallBeam } from './occlusion.js';
import { MAX_REFLECTION_ORDER, PreparedScene, prepareScene, type Scene, type SceneProblem } from './scene.js';

/**
 * A terminal for the tracer: position (m), velocity (m/s), array rotation (local to global), polarisation.
 * @example const ue: TerminalState = { position: [20, 3, 1.5], velocity: [0, 1.4, 0], rotation: rotationFromOrientation({ yawDeg: 180 }) };
 */
export interface TerminalState {
  position: Readonly<Vec3>;
  /** Default [0, 0, 0]. */
  velocity?: Readonly<Vec3>;
  /** From rotationFromOrientation(); default identity. */
  rotation?: Mat3;
  /** Default "vertical". */
  polarization?: Polarization;
}

/**
 * Tracer settings; each defaults to the scene's key of the same name.
 * @example const strongest: TraceOptions = { maxReflectionOrder: 1, maxPaths: 4, dynamicRangeDb: 40 };
 */
export interface TraceOptions {
  lineOfSight?: boolean;
  maxReflectionOrder?: number;
  maxPaths?: number;
  dynamicRangeDb?: number;
  gasAttenuationDbPerKm?: number;
  /** Keep paths whose amplitude is exactly zero (orthogonal polarisations); default false, they are dropped. */
  keepNullPaths?: boolean;
  /** Edge diffraction (UTD), single and combined with one reflection when maxReflectionOrder >= 1; default the scene's `diffraction` (false). */
  diffraction?: boolean;
  /** "image" (every path) or "launch" (ray launching, launch.ts); default the scene's `method` ("image"). */
  method?: 'image' | 'launch';
  /** Ray launching settings, key by key over the scene's `launch`; with method "launch", `maxBounces` (default maxReflectionOrder) is the reflection order. */
  launch?: LaunchSettings;
}

/**
 * The scene object an interaction happens at: which list of the scene, and the index in it.
 * @example const third: SceneObjectRef = { kind: 'wall', index: 3 }; // scene.walls[3]
 */
export interface SceneObjectRef {
  /** "wall" (scene.walls), "scatterer" (scene.scatterers), "blocker" (scene.blockers) or "edge" (a diffracting edge of wall `index`, edges.ts). */
  kind: 'wall' | 'scatterer' | 'blocker' | 'edge';
  /** Edges, 2-D: the segment end (vertex 0 or 1) of wall `index`; the label is "walls[i].vertices[j]". */
  vertex?: number;
  /** Edges, 3-D: the polygon edge from vertex `edge` to the next one of wall `index`; the label is "walls[i].edges[j]". */
  edge?: number;
  /** Diffuse scattering: the tile of wall `index` (from 0, diffuse.ts); the label is "walls[i].tiles[j]". */
  tile?: number;
  /** Index into that list, from 0 (edges: the lowest-numbered wall holding the edge). */
  index: number;
}

/**
 * One interaction of a path, in order from the transmitter.
 * @example
 * const wall = { vertices: [[0, 5], [20, 5]] };
 * traceScene({ walls: [wall], lineOfSight: false }, { position: [0, 0, 0] }, { position: [10, 0, 0] }, 28e9).paths[0]!.interactions[0] // { type: 'reflection', object: { kind: 'wall', index: 0 }, point: [5, 5, 0], incidenceDeg: 45, coefficients: { te: [-0.5105, 0.0156], tm: [0.2604, -0.0160] } }
 */
export interface PathInteraction {
  type: 'reflection' | 'scatter' | 'diffraction' | 'transmission' | 'diffuse';
  /** The wall (reflections, and diffuse scattering with its `tile`), scatterer (scattering) or edge (diffraction: `kind: 'edge'`, see SceneObjectRef). */
  object: SceneObjectRef;
  /** Where it happens, metres (global). */
  point: Vec3;
  /** Reflections, transmissions and diffuse scattering: angle of incidence from the wall's normal, degrees. */
  incidenceDeg?: number;
  /** Reflections: the TE and TM coefficients used (convention of fresnel.ts; with `diffuse`, times R = sqrt(1 - S^2)); diffuse scattering: the wall's Fresnel coefficients; transmissions: the slab's TE and TM transmission coefficients (slab.ts). */
  coefficients?: FresnelCoefficients;
  /** Diffractions: the walls forming the wedge, face 0 then face n (the same wall for a free edge). */
  faces?: [SceneObjectRef, SceneObjectRef];
  /** Diffractions: the wedge's exterior angle n pi, degrees (360 for a free edge). */
  exteriorAngleDeg?: number;
  /** Diffractions: the UTD soft and hard coefficients used, sqrt(m), and the side of each boundary as traced (utd.ts). */
  diffraction?: DiffractionCoefficients;
}

/**
 * 2x2 complex polarimetric transfer [[tt, tp], [pt, pp]] (basis of polarization.ts: row = arrival component, column = departure component).
 * @example traceScene({}, { position: [0, 0, 0] }, { position: [10, 0, 0] }, 28e9).paths[0]!.polarimetric // [[[1, 0], [0, 0]], [[0, 0], [-1, 0]]]: direct path: no depolarisation, the horizontal basis vector at arrival (towards -x) points along -y
 */
export type PolarimetricMatrix = [[Complex, Complex], [Complex, Complex]];

/**
 * A traced path (all angles in degrees, docs/conventions.md; lengths m; times s).
 * @example
 * const [los]: TracedPath[] = traceScene({}, { position: [0, 0, 1] }, { position: [10, 10, 1] }, 28e9).paths;
 * [los!.id, los!.lengthM, los!.aoaDeg] // ['los', 14.142, [-135, 0]]
 */
export interface TracedPath {
  /** Stable id from the interaction list (pathIdOf): "los", "F:walls[2].tiles[7]", "R:walls[3]", "R:walls[1]>R:walls[4]", "S:scatterers[2]", "D:walls[0].vertices[1]", "R:walls[2]>D:walls[0].edges[1]". */
  id: string;
  /** `diffraction` for every path with an edge diffraction (alone or with a reflection); `transmission` for a direct path through walls with thicknessM (transmissions are named in the interactions of every kind); `diffuse` for a path through one wall tile (diffuse.ts). */
  kind: 'los' | 'reflection' | 'scatter' | 'diffraction' | 'transmission' | 'diffuse';
  interactions: PathInteraction[];
  /** Unfolded length, m. */
  lengthM: number;
  /** lengthM / c, s. */
  delayS: number;
  /** Global unit vector from the transmitter towards the first interaction (or the receiver). */
  departure: Vec3;
  /** Global unit vector from the receiver towards the last interaction (or the transmitter). */
  arrival: Vec3;
  aodDeg: AnglesDeg;
  aoaDeg: AnglesDeg;
  /** Departure in the transmit array's frame. */
  aodLocalDeg: AnglesDeg;
  /** Arrival in the receive array's frame. */
  aoaLocalDeg: AnglesDeg;
  /** Complex amplitude rho (see the module comment), including the carrier phase exp(-j k0 d). */
  amplitude: Complex;
  /** 20 log10 |amplitude| (-Infinity for orthogonal polarisations). */
  powerDb: number;
  /** arg(amplitude) in degrees, (-180, 180]. */
  phaseDeg: number;
  /** Signed geometric Doppler (dot(v_tx, departure) + dot(v_rx, arrival)) / lambda, Hz. */
  dopplerHz: number;
  /** Where the wave at the receiver appears to come from: tx (LOS), the image of tx (reflections), the scatterer. */
  virtualSource: Vec3;
  /** Likewise for the transmitter side: rx (LOS), the image of rx through the walls in reverse, the scatterer. */
  virtualSink: Vec3;
  /** Sum of blocker losses along the path, dB. */
  blockageDb: number;
  /** Fresnel and polarisation factor F = r^T T t (mismatch included). */
  polarizationFactor: Complex;
  /** Whole-path polarimetric transfer T from departure to arrival basis (no spreading, no carrier phase). */
  polarimetric: PolarimetricMatrix;
}

/**
 * Result of a trace: the paths (strongest first, pruned) and warnings (material ranges).
 * @example
 * const result: TraceResult = traceScene({ walls: [{ vertices: [[0, 5], [20, 5]], material: 'wood' }] }, { position: [0, 0, 0] }, { position: [10, 0, 0] }, 60e9);
 * result.paths.map((p) => p.id) // ['los', 'R:walls[0]']
 * result.warnings[0]!.message // 'material "wood" is validated for 1-40 GHz, got 60 GHz; the ITU-R P.2040 fit is used outside its range'
 */
export interface TraceResult {
  paths: TracedPath[];
  warnings: SceneProblem[];
}

const ZERO: Readonly<Vec3> = [0, 0, 0];

// The text forms below are what users see (path ids, `paths --json`, path tables): they are
// rendered from the structured records and never parsed back.
const LIST_NAME: Record<SceneObjectRef['kind'], string> = { wall: 'walls', scatterer: 'scatterers', blocker: 'blockers', edge: 'walls' };
const TYPE_LETTER: Record<PathInteraction['type'], string> = { reflection: 'R', scatter: 'S', diffraction: 'D', transmission: 'T', diffuse: 'F' };

/**
 * The scene object as the scene file names it: its list and index.
 * @example [sceneObjectLabel({ kind: 'scatterer', index: 2 }), sceneObjectLabel({ kind: 'edge', index: 1, vertex: 0 })] // ['scatterers[2]', 'walls[1].vertices[0]']
 */
export function sceneObjectLabel(ref: Readonly<SceneObjectRef>): string {
  const base = `${LIST_NAME[ref.kind]}[${ref.index}]`;
  if (ref.kind === 'wall' && ref.tile !== undefined) return `${base}.tiles[${ref.tile}]`;
  if (ref.kind !== 'edge') return base;
  return ref.vertex !== undefined ? `${base}.vertices[${ref.vertex}]` : `${base}.edges[${ref.edge ?? 0}]`;
}

/**
 * One interaction as it appears in a path id and a path table: R (reflection), S (scattering), D (diffraction), T (transmission) or F (a diffuse tile, "facet"), a colon, the object.
 * @example interactionLabel({ type: 'reflection', object: { kind: 'wall', index: 3 } }) // 'R:walls[3]'
 */
export function interactionLabel(interaction: Readonly<Pick<PathInteraction, 'type' | 'object'>>): string {
  return `${TYPE_LETTER[interaction.type]}:${sceneObjectLabel(interaction.object)}`;
}

/**
 * The stable id of a path from its interactions: "los" for none, else the interaction labels joined by ">".
 * @example pathIdOf([{ type: 'reflection', object: { kind: 'wall', index: 1 } }, { type: 'reflection', object: { kind: 'wall', index: 4 } }]) // 'R:walls[1]>R:walls[4]'
 */
export function pathIdOf(interactions: readonly Readonly<Pick<PathInteraction, 'type' | 'object'>>[]): string {
  return interactions.length === 0 ? 'los' : interactions.map(interactionLabel).join('>');
}

/**
 * Trace a scene between two terminals at a carrier frequency (Hz).
 * Throws RangeError for an invalid scene or terminals (the messages of validateScene).
 * @example traceScene({ walls: [] }, { position: [0, 0, 0] }, { position: [10, 0, 0] }, 28e9).paths[0].powerDb
 * // -81.391 (free-space loss 81.391 dB at 28 GHz over 10 m)
 */
export function traceScene(scene: Scene | PreparedScene, tx: TerminalState, rx: TerminalState, carrierHz: number, options: TraceOptions = {}): TraceResult {
  if (!Number.isFinite(carrierHz) || carrierHz <= 0) throw new RangeError(`traceScene(): carrierHz must be a finite number > 0, got ${carrierHz}`);
  const ps = scene instanceof PreparedScene ? scene : prepareScene(scene);
  const errors = ps.terminalProblems(tx.position, rx.position);
  if (errors.length > 0) throw new RangeError(`traceScene(): ${errors.map((p) => `${p.path}: ${p.message}`).join('; ')}`);
  const warnings: SceneProblem[] = [];
  ps.surfacesAt(carrierHz).forEach((r, i) => {
    if (r.warning !== undefined) warnings.push({ path: `scene.walls[${i}].material`, message: r.warning, severity: 'warning' });
  });
  const settings = resolveOptions(ps, options);
  const ctx = new TraceContext(ps, tx, rx, carrierHz, settings.gas);
  const raw: TracedPath[] = [];
  const t = tx.position,
    r = rx.position;
  if (settings.lineOfSight && !ps.segmentHitsWall(t[0], t[1], t[2], r[0], r[1], r[2], -1, -1)) {
    raw.push(ctx.build('los', [], []));
  }
  const reflection = (seq: number[], points: Vec3[]): void => {
    raw.push(ctx.build('reflection', seq, points));
  };
  if (settings.launch !== undefined) launchReflections(ps, t, r, settings.launch, reflection);
  else traceReflections(ps, t, r, settings.order, reflection);
  const scatterers = ps.scene.scatterers ?? [];
  scatterers.forEach((s, i) => {
    const p: Vec3 = [s.position[0]!, s.position[1]!, s.position[2] ?? 0];
    if (ps.segmentHitsWall(t[0], t[1], t[2], p[0], p[1], p[2], -1, -1)) return;
    if (ps.segmentHitsWall(p[0], p[1], p[2], r[0], r[1], r[2], -1, -1)) return;
    raw.push(ctx.build('scatter', [i], [p]));
  });
  traceDiffuse(ps, t, r, (w, tile, p) => {
    raw.push(ctx.build('diffuse', [w], [p], undefined, undefined, undefined, tile));
  });
  if (settings.diffraction) {
    traceDiffractions(ps, t, r, settings.order >= 1, (steps, points) => {
      raw.push(
        ctx.build(
          'diffraction',
          steps.map((s) => s.index),
          points,
          steps,
        ),
      );
    });
  }
  return { paths: prunePaths(raw, settings.maxPaths, settings.dynamicRangeDb, options.keepNullPaths ?? false), warnings };
}

/**
 * Recompute paths from their fixed interaction lists for new terminal positions and velocities
 * (between geometry updates): which paths exist and their Fresnel, polarisation and blocker factors stay as
 * traced at the last geometry update; lengths, delays, reflection points, angles, Doppler,
 * spreading, carrier phase and gas absorption follow the current positions. The reflection points
 * are found from the images of the new transmitter position through the same walls (without the
 * validity tests). Paths keep their order and ids (no re-sorting or pruning).
 * @example
 * const ps = prepareScene({ walls: [{ vertices: [[0, 5], [20, 5]] }] }), tx: TerminalState = { position: [0, 0, 0] };
 * const { paths } = traceScene(ps, tx, { position: [10, 0, 0] }, 28e9); // 'los' 10 m, 'R:walls[0]' 14.142 m
 * retracePaths(ps, paths, tx, { position: [10.1, 0, 0] }, 28e9).map((p) => p.lengthM) // [10.1, 14.213]
 */
export function retracePaths(
  ps: PreparedScene,
  paths: readonly TracedPath[],
  tx: TerminalState,
  rx: TerminalState,
  carrierHz: number,
  options: TraceOptions = {},
): TracedPath[] {
  if (!Number.isFinite(carrierHz) || carrierHz <= 0) throw new RangeError(`retracePaths(): carrierHz must be a finite number > 0, got ${carrierHz}`);
  const settings = resolveOptions(ps, options);
  const ctx = new TraceContext(ps, tx, rx, carrierHz, settings.gas);
  return paths.map((p) => ctx.refresh(p));
}

interface Settings {
  lineOfSight: boolean;
  order: number;
  maxPaths: number;
  dynamicRangeDb: number;
  gas: number;
  diffraction: boolean;
  /** Set for method "launch" (maxBounces resolved). */
  launch?: LaunchSettings;
}

function resolveOptions(ps: PreparedScene, o: TraceOptions): Settings {
  const s = ps.scene;
  const order = o.maxReflectionOrder ?? ps.maxReflectionOrder;
  if (!Number.isInteger(order) || order < 0 || order > MAX_REFLECTION_ORDER)
    throw new RangeError(`traceScene(): maxReflectionOrder must be an integer from 0 to ${MAX_REFLECTION_ORDER}, got ${order}`);
  const maxPaths = o.maxPaths ?? s.maxPaths ?? Infinity;
  if (!(maxPaths >= 1)) throw new RangeError(`traceScene(): maxPaths must be >= 1, got ${maxPaths}`);
  const dr = o.dynamicRangeDb ?? s.dynamicRangeDb ?? Infinity;
  if (!(dr > 0)) throw new RangeError(`traceScene(): dynamicRangeDb must be > 0, got ${dr}`);
  const gas = o.gasAttenuationDbPerKm ?? s.gasAttenuationDbPerKm ?? 0;
  if (!Number.isFinite(gas) || gas < 0) throw new RangeError(`traceScene(): gasAttenuationDbPerKm must be a finite number >= 0, got ${gas}`);
  const out: Settings = {
    lineOfSight: o.lineOfSight ?? ps.lineOfSight,
    order,
    maxPaths,
    dynamicRangeDb: dr,
    gas,
    diffraction: o.diffraction ?? s.diffraction ?? false,
  };
  const method = o.method ?? s.method ?? 'image';
  if (method === 'launch') {
    const launch: LaunchSettings = { ...s.launch, ...o.launch };
    if (o.launch?.rays !== undefined && o.launch.angularSpacingDeg === undefined) delete launch.angularSpacingDeg;
    if (o.launch?.angularSpacingDeg !== undefined && o.launch.rays === undefined) delete launch.rays;
    const problems = launchSettingsProblems(launch);
    if (problems.length > 0) throw new RangeError(`traceScene(): launch.${problems[0]![0]} ${problems[0]![1]}`);
    launch.maxBounces ??= order;
    out.launch = launch;
  } else if (method !== 'image') throw new RangeError(`traceScene(): method must be "image" or "launch", got ${JSON.stringify(method)}`);
  return out;
}

/**
 * Sort by power (strongest first; ties by id, so the order is stable), drop paths more than
 * `dynamicRangeDb` below the strongest, keep at most `maxPaths`; paths of zero amplitude
 * (powerDb -Infinity) are dropped unless `keepNullPaths`.
 * @example
 * const { paths } = traceScene({ walls: [{ vertices: [[0, 5], [20, 5]] }] }, { position: [0, 0, 0] }, { position: [10, 0, 0] }, 28e9);
 * [prunePaths(paths).length, prunePaths(paths, Infinity, 6).map((p) => p.id)] // [2, ['los']]: the reflection is 8.846 dB below the direct path
 */
export function prunePaths(paths: TracedPath[], maxPaths = Infinity, dynamicRangeDb = Infinity, keepNullPaths = false): TracedPath[] {
  const sorted = [...paths].sort((a, b) => b.powerDb - a.powerDb || (a.id < b.id ? -1 : a.id > b.id ? 1 : 0));
  if (sorted.length === 0) return sorted;
  const floor = sorted[0]!.powerDb - dynamicRangeDb;
  const kept = sorted.filter((p) => (p.powerDb >= floor && p.powerDb > -Infinity) || (keepNullPaths && p.powerDb === -Infinity && dynamicRangeDb === Infinity));
  return kept.length > maxPaths ? kept.slice(0, maxPaths) : kept;
}

/**
 * Enumerate valid specular reflection paths of order 1..maxOrder by the image method; calls
 * `emit(wallSequence, reflectionPoints)` for each (arrays are fresh copies; the order of the
 * calls is not specified: traceScene sorts the paths). The inner loops (images, back-tracking,
 * polygon and obstruction tests) do not allocate. With 32 walls or more and maxOrder >= 2, the
 * transmitter's image tree is recorded and replayed by the next call with the same prepared
 * scene, order and transmitter position (a moving receiver).
 * @example traceReflections(prepareScene({ walls: [{ vertices: [[0, -5], [0, 5]] }] }), [1, 0, 0], [2, 0, 0], 1, (w, p) => console.log(w, p))
 * // [0] [[0, 0, 0]]
 */
export function traceReflections(
  ps: PreparedScene,
  tx: Readonly<Vec3>,
  rx: Readonly<Vec3>,
  maxOrder: number,
  emit: (walls: number[], points: Vec3[]) => void,
): void {
  const W = ps.wallCount;
  if (maxOrder < 1 || W === 0) return;
  const pl = ps.planes;
  const images = new Float64Array(3 * (maxOrder + 1));
  const pts = new Float64Array(3 * maxOrder);
  const seq = new Int32Array(maxOrder);
  images[0] = tx[0];
  images[1] = tx[1];
  images[2] = tx[2];
  const rx0 = rx[0],
    rx1 = rx[1],
    rx2 = rx[2];
  const tol = 1e-9;

  const tryPath = (K: number): void => {
    let qx = rx0,
      qy = rx1,
      qz = rx2; // current target
    for (let k = K; k >= 1; k--) {
      const w = seq[k - 1]!,
        o = 4 * w;
      const nx = pl[o]!,
        ny = pl[o + 1]!,
        nz = pl[o + 2]!,
        d = pl[o + 3]!;
      const ix = images[3 * k]!,
        iy = images[3 * k + 1]!,
        iz = images[3 * k + 2]!;
      const fq = nx * qx + ny * qy + nz * qz - d,
        fi = nx * ix + ny * iy + nz * iz - d;
      if (!((fq > 0 && fi < 0) || (fq < 0 && fi > 0))) return; // target and image must straddle the wall
      const s = fq / (fq - fi);
      const px = qx + s * (ix - qx),
        py = qy + s * (iy - qy),
        pz = qz + s * (iz - qz);
      if (!ps.insideWall(w, px, py, pz, tol)) return;
      pts[3 * (k - 1)] = px;
      pts[3 * (k - 1) + 1] = py;
      pts[3 * (k - 1) + 2] = pz;
      qx = px;
      qy = py;
      qz = pz;
    }
    // Every segment free of other walls: tx -> P1, P1 -> P2, ..., PK -> rx.
    let ax = images[0]!,
      ay = images[1]!,
      az = images[2]!,
      prev = -1;
    for (let k = 0; k <= K; k++) {
      const next = k < K ? seq[k]! : -1;
      const bx = k < K ? pts[3 * k]! : rx0,
        by = k < K ? pts[3 * k + 1]! : rx1,
        bz = k < K ? pts[3 * k + 2]! : rx2;
      if (ps.segmentHitsWall(ax, ay, az, bx, by, bz, prev, next)) return;
      ax = bx;
      ay = by;
      az = bz;
      prev = next;
    }
    const walls: number[] = [],
      points: Vec3[] = [];
    for (let k = 0; k < K; k++) {
      walls.push(seq[k]!);
      points.push([pts[3 * k]!, pts[3 * k + 1]!, pts[3 * k + 2]!]);
    }
    emit(walls, points);
  };

  // Beam pruning (exact: it only skips sequences tryPath would refuse). Every valid path's
  // reflection point P(k+1) lies in beam k: beyond wall w(k) as seen from image I(k), inside the
  // cone from I(k) through w(k)'s bounding rectangle, and (mirrored through w(k)) in beam k - 1,
  // since P(k+1) is on the ray from I(k) through P(k). A wall wholly outside one of the beam's
  // half-spaces cannot hold P(k+1), so neither it nor any sequence continuing from it is tried.
  // Small scenes: the exhaustive enumeration is cheaper than building beams.
  const prune = W >= PRUNE_MIN_WALLS;
  const perLevel = ps.is2D ? 3 : 1 + Math.max(4, ps.maxWallVertices);
  const slot = 4 * perLevel * maxOrder;
  const beams = new Float64Array(prune ? slot * (maxOrder + 1) : 0);
  const beamCount = new Int32Array(maxOrder + 1);
  const cand = new Int32Array(prune ? W * (maxOrder + 1) : W);
  for (let w = 0; w < W; w++) cand[w] = w;
  const margin = 100 * ps.padM; // conservative: reflection points may sit 1e-9 m outside a polygon
  const grow = 1e-6 * (ps.padM / 1e-8); // the cone's polygon widened by 1e-6 m per metre of scene size
  const verts = ps.vertices,
    vStart = ps.vertexStart;
  /** Beam of depth k + 1: through wall w from image I(k + 1), source side sign s (wallBeam, occlusion.ts). */
  const makeBeam = (k: number, w: number, s: number): void => {
    beamCount[k + 1] = wallBeam(ps, beams, slot * (k + 1), slot * k, beamCount[k]!, w, s, images[3 * k + 3]!, images[3 * k + 4]!, images[3 * k + 5]!, grow);
  };

  /** True when some vertex of wall w is inside (within margin) every half-space of beam k. */
  const wallMeetsBeam = (k: number, w: number): boolean => {
    const base = slot * k;
    const v0 = vStart[w]!,
      v1 = vStart[w + 1]!;
    for (let q = 0; q < beamCount[k]!; q++) {
      const a = base + 4 * q;
      const nx = beams[a]!,
        ny = beams[a + 1]!,
        nz = beams[a + 2]!,
        d = beams[a + 3]! - margin;
      let inside = false;
      for (let v = v0; v < v1; v++) {
        if (nx * verts[3 * v]! + ny * verts[3 * v + 1]! + nz * verts[3 * v + 2]! >= d) {
          inside = true;
          break;
        }
      }
      if (!inside) return false;
    }
    return true;
  };

  // Occlusion pruning (3-D, exact in the same sense): a first wall hidden from the transmitter, a
  // wall hidden from the previous one, or a last wall hidden from the receiver, by one convex wall.
  const occ = sceneOcclusion(ps);
  // 0 unknown, 1 visible, 2 hidden; kept by the Occlusion per point (a static transmitter's between traces)
  const txSeen = occ !== undefined ? occ.seenFrom(tx[0], tx[1], tx[2]) : undefined,
    rxSeen = occ !== undefined ? occ.seenFrom(rx[0], rx[1], rx[2]) : undefined;
  const hiddenFrom = (seen: Int8Array | undefined, w: number, p: Readonly<Vec3>): boolean => {
    if (occ === undefined || seen === undefined) return false;
    if (seen[w] === 0) seen[w] = occ.wallHiddenFromPoint(w, p[0], p[1], p[2]) ? 2 : 1;
    return seen[w] === 2;
  };

  // The last wall of a sequence must be visible from the receiver: with occlusion, the leaves are
  // drawn from that list (built once per trace) instead of the beam query.
  let rxList: Int32Array | undefined,
    rxCount = 0;
  const leafList = (): Int32Array => {
    if (rxList === undefined) {
      rxList = new Int32Array(W);
      for (let w = 0; w < W; w++) if (!hiddenFrom(rxSeen, w, rx)) rxList[rxCount++] = w;
    }
    return rxList;
  };

  // The image tree: every tx-only decision of the descent below (the candidate walls of each
  // beam, the beam, pair and transmitter-visibility tests, the images) depends on the transmitter
  // alone, so the surviving nodes are recorded in preorder and replayed while the transmitter
  // stays where it was (a static transmitter and a moving receiver); only the receiver's tests
  // and tryPath run again. The replay recomputes each image from its parent with the same
  // operations, so its paths are bit-identical to a fresh descent.
  const cacheable = prune && maxOrder >= 2;
  const cached = cacheable ? imageTreeCache.get(ps) : undefined;
  if (cached !== undefined && cached.order === maxOrder && cached.tx[0] === tx[0] && cached.tx[1] === tx[1] && cached.tx[2] === tx[2]) {
    // tryPath's first test (receiver and last image on either side of the last wall) done here
    // with the same operations, so that most candidates cost no call
    const frx = cached.rxPlane;
    for (let w = 0; w < W; w++) frx[w] = pl[4 * w]! * rx0 + pl[4 * w + 1]! * rx1 + pl[4 * w + 2]! * rx2 - pl[4 * w + 3]!;
    replayImageTree(cached, ps, images, seq, (w) => hiddenFrom(rxSeen, w, rx), tryPath);
    return;
  }
  let recWalls = cacheable ? new Int32Array(1024) : undefined,
    recDepth = cacheable ? new Uint8Array(1024) : undefined,
    recCount = 0;
  const record = (w: number, depth: number): void => {
    if (recWalls === undefined || recDepth === undefined) return;
    if (recCount === recWalls.length) {
      if (recCount >= IMAGE_TREE_MAX_NODES) {
        recWalls = recDepth = undefined; // too large to keep: this transmitter is traced afresh each time
        return;
      }
      const w2 = new Int32Array(2 * recCount),
        d2 = new Uint8Array(2 * recCount);
      w2.set(recWalls);
      d2.set(recDepth);
      recWalls = w2;
      recDepth = d2;
    }
    recWalls[recCount] = w;
    recDepth[recCount++] = depth;
  };

  const descend = (depth: number): void => {
    const px = images[3 * depth]!,
      py = images[3 * depth + 1]!,
      pz = images[3 * depth + 2]!;
    const leaves = depth + 1 === maxOrder;
    let list: Int32Array = cand,
      base = W * depth,
      n = W;
    // A tree that is kept takes its leaves from the beam too, tested once for the beam and the
    // pair (the replay then tries fewer); else they come from the receiver's list.
    const fromRxList = leaves && occ !== undefined && !cacheable;
    if (!prune)
      base = 0; // every wall, as listed in slot 0
    else if (fromRxList) {
      list = leafList();
      base = 0;
      n = rxCount;
    } else if (depth > 0) n = ps.bvh.collectInHalfSpaces(beams, beamCount[depth]!, margin, cand, base, (slot * depth) / 4);
    for (let i = 0; i < n; i++) {
      const w = list[base + i]!;
      if (depth > 0) {
        if (seq[depth - 1] === w) continue;
        // leaves: tryPath's own first test is cheaper than the beam and pair tests
        if (prune && (!leaves || cacheable) && (!wallMeetsBeam(depth, w) || (occ !== undefined && occ.wallHiddenFromWall(w, seq[depth - 1]!)))) continue;
      } else if (hiddenFrom(txSeen, w, tx)) continue;
      const o = 4 * w;
      const nx = pl[o]!,
        ny = pl[o + 1]!,
        nz = pl[o + 2]!;
      const f = nx * px + ny * py + nz * pz - pl[o + 3]!;
      if (f === 0) continue; // the source lies in the plane: no image
      record(w, depth);
      images[3 * depth + 3] = px - 2 * f * nx;
      images[3 * depth + 4] = py - 2 * f * ny;
      images[3 * depth + 5] = pz - 2 * f * nz;
      seq[depth] = w;
      if (!hiddenFrom(rxSeen, w, rx)) tryPath(depth + 1);
      if (!leaves) {
        if (prune) makeBeam(depth, w, f > 0 ? 1 : -1);
        descend(depth + 1);
      }
    }
  };
  descend(0);
  if (recWalls !== undefined && recDepth !== undefined)
    imageTreeCache.set(ps, {
      tx: [tx[0], tx[1], tx[2]],
      order: maxOrder,
      walls: recWalls.slice(0, recCount),
      depth: recDepth.slice(0, recCount),
      rxPlane: new Float64Array(W),
    });
}

/** The recorded image tree of one transmitter position (traceReflections). */
interface ImageTree {
  tx: Vec3;
  order: number;
  /** Nodes in preorder: the wall and the depth (0 for a first reflection) of each. */
  walls: Int32Array;
  depth: Uint8Array;
  /** Scratch of the replay: each wall's plane function at the receiver. */
  rxPlane: Float64Array;
}

/** Most nodes kept in an image tree (5 bytes each). */
const IMAGE_TREE_MAX_NODES = 1 << 24;
/** One tree per scene: the last transmitter position traced at order >= 2 with pruning. */
const imageTreeCache = new WeakMap<PreparedScene, ImageTree>();

/**
 * The descent of traceReflections replayed from its recorded tree: per node the image from its
 * parent's, the receiver's tests and tryPath.
 */
function replayImageTree(
  tree: ImageTree,
  ps: PreparedScene,
  images: Float64Array,
  seq: Int32Array,
  hiddenFromRx: (w: number) => boolean,
  tryPath: (K: number) => void,
): void {
  const pl = ps.planes,
    walls = tree.walls,
    depths = tree.depth,
    frx = tree.rxPlane;
  for (let i = 0; i < walls.length; i++) {
    const w = walls[i]!,
      depth = depths[i]!;
    const px = images[3 * depth]!,
      py = images[3 * depth + 1]!,
      pz = images[3 * depth + 2]!;
    const o = 4 * w;
    const nx = pl[o]!,
      ny = pl[o + 1]!,
      nz = pl[o + 2]!;
    const f = nx * px + ny * py + nz * pz - pl[o + 3]!;
    const ix = px - 2 * f * nx,
      iy = py - 2 * f * ny,
      iz = pz - 2 * f * nz;
    images[3 * depth + 3] = ix;
    images[3 * depth + 4] = iy;
    images[3 * depth + 5] = iz;
    seq[depth] = w;
    const fq = frx[w]!,
      fi = nx * ix + ny * iy + nz * iz - pl[o + 3]!;
    if (((fq > 0 && fi < 0) || (fq < 0 && fi > 0)) && !hiddenFromRx(w)) tryPath(depth + 1);
  }
}

/** Fewest walls for beam pruning (measured: below it the 20-wall room traces faster without). */
const PRUNE_MIN_WALLS = 32;

/** Per-trace constants and the construction of path objects (allocation is fine here: valid paths only). */
class TraceContext {
  private readonly lambda: number;
  private readonly txPol: Vec3;
  private readonly rxPol: Vec3;
  private readonly txRot: Mat3;
  private readonly rxRot: Mat3;
  private readonly txVel: Readonly<Vec3>;
  private readonly rxVel: Readonly<Vec3>;

  constructor(
    private readonly ps: PreparedScene,
    private readonly tx: TerminalState,
    private readonly rx: TerminalState,
    private readonly carrierHz: number,
    private readonly gas: number,
  ) {
    this.lambda = SPEED_OF_LIGHT / carrierHz;
    this.txPol = polarizationVectorLocal(tx.polarization ?? 'vertical');
    this.rxPol = polarizationVectorLocal(rx.polarization ?? 'vertical');
    this.txRot = tx.rotation ?? identity();
    this.rxRot = rx.rotation ?? identity();
    this.txVel = tx.velocity ?? ZERO;
    this.rxVel = rx.velocity ?? ZERO;
  }

  /** A full path from its interaction list (wall, scatterer or wedge indices, with `steps` for diffracted paths) and interaction points. */
  build(
    kind: TracedPath['kind'],
    objects: number[],
    points: Vec3[],
    steps?: readonly DiffractionStep[],
    sides?: readonly number[],
    throughWalls?: readonly (readonly number[])[],
    tile?: number,
  ): TracedPath {
    const ps = this.ps;
    const main: Vec3[] = [vec(this.tx.position), ...points, vec(this.rx.position)];
    const mainTypes: PathInteraction['type'][] = objects.map((_, k) =>
      steps !== undefined ? steps[k]!.type : kind === 'scatter' || kind === 'diffuse' ? kind : 'reflection',
    );
    // Walls with thicknessM crossed by a segment become transmission interactions on it
    // (`throughWalls` per segment when retracing: the same walls, found by their planes).
    let chain = main,
      types = mainTypes,
      objs = objects;
    if (ps.hasTransmission) {
      chain = [main[0]!];
      types = [];
      objs = [];
      for (let k = 0; k + 1 < main.length; k++) {
        const a = main[k]!,
          b = main[k + 1]!;
        const onWall = (t: PathInteraction['type'] | undefined): boolean => t === 'reflection' || t === 'diffuse';
        const skipA = k > 0 && onWall(mainTypes[k - 1]) ? objects[k - 1]! : -1,
          skipB = k < objects.length && onWall(mainTypes[k]) ? objects[k]! : -1;
        for (const [w, t] of ps.segmentTransmissions(a[0], a[1], a[2], b[0], b[1], b[2], skipA, skipB, throughWalls?.[k])) {
          chain.push([a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1]), a[2] + t * (b[2] - a[2])]);
          types.push('transmission');
          objs.push(w);
        }
        if (k < objects.length) {
          chain.push(b);
          types.push(mainTypes[k]!);
          objs.push(objects[k]!);
        }
      }
      chain.push(main[main.length - 1]!);
      if (kind === 'los' && types.length > 0) kind = 'transmission';
    }
    const surfaces = ps.surfacesAt(this.carrierHz);
    const wedges = kind === 'diffraction' ? sceneWedges(ps) : undefined;
    let diffractionAt = -1,
      lengthBefore = 0,
      lengthAfter = 0;
    if (steps !== undefined) {
      diffractionAt = types.indexOf('diffraction') + 1;
      for (let k = 0; k + 1 < chain.length; k++) {
        if (k < diffractionAt) lengthBefore += dist(chain[k]!, chain[k + 1]!);
        else lengthAfter += dist(chain[k]!, chain[k + 1]!);
      }
    }
    const interactions: PathInteraction[] = [];
    // Propagate the departure basis vectors through the interactions.
    const dep = unit(chain[0]!, chain[1]!);
    const basis = directionBasis(new Float64Array(6), dep);
    const eT = Float64Array.of(basis[0]!, basis[1]!, basis[2]!, 0, 0, 0);
    const eP = Float64Array.of(basis[3]!, basis[4]!, basis[5]!, 0, 0, 0);
    for (let k = 1; k < chain.length - 1; k++) {
      const kIn = unit(chain[k - 1]!, chain[k]!),
        kOut = unit(chain[k]!, chain[k + 1]!);
      const o = objs[k - 1]!,
        type = types[k - 1]!;
      if (type === 'transmission') {
        const pl = ps.planes;
        const n: Vec3 = [pl[4 * o]!, pl[4 * o + 1]!, pl[4 * o + 2]!];
        const cosT = Math.min(1, Math.abs(kIn[0] * n[0] + kIn[1] * n[1] + kIn[2] * n[2]));
        const surface = surfaces[o]!.surface;
        const eta: Complex = surface.kind === 'dielectric' ? surface.eta : [1, 0];
        const c = slabCoefficients(eta, ps.scene.walls![o]!.thicknessM!, this.lambda, cosT).transmission;
        reflectField(eT, eT, kIn, kIn, n, c); // the wave leaves the slab along its incident direction
        reflectField(eP, eP, kIn, kIn, n, c);
        interactions.push({
          type: 'transmission',
          object: { kind: 'wall', index: o },
          point: chain[k]!,
          incidenceDeg: (Math.acos(cosT) * 180) / Math.PI,
          coefficients: c,
        });
      } else if (k === diffractionAt && wedges !== undefined) {
        const d = wedgeDiffraction(ps, o, kIn, kOut, lengthBefore, lengthAfter, (2 * Math.PI) / this.lambda, this.carrierHz, sides);
        diffractField(eT, eT, d, d.betaHatIn, d.phiHatIn, d.betaHatOut, d.phiHatOut);
        diffractField(eP, eP, d, d.betaHatIn, d.phiHatIn, d.betaHatOut, d.phiHatOut);
        const f = wedges.faces;
        const object: SceneObjectRef = ps.is2D
          ? { kind: 'edge', index: wedges.wall[o]!, vertex: wedges.part[o]! }
          : { kind: 'edge', index: wedges.wall[o]!, edge: wedges.part[o]! };
        interactions.push({
          type: 'diffraction',
          object,
          point: chain[k]!,
          faces: [
            { kind: 'wall', index: f[2 * o]! },
            { kind: 'wall', index: f[2 * o + 1]! },
          ],
          exteriorAngleDeg: d.n * 180,
          diffraction: { soft: d.soft, hard: d.hard, sides: sides !== undefined ? [sides[0]!, sides[1]!, sides[2]!, sides[3]!] : d.sides },
        });
      } else if (type === 'reflection') {
        const pl = ps.planes;
        const n: Vec3 = [pl[4 * o]!, pl[4 * o + 1]!, pl[4 * o + 2]!];
        const cosT = Math.min(1, Math.abs(kIn[0] * n[0] + kIn[1] * n[1] + kIn[2] * n[2]));
        const reduce = reflectionReduction(ps, o);
        const c = reduce === 1 ? surfaceCoefficients(surfaces[o]!.surface, cosT) : scaleCoefficients(surfaceCoefficients(surfaces[o]!.surface, cosT), reduce);
        reflectField(eT, eT, kIn, kOut, n, c);
        reflectField(eP, eP, kIn, kOut, n, c);
        interactions.push({
          type: 'reflection',
          object: { kind: 'wall', index: o },
          point: chain[k]!,
          incidenceDeg: (Math.acos(cosT) * 180) / Math.PI,
          coefficients: c,
        });
      } else if (type === 'diffuse') {
        // reflected towards the specular direction, then turned onto the scattered one (diffuse.ts)
        const pl = ps.planes;
        const n: Vec3 = [pl[4 * o]!, pl[4 * o + 1]!, pl[4 * o + 2]!];
        const dot = kIn[0] * n[0] + kIn[1] * n[1] + kIn[2] * n[2];
        const cosT = Math.min(1, Math.abs(dot));
        const kSpec: Vec3 = [kIn[0] - 2 * dot * n[0], kIn[1] - 2 * dot * n[1], kIn[2] - 2 * dot * n[2]];
        const c = surfaceCoefficients(surfaces[o]!.surface, cosT);
        rotateField(reflectField(eT, eT, kIn, kSpec, n, c), kSpec, kOut);
        rotateField(reflectField(eP, eP, kIn, kSpec, n, c), kSpec, kOut);
        interactions.push({
          type: 'diffuse',
          object: { kind: 'wall', index: o, tile: tile ?? 0 },
          point: chain[k]!,
          incidenceDeg: (Math.acos(cosT) * 180) / Math.PI,
          coefficients: c,
        });
      } else {
        projectFieldPerpendicular(eT, eT, kOut);
        projectFieldPerpendicular(eP, eP, kOut);
        interactions.push({ type: 'scatter', object: { kind: 'scatterer', index: o }, point: chain[k]! });
      }
    }
    const arr = unit(chain[chain.length - 1]!, chain[chain.length - 2]!);
    const ab = directionBasis(new Float64Array(6), arr);
    const T: PolarimetricMatrix = [
      [cdot(eT, ab, 0), cdot(eP, ab, 0)],
      [cdot(eT, ab, 3), cdot(eP, ab, 3)],
    ];
    const ft = terminalFieldVector([0, 0, 0], this.txPol, this.txRot, dep);
    const fr = terminalFieldVector([0, 0, 0], this.rxPol, this.rxRot, arr);
    const t0 = ft[0] * basis[0]! + ft[1] * basis[1]! + ft[2] * basis[2]!,
      t1 = ft[0] * basis[3]! + ft[1] * basis[4]! + ft[2] * basis[5]!;
    const r0 = fr[0] * ab[0]! + fr[1] * ab[1]! + fr[2] * ab[2]!,
      r1 = fr[0] * ab[3]! + fr[1] * ab[4]! + fr[2] * ab[5]!;
    const F: Complex = [
      r0 * (T[0][0][0] * t0 + T[0][1][0] * t1) + r1 * (T[1][0][0] * t0 + T[1][1][0] * t1),
      r0 * (T[0][0][1] * t0 + T[0][1][1] * t1) + r1 * (T[1][0][1] * t0 + T[1][1][1] * t1),
    ];
    let blockageDb = 0;
    for (let k = 0; k + 1 < chain.length; k++) {
      const a = chain[k]!,
        b = chain[k + 1]!;
      blockageDb += segmentBlockageDb(ps, a[0], a[1], a[2], b[0], b[1], b[2], this.lambda);
    }
    const path: TracedPath = {
      id: pathIdOf(interactions),
      kind,
      interactions,
      lengthM: 0,
      delayS: 0,
      departure: dep,
      arrival: arr,
      aodDeg: [0, 0],
      aoaDeg: [0, 0],
      aodLocalDeg: [0, 0],
      aoaLocalDeg: [0, 0],
      amplitude: [0, 0],
      powerDb: 0,
      phaseDeg: 0,
      dopplerHz: 0,
      virtualSource: [0, 0, 0],
      virtualSink: [0, 0, 0],
      blockageDb,
      polarizationFactor: F,
      polarimetric: T,
    };
    this.fillKinematics(path, chain);
    return path;
  }

  /** The path at the context's terminal positions, keeping its interaction factors. */
  refresh(p: TracedPath): TracedPath {
    const ps = this.ps;
    const tx = vec(this.tx.position),
      rx = vec(this.rx.position);
    if (p.kind === 'diffraction') {
      // The UTD coefficient changes quickly near shadow and reflection boundaries: rebuild it
      // at the new positions, each boundary term held on the side it had when traced (utd.ts),
      // as the direct and reflected paths keep their traced set (the blocker loss stays as traced).
      const steps = diffractionSteps(ps, p);
      const sides = p.interactions.find((it) => it.type === 'diffraction')?.diffraction?.sides;
      const out = this.build(
        'diffraction',
        steps.map((s) => s.index),
        diffractionPoints(ps, steps, tx, rx),
        steps,
        sides,
        transmissionsPerSegment(p),
      );
      if (out.blockageDb !== p.blockageDb) {
        out.blockageDb = p.blockageDb;
        this.fillKinematics(out, [tx, ...out.interactions.map((it) => it.point), rx]);
      }
      return out;
    }
    let points: Vec3[];
    const mainInteractions = p.interactions.filter((it) => it.type !== 'transmission');
    if (p.kind === 'reflection') {
      const walls = mainInteractions.map(wallIndex);
      const images: Vec3[] = [tx];
      for (const w of walls) images.push(mirror(ps, w, images[images.length - 1]!));
      points = new Array<Vec3>(walls.length);
      let q = rx;
      for (let k = walls.length; k >= 1; k--) {
        const w = walls[k - 1]!,
          I = images[k]!;
        const fq = planeValue(ps, w, q),
          fi = planeValue(ps, w, I);
        const s = fq / (fq - fi);
        q = [q[0] + s * (I[0] - q[0]), q[1] + s * (I[1] - q[1]), q[2] + s * (I[2] - q[2])];
        points[k - 1] = q;
      }
    } else {
      points = mainInteractions.map((it) => vec(it.point));
    }
    if (mainInteractions.length !== p.interactions.length) {
      // put the transmission points back on their segments, in their order
      const perSegment = transmissionsPerSegment(p);
      const main = [tx, ...points, rx];
      points = [];
      for (let k = 0; k + 1 < main.length; k++) {
        const a = main[k]!,
          b = main[k + 1]!;
        for (const [, t] of ps.segmentTransmissions(a[0], a[1], a[2], b[0], b[1], b[2], -1, -1, perSegment[k]))
          points.push([a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1]), a[2] + t * (b[2] - a[2])]);
        if (k + 2 < main.length) points.push(b);
      }
    }
    const chain = [tx, ...points, rx];
    const out: TracedPath = {
      ...p,
      interactions: p.interactions.map((it, k) => ({ ...it, point: points[k]! })),
      departure: unit(chain[0]!, chain[1]!),
      arrival: unit(chain[chain.length - 1]!, chain[chain.length - 2]!),
    };
    this.fillKinematics(out, chain);
    return out;
  }

  /** Length, delay, angles, Doppler, virtual ends and amplitude from the chain of points. */
  private fillKinematics(p: TracedPath, chain: Vec3[]): void {
    const ps = this.ps;
    let length = 0;
    for (let k = 0; k + 1 < chain.length; k++) length += dist(chain[k]!, chain[k + 1]!);
    p.lengthM = length;
    p.delayS = length / SPEED_OF_LIGHT;
    p.aodDeg = degFromVector(p.departure);
    p.aoaDeg = degFromVector(p.arrival);
    p.aodLocalDeg = degFromVector(applyInverseRotation([0, 0, 0], this.txRot, p.departure));
    p.aoaLocalDeg = degFromVector(applyInverseRotation([0, 0, 0], this.rxRot, p.arrival));
    const v1 = this.txVel,
      v2 = this.rxVel;
    p.dopplerHz =
      (v1[0] * p.departure[0] + v1[1] * p.departure[1] + v1[2] * p.departure[2] + v2[0] * p.arrival[0] + v2[1] * p.arrival[1] + v2[2] * p.arrival[2]) /
      this.lambda;
    let spreading: number;
    if (p.kind === 'scatter') {
      const at = p.interactions.findIndex((it) => it.type === 'scatter');
      const o = objectIndex(p.interactions[at]!, 'scatterer');
      const rcs = ps.scene.scatterers![o]!.rcsM2;
      let d1 = 0;
      for (let k = 0; k <= at; k++) d1 += dist(chain[k]!, chain[k + 1]!);
      const d2 = length - d1;
      spreading = (this.lambda / (4 * Math.PI * d1 * d2)) * Math.sqrt(rcs / (4 * Math.PI));
      p.virtualSource = vec(chain[at + 1]!);
      p.virtualSink = vec(chain[at + 1]!);
    } else if (p.kind === 'diffuse') {
      // lambda / (4 pi r_i r_s) * S sqrt(A cos(theta_i) D), at the tile's centroid (diffuse.ts)
      const at = p.interactions.findIndex((it) => it.type === 'diffuse');
      const it = p.interactions[at]!;
      const w = wallIndex(it);
      let d1 = 0;
      for (let k = 0; k <= at; k++) d1 += dist(chain[k]!, chain[k + 1]!);
      const d2 = length - d1;
      const tiles = sceneDiffuseTiles(ps);
      const factor = tiles === undefined ? 0 : diffuseTileFactor(ps, w, tiles.start[w]! + (it.object.tile ?? 0), chain[at]!, chain[at + 2]!);
      spreading = (this.lambda / (4 * Math.PI * d1 * d2)) * factor;
      p.virtualSource = vec(chain[at + 1]!);
      p.virtualSink = vec(chain[at + 1]!);
    } else if (p.kind === 'diffraction') {
      // lambda / (4 pi) / sqrt(s' s (s' + s)), s' and s unfolded before and after the edge
      const at = p.interactions.findIndex((it) => it.type === 'diffraction') + 1;
      let before = 0;
      for (let k = 0; k < at; k++) before += dist(chain[k]!, chain[k + 1]!);
      const after = length - before;
      spreading = this.lambda / (4 * Math.PI * Math.sqrt(before * after * length));
      // seen from each end, the wave comes from the edge point mirrored through the walls in between
      let src = vec(chain[at]!),
        sink = vec(chain[at]!);
      for (let k = at; k < p.interactions.length; k++) if (p.interactions[k]!.type === 'reflection') src = mirror(ps, wallIndex(p.interactions[k]!), src);
      for (let k = at - 2; k >= 0; k--) if (p.interactions[k]!.type === 'reflection') sink = mirror(ps, wallIndex(p.interactions[k]!), sink);
      p.virtualSource = src;
      p.virtualSink = sink;
    } else {
      spreading = this.lambda / (4 * Math.PI * length);
      const walls = p.interactions.filter((it) => it.type === 'reflection').map(wallIndex);
      let src = vec(chain[0]!),
        sink = vec(chain[chain.length - 1]!);
      for (const w of walls) src = mirror(ps, w, src);
      for (let k = walls.length - 1; k >= 0; k--) sink = mirror(ps, walls[k]!, sink);
      p.virtualSource = src;
      p.virtualSink = sink;
    }
    const mag = spreading * 10 ** (-p.blockageDb / 20) * (this.gas > 0 ? gasAmplitudeFactor(length, this.gas) : 1);
    // exp(-j k0 d), with k0 d reduced modulo 2 pi in wavelengths first to keep digits
    const cycles = length / this.lambda;
    const phase = -2 * Math.PI * (cycles - Math.floor(cycles));
    const c = Math.cos(phase),
      s = Math.sin(phase);
    const F = p.polarizationFactor;
    p.amplitude = [mag * (F[0] * c - F[1] * s), mag * (F[0] * s + F[1] * c)];
    const a = Math.hypot(p.amplitude[0], p.amplitude[1]);
    p.powerDb = 20 * Math.log10(a);
    let deg = (Math.atan2(p.amplitude[1], p.amplitude[0]) * 180) / Math.PI;
    if (deg <= -180) deg += 360;
    p.phaseDeg = deg;
  }
}

function vec(p: Readonly<ArrayLike<number>>): Vec3 {
  return [p[0]!, p[1]!, p[2] ?? 0];
}

function dist(a: Readonly<Vec3>, b: Readonly<Vec3>): number {
  return Math.hypot(b[0] - a[0], b[1] - a[1], b[2] - a[2]);
}

function unit(from: Readonly<Vec3>, to: Readonly<Vec3>): Vec3 {
  const x = to[0] - from[0],
    y = to[1] - from[1],
    z = to[2] - from[2];
  const n = Math.hypot(x, y, z);
  if (!(n > 0)) throw new RangeError(`traceScene(): two consecutive points of a path coincide at ${JSON.stringify(from)}`);
  return [x / n, y / n, z / n];
}

/** e . basis[offset..offset+2] for a complex vector e (Float64Array(6)). */
function cdot(e: Float64Array, b: Float64Array, offset: number): Complex {
  return [e[0]! * b[offset]! + e[1]! * b[offset + 1]! + e[2]! * b[offset + 2]!, e[3]! * b[offset]! + e[4]! * b[offset + 1]! + e[5]! * b[offset + 2]!];
}

function planeValue(ps: PreparedScene, w: number, p: Readonly<Vec3>): number {
  const pl = ps.planes,
    o = 4 * w;
  return pl[o]! * p[0] + pl[o + 1]! * p[1] + pl[o + 2]! * p[2] - pl[o + 3]!;
}

function mirror(ps: PreparedScene, w: number, p: Readonly<Vec3>): Vec3 {
  const pl = ps.planes,
    o = 4 * w;
  const f = planeValue(ps, w, p);
  return [p[0] - 2 * f * pl[o]!, p[1] - 2 * f * pl[o + 1]!, p[2] - 2 * f * pl[o + 2]!];
}

function objectIndex(it: PathInteraction, kind: SceneObjectRef['kind']): number {
  if (it.object.kind !== kind) throw new RangeError(`retracePaths(): interaction object must be a ${kind}, got ${JSON.stringify(it.object)}`);
  return it.object.index;
}

function wallIndex(it: PathInteraction): number {
  return objectIndex(it, 'wall');
}

/** The walls a path passes through on each segment between its other interactions. */
function transmissionsPerSegment(p: TracedPath): number[][] {
  const out: number[][] = [[]];
  for (const it of p.interactions) {
    if (it.type === 'transmission') out[out.length - 1]!.push(wallIndex(it));
    else out.push([]);
  }
  return out;
}

/** The steps of a diffracted path from its interactions (wedges by their edge's label). */
function diffractionSteps(ps: PreparedScene, p: TracedPath): DiffractionStep[] {
  const index = sceneWedges(ps).index;
  return p.interactions
    .filter((it) => it.type !== 'transmission')
    .map((it) => {
      if (it.type === 'reflection') return { type: 'reflection', index: wallIndex(it) };
      const w = it.object.kind === 'edge' ? index.get(sceneObjectLabel(it.object)) : undefined;
      if (w === undefined) throw new RangeError(`retracePaths(): the scene has no diffracting edge ${JSON.stringify(it.object)}`);
      return { type: 'diffraction', index: w };
    });
}
