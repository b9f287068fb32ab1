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
 */
import { SPEED_OF_LIGHT } from '../constants.js';
import { degFromVector, type AnglesDeg } from '../direction.js';
import { applyInverseRotation, identity, type Mat3 } from '../rotation.js';
import type { Vec3 } from '../vec3.js';
import { gasAmplitudeFactor } from './atmosphere.js';
import { segmentBlockageDb } from './blockage.js';
import type { Complex } from './complex.js';
import { surfaceCoefficients, type FresnelCoefficients } from './fresnel.js';
import { directionBasis, polarizationVectorLocal, projectFieldPerpendicular, reflectField, terminalFieldVector, type Polarization } from './polarization.js';
import { PreparedScene, prepareScene, type Scene, type SceneProblem } from './scene.js';

/**
 * A terminal for the tracer: position (m), velocity (m/s), array rotation (local to global), polarisation.
 * @example const ue: TraceTerminal = { position: [20, 3, 1.5], velocity: [0, 1.4, 0], rotation: rotationFromOrientation({ yawDeg: 180 }) };
 */
export interface TraceTerminal {
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
}

/**
 * One interaction of a path, in order from the transmitter.
 * @example
 * const wall = { vertices: [[0, 5], [20, 5]] };
 * traceScene({ walls: [wall], lineOfSight: false }, { position: [0, 0, 0] }, { position: [10, 0, 0] }, 28e9).paths[0]!.interactions[0] // { type: 'reflection', object: 'walls[0]', point: [5, 5, 0], incidenceDeg: 45, coefficients: { te: [-0.5105, 0.0156], tm: [0.2604, -0.0160] } }
 */
export interface PathInteraction {
  type: 'reflection' | 'scatter';
  /** "walls[3]" or "scatterers[2]": index into the scene's lists. */
  object: string;
  /** Where it happens, metres (global). */
  point: Vec3;
  /** Reflections: angle of incidence from the wall's normal, degrees. */
  incidenceDeg?: number;
  /** Reflections: the TE and TM coefficients used (convention of fresnel.ts). */
  coefficients?: FresnelCoefficients;
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
  /** Stable id from the interaction list: "los", "R:walls[3]", "R:walls[1]>R:walls[4]", "S:scatterers[2]". */
  id: string;
  kind: 'los' | 'reflection' | 'scatter';
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

/**
 * Trace a scene between two terminals at a carrier frequency (Hz).
 * Throws RangeError for an invalid scene or terminals (the messages of validateScene).
 * @example traceScene({ walls: [] }, { position: [0, 0, 0] }, { position: [10, 0, 0] }, 28e9).paths[0].powerDb
 * // -81.391 (free-space loss 81.391 dB at 28 GHz over 10 m)
 */
export function traceScene(scene: Scene | PreparedScene, tx: TraceTerminal, rx: TraceTerminal, carrierHz: number, options: TraceOptions = {}): TraceResult {
  if (!Number.isFinite(carrierHz) || carrierHz <= 0) throw new RangeError(`traceScene(): carrierHz must be a finite number > 0, got ${carrierHz}`);
  const ps = scene instanceof PreparedScene ? scene : prepareScene(scene);
  const errors = ps.terminalProblems(tx.position, rx.position);
  if (errors.length > 0) throw new RangeError(`traceScene(): ${errors.map((p) => `${p.path}: ${p.message}`).join('; ')}`);
  const warnings: SceneProblem[] = [];
  ps.surfacesAt(carrierHz).forEach((r, i) => { if (r.warning !== undefined) warnings.push({ path: `scene.walls[${i}].material`, message: r.warning, severity: 'warning' }); });
  const settings = resolveOptions(ps, options);
  const ctx = new TraceContext(ps, tx, rx, carrierHz, settings.gas);
  const raw: TracedPath[] = [];
  const t = tx.position, r = rx.position;
  if (settings.lineOfSight && !ps.segmentHitsWall(t[0], t[1], t[2], r[0], r[1], r[2], -1, -1)) {
    raw.push(ctx.build('los', [], []));
  }
  traceReflections(ps, t, r, settings.order, (seq, points) => { raw.push(ctx.build('reflection', seq, points)); });
  const scatterers = ps.scene.scatterers ?? [];
  scatterers.forEach((s, i) => {
    const p: Vec3 = [s.position[0]!, s.position[1]!, s.position[2] ?? 0];
    if (ps.segmentHitsWall(t[0], t[1], t[2], p[0], p[1], p[2], -1, -1)) return;
    if (ps.segmentHitsWall(p[0], p[1], p[2], r[0], r[1], r[2], -1, -1)) return;
    raw.push(ctx.build('scatter', [i], [p]));
  });
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
 * const ps = prepareScene({ walls: [{ vertices: [[0, 5], [20, 5]] }] }), tx: TraceTerminal = { position: [0, 0, 0] };
 * const { paths } = traceScene(ps, tx, { position: [10, 0, 0] }, 28e9); // 'los' 10 m, 'R:walls[0]' 14.142 m
 * retracePaths(ps, paths, tx, { position: [10.1, 0, 0] }, 28e9).map((p) => p.lengthM) // [10.1, 14.213]
 */
export function retracePaths(ps: PreparedScene, paths: readonly TracedPath[], tx: TraceTerminal, rx: TraceTerminal, carrierHz: number, options: TraceOptions = {}): TracedPath[] {
  if (!Number.isFinite(carrierHz) || carrierHz <= 0) throw new RangeError(`retracePaths(): carrierHz must be a finite number > 0, got ${carrierHz}`);
  const settings = resolveOptions(ps, options);
  const ctx = new TraceContext(ps, tx, rx, carrierHz, settings.gas);
  return paths.map((p) => ctx.refresh(p));
}

interface Settings { lineOfSight: boolean; order: number; maxPaths: number; dynamicRangeDb: number; gas: number }

function resolveOptions(ps: PreparedScene, o: TraceOptions): Settings {
  const s = ps.scene;
  const order = o.maxReflectionOrder ?? ps.maxReflectionOrder;
  if (!Number.isInteger(order) || order < 0 || order > 6) throw new RangeError(`traceScene(): maxReflectionOrder must be an integer from 0 to 6, got ${order}`);
  const maxPaths = o.maxPaths ?? s.maxPaths ?? Infinity;
  if (!(maxPaths >= 1)) throw new RangeError(`traceScene(): maxPaths must be >= 1, got ${maxPaths}`);
  const dr = o.dynamicRangeDb ?? s.dynamicRangeDb ?? Infinity;
  if (!(dr > 0)) throw new RangeError(`traceScene(): dynamicRangeDb must be > 0, got ${dr}`);
  const gas = o.gasAttenuationDbPerKm ?? s.gasAttenuationDbPerKm ?? 0;
  if (!Number.isFinite(gas) || gas < 0) throw new RangeError(`traceScene(): gasAttenuationDbPerKm must be a finite number >= 0, got ${gas}`);
  return { lineOfSight: o.lineOfSight ?? ps.lineOfSight, order, maxPaths, dynamicRangeDb: dr, gas };
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
  const sorted = [...paths].sort((a, b) => (b.powerDb - a.powerDb) || (a.id < b.id ? -1 : a.id > b.id ? 1 : 0));
  if (sorted.length === 0) return sorted;
  const floor = sorted[0]!.powerDb - dynamicRangeDb;
  const kept = sorted.filter((p) => (p.powerDb >= floor && p.powerDb > -Infinity) || (keepNullPaths && p.powerDb === -Infinity && dynamicRangeDb === Infinity));
  return kept.length > maxPaths ? kept.slice(0, maxPaths) : kept;
}

/**
 * Enumerate valid specular reflection paths of order 1..maxOrder by the image method; calls
 * `emit(wallSequence, reflectionPoints)` for each (arrays are fresh copies). The inner loops
 * (images, back-tracking, polygon and obstruction tests) do not allocate.
 * @example traceReflections(prepareScene({ walls: [{ vertices: [[0, -5], [0, 5]] }] }), [1, 0, 0], [2, 0, 0], 1, (w, p) => console.log(w, p))
 * // [0] [[0, 0, 0]]
 */
export function traceReflections(ps: PreparedScene, tx: Readonly<Vec3>, rx: Readonly<Vec3>, maxOrder: number, emit: (walls: number[], points: Vec3[]) => void): void {
  const W = ps.wallCount;
  if (maxOrder < 1 || W === 0) return;
  const pl = ps.planes;
  const images = new Float64Array(3 * (maxOrder + 1));
  const pts = new Float64Array(3 * maxOrder);
  const seq = new Int32Array(maxOrder);
  images[0] = tx[0]; images[1] = tx[1]; images[2] = tx[2];
  const rx0 = rx[0], rx1 = rx[1], rx2 = rx[2];
  const tol = 1e-9;

  const tryPath = (K: number): void => {
    let qx = rx0, qy = rx1, qz = rx2; // current target
    for (let k = K; k >= 1; k--) {
      const w = seq[k - 1]!, o = 4 * w;
      const nx = pl[o]!, ny = pl[o + 1]!, nz = pl[o + 2]!, d = pl[o + 3]!;
      const ix = images[3 * k]!, iy = images[3 * k + 1]!, iz = images[3 * k + 2]!;
      const fq = nx * qx + ny * qy + nz * qz - d, fi = nx * ix + ny * iy + nz * iz - d;
      if (!((fq > 0 && fi < 0) || (fq < 0 && fi > 0))) return; // target and image must straddle the wall
      const s = fq / (fq - fi);
      const px = qx + s * (ix - qx), py = qy + s * (iy - qy), pz = qz + s * (iz - qz);
      if (!ps.insideWall(w, px, py, pz, tol)) return;
      pts[3 * (k - 1)] = px; pts[3 * (k - 1) + 1] = py; pts[3 * (k - 1) + 2] = pz;
      qx = px; qy = py; qz = pz;
    }
    // Every segment free of other walls: tx -> P1, P1 -> P2, ..., PK -> rx.
    let ax = images[0]!, ay = images[1]!, az = images[2]!, prev = -1;
    for (let k = 0; k <= K; k++) {
      const next = k < K ? seq[k]! : -1;
      const bx = k < K ? pts[3 * k]! : rx0, by = k < K ? pts[3 * k + 1]! : rx1, bz = k < K ? pts[3 * k + 2]! : rx2;
      if (ps.segmentHitsWall(ax, ay, az, bx, by, bz, prev, next)) return;
      ax = bx; ay = by; az = bz; prev = next;
    }
    const walls: number[] = [], points: Vec3[] = [];
    for (let k = 0; k < K; k++) { walls.push(seq[k]!); points.push([pts[3 * k]!, pts[3 * k + 1]!, pts[3 * k + 2]!]); }
    emit(walls, points);
  };

  const descend = (depth: number): void => {
    const px = images[3 * depth]!, py = images[3 * depth + 1]!, pz = images[3 * depth + 2]!;
    for (let w = 0; w < W; w++) {
      if (depth > 0 && seq[depth - 1] === w) continue;
      const o = 4 * w;
      const nx = pl[o]!, ny = pl[o + 1]!, nz = pl[o + 2]!;
      const f = nx * px + ny * py + nz * pz - pl[o + 3]!;
      if (f === 0) continue; // the source lies in the plane: no image
      images[3 * depth + 3] = px - 2 * f * nx; images[3 * depth + 4] = py - 2 * f * ny; images[3 * depth + 5] = pz - 2 * f * nz;
      seq[depth] = w;
      tryPath(depth + 1);
      if (depth + 1 < maxOrder) descend(depth + 1);
    }
  };
  descend(0);
}

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
    private readonly tx: TraceTerminal,
    private readonly rx: TraceTerminal,
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

  /** A full path from its interaction list (wall or scatterer indices) and interaction points. */
  build(kind: TracedPath['kind'], objects: number[], points: Vec3[]): TracedPath {
    const ps = this.ps;
    const chain: Vec3[] = [vec(this.tx.position), ...points, vec(this.rx.position)];
    const surfaces = kind === 'reflection' ? ps.surfacesAt(this.carrierHz) : [];
    const interactions: PathInteraction[] = [];
    // Propagate the departure basis vectors through the interactions.
    const dep = unit(chain[0]!, chain[1]!);
    const basis = directionBasis(new Float64Array(6), dep);
    const eT = Float64Array.of(basis[0]!, basis[1]!, basis[2]!, 0, 0, 0);
    const eP = Float64Array.of(basis[3]!, basis[4]!, basis[5]!, 0, 0, 0);
    for (let k = 1; k < chain.length - 1; k++) {
      const kIn = unit(chain[k - 1]!, chain[k]!), kOut = unit(chain[k]!, chain[k + 1]!);
      const o = objects[k - 1]!;
      if (kind === 'reflection') {
        const pl = ps.planes;
        const n: Vec3 = [pl[4 * o]!, pl[4 * o + 1]!, pl[4 * o + 2]!];
        const cosT = Math.min(1, Math.abs(kIn[0] * n[0] + kIn[1] * n[1] + kIn[2] * n[2]));
        const c = surfaceCoefficients(surfaces[o]!.surface, cosT);
        reflectField(eT, eT, kIn, kOut, n, c);
        reflectField(eP, eP, kIn, kOut, n, c);
        interactions.push({ type: 'reflection', object: `walls[${o}]`, point: chain[k]!, incidenceDeg: (Math.acos(cosT) * 180) / Math.PI, coefficients: c });
      } else {
        projectFieldPerpendicular(eT, eT, kOut);
        projectFieldPerpendicular(eP, eP, kOut);
        interactions.push({ type: 'scatter', object: `scatterers[${o}]`, point: chain[k]! });
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
    const t0 = ft[0] * basis[0]! + ft[1] * basis[1]! + ft[2] * basis[2]!, t1 = ft[0] * basis[3]! + ft[1] * basis[4]! + ft[2] * basis[5]!;
    const r0 = fr[0] * ab[0]! + fr[1] * ab[1]! + fr[2] * ab[2]!, r1 = fr[0] * ab[3]! + fr[1] * ab[4]! + fr[2] * ab[5]!;
    const F: Complex = [
      r0 * (T[0][0][0] * t0 + T[0][1][0] * t1) + r1 * (T[1][0][0] * t0 + T[1][1][0] * t1),
      r0 * (T[0][0][1] * t0 + T[0][1][1] * t1) + r1 * (T[1][0][1] * t0 + T[1][1][1] * t1),
    ];
    let blockageDb = 0;
    for (let k = 0; k + 1 < chain.length; k++) {
      const a = chain[k]!, b = chain[k + 1]!;
      blockageDb += segmentBlockageDb(ps, a[0], a[1], a[2], b[0], b[1], b[2], this.lambda);
    }
    const id = kind === 'los' ? 'los' : kind === 'reflection' ? objects.map((w) => `R:walls[${w}]`).join('>') : `S:scatterers[${objects[0]}]`;
    const path: TracedPath = {
      id, kind, interactions,
      lengthM: 0, delayS: 0, departure: dep, arrival: arr, aodDeg: [0, 0], aoaDeg: [0, 0], aodLocalDeg: [0, 0], aoaLocalDeg: [0, 0],
      amplitude: [0, 0], powerDb: 0, phaseDeg: 0, dopplerHz: 0, virtualSource: [0, 0, 0], virtualSink: [0, 0, 0],
      blockageDb, polarizationFactor: F, polarimetric: T,
    };
    this.fillKinematics(path, chain);
    return path;
  }

  /** The path at the context's terminal positions, keeping its interaction factors. */
  refresh(p: TracedPath): TracedPath {
    const ps = this.ps;
    const tx = vec(this.tx.position), rx = vec(this.rx.position);
    let points: Vec3[];
    if (p.kind === 'reflection') {
      const walls = p.interactions.map((it) => wallIndex(it.object));
      const images: Vec3[] = [tx];
      for (const w of walls) images.push(mirror(ps, w, images[images.length - 1]!));
      points = new Array<Vec3>(walls.length);
      let q = rx;
      for (let k = walls.length; k >= 1; k--) {
        const w = walls[k - 1]!, I = images[k]!;
        const fq = planeValue(ps, w, q), fi = planeValue(ps, w, I);
        const s = fq / (fq - fi);
        q = [q[0] + s * (I[0] - q[0]), q[1] + s * (I[1] - q[1]), q[2] + s * (I[2] - q[2])];
        points[k - 1] = q;
      }
    } else {
      points = p.interactions.map((it) => vec(it.point));
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
    const v1 = this.txVel, v2 = this.rxVel;
    p.dopplerHz = (v1[0] * p.departure[0] + v1[1] * p.departure[1] + v1[2] * p.departure[2] + v2[0] * p.arrival[0] + v2[1] * p.arrival[1] + v2[2] * p.arrival[2]) / this.lambda;
    let spreading: number;
    if (p.kind === 'scatter') {
      const o = scattererIndex(p.interactions[0]!.object);
      const rcs = ps.scene.scatterers![o]!.rcsM2;
      const d1 = dist(chain[0]!, chain[1]!), d2 = dist(chain[1]!, chain[2]!);
      spreading = (this.lambda / (4 * Math.PI * d1 * d2)) * Math.sqrt(rcs / (4 * Math.PI));
      p.virtualSource = vec(chain[1]!);
      p.virtualSink = vec(chain[1]!);
    } else {
      spreading = this.lambda / (4 * Math.PI * length);
      const walls = p.interactions.map((it) => wallIndex(it.object));
      let src = vec(chain[0]!), sink = vec(chain[chain.length - 1]!);
      for (const w of walls) src = mirror(ps, w, src);
      for (let k = walls.length - 1; k >= 0; k--) sink = mirror(ps, walls[k]!, sink);
      p.virtualSource = src;
      p.virtualSink = sink;
    }
    const mag = spreading * 10 ** (-p.blockageDb / 20) * (this.gas > 0 ? gasAmplitudeFactor(length, this.gas) : 1);
    // exp(-j k0 d), with k0 d reduced modulo 2 pi in wavelengths first to keep digits
    const cycles = length / this.lambda;
    const phase = -2 * Math.PI * (cycles - Math.floor(cycles));
    const c = Math.cos(phase), s = Math.sin(phase);
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
  const x = to[0] - from[0], y = to[1] - from[1], z = to[2] - from[2];
  const n = Math.hypot(x, y, z);
  if (!(n > 0)) throw new RangeError(`traceScene(): two consecutive points of a path coincide at ${JSON.stringify(from)}`);
  return [x / n, y / n, z / n];
}

/** e . basis[offset..offset+2] for a complex vector e (Float64Array(6)). */
function cdot(e: Float64Array, b: Float64Array, offset: number): Complex {
  return [
    e[0]! * b[offset]! + e[1]! * b[offset + 1]! + e[2]! * b[offset + 2]!,
    e[3]! * b[offset]! + e[4]! * b[offset + 1]! + e[5]! * b[offset + 2]!,
  ];
}

function planeValue(ps: PreparedScene, w: number, p: Readonly<Vec3>): number {
  const pl = ps.planes, o = 4 * w;
  return pl[o]! * p[0] + pl[o + 1]! * p[1] + pl[o + 2]! * p[2] - pl[o + 3]!;
}

function mirror(ps: PreparedScene, w: number, p: Readonly<Vec3>): Vec3 {
  const pl = ps.planes, o = 4 * w;
  const f = planeValue(ps, w, p);
  return [p[0] - 2 * f * pl[o]!, p[1] - 2 * f * pl[o + 1]!, p[2] - 2 * f * pl[o + 2]!];
}

function wallIndex(object: string): number {
  const m = /^walls\[(\d+)\]$/.exec(object);
  if (m === null) throw new RangeError(`retracePaths(): interaction object must be "walls[i]", got ${JSON.stringify(object)}`);
  return Number(m[1]);
}

function scattererIndex(object: string): number {
  const m = /^scatterers\[(\d+)\]$/.exec(object);
  if (m === null) throw new RangeError(`retracePaths(): interaction object must be "scatterers[i]", got ${JSON.stringify(object)}`);
  return Number(m[1]);
}
