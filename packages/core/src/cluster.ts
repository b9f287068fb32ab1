/**
 * Clusters: each path of a timeline widened into M sub-paths around it (docs/deployments.md).
 *
 * Sub-path k of path `id` has the id `${id}#k` and, relative to its path, fixed offsets drawn
 * once from a stream keyed by the cluster's identity (seed, `${streamKey}/${id}/cluster`), never
 * by its rank: azimuth and elevation offsets at departure and at arrival (degrees), a delay
 * offset >= 0 (seconds) and a phase uniform on (-pi, pi). Its amplitude is the path's times
 * e^(j phase) / sqrt(M), so the sub-paths' powers add up to the path's power exactly. It shares
 * the path's Doppler shift, visibility fade and polarimetric transfer.
 *
 * Offset layout: `offsets` [L, 5] float64 per output column: [dAzDep, dElDep, dAzArr, dElArr] in
 * degrees, then dDelay in seconds. Methods:
 *   "gaussian":      each angle offset ~ N(0, spread^2): the circular angular spread of 3GPP
 *                    TR 38.901 Annex A, sqrt(-2 ln |E e^(j dphi)|), then equals the spread;
 *   "laplacian":     each angle offset Laplacian with standard deviation = spread;
 *   "offsets-38901": M = 20 fixed ray offsets alpha_m of 38.901 Table 7.5-3 times the spread
 *                    (a cluster-wise rms spread, c_ASA etc.), randomly coupled across the four
 *                    angles (38.901 step 8), delays at the sub-cluster offsets 0, 1.28 and 2.56
 *                    times the delay spread (Table 7.5-5: rays 1-8, 19, 20 / 9-12, 17, 18 / 13-16);
 * for the first two, delay offsets are exponential with mean (and standard deviation) equal to
 * the delay spread.
 */
import { degFromVector, unitFromDeg, type Vec3 } from '@pathweave/geometry';
import type { PolarimetricSource } from './polarization-ports.js';
import { RandomStream } from './random.js';
import { PathSetFrame, type PathTimeline } from './timeline.js';

/**
 * How sub-path offsets are drawn (see the module comment).
 * @example const method: ClusterMethod = 'laplacian';
 */
export type ClusterMethod = 'gaussian' | 'laplacian' | 'offsets-38901';

/**
 * The spread of one cluster. Angles in degrees, delay in seconds; every value >= 0.
 * @example
 * const narrow: ClusterSpread = { subPaths: 10, method: 'gaussian', azimuthSpreadDepartureDeg: 2, elevationSpreadDepartureDeg: 1,
 *   azimuthSpreadArrivalDeg: 10, elevationSpreadArrivalDeg: 5, delaySpreadS: 5e-9 };
 */
export interface ClusterSpread {
  /** Number of sub-paths M (20 for "offsets-38901"). */
  subPaths: number;
  method: ClusterMethod;
  azimuthSpreadDepartureDeg: number;
  elevationSpreadDepartureDeg: number;
  azimuthSpreadArrivalDeg: number;
  elevationSpreadArrivalDeg: number;
  delaySpreadS: number;
}

/**
 * Ray offset angles alpha_m of 3GPP TR 38.901 Table 7.5-3 for rays m = 1..20 (basis vector of
 * offsets for a unit rms spread; first values V in a secondary copy, the rest from memory, M).
 * @example [RAY_OFFSETS_38901.length, RAY_OFFSETS_38901[0], RAY_OFFSETS_38901[19]] // [20, 0.0447, -2.1551]: 10 offsets and their negatives
 */
export const RAY_OFFSETS_38901: readonly number[] = Object.freeze(
  [0.0447, 0.1413, 0.2492, 0.3715, 0.5129, 0.6797, 0.8844, 1.1481, 1.5195, 2.1551].flatMap((a) => [a, -a]),
);

/** Sub-cluster of each ray m = 1..20 (0, 1, 2: delay offsets 0, 1.28, 2.56 c_DS), 38.901 Table 7.5-5 (M). */
const SUBCLUSTER_OF_RAY: readonly number[] = [0, 0, 0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 2, 2, 2, 2, 1, 1, 0, 0];
const SUBCLUSTER_DELAY = [0, 1.28, 2.56];

/**
 * Names of the per-environment cluster spreads of 38.901 Table 7.5-6.
 * @example const preset: ClusterPreset = 'indoor-office-nlos';
 */
export type ClusterPreset = 'umi-los' | 'umi-nlos' | 'indoor-office-los' | 'indoor-office-nlos' | 'indoor-factory-los' | 'indoor-factory-nlos';

/**
 * Cluster-wise spreads of 3GPP TR 38.901 Table 7.5-6 (c_ASD, c_ASA, c_ZSA; V in a secondary
 * copy of the table) and c_DS (UMi 5 / 11 ns, M; the indoor scenarios tabulate none, so 0).
 * The zenith spread of departure is left at 0: 38.901 derives it from the link's distance
 * (3/8 10^(mu_lgZSD)), which a preset cannot fix; give `elevationSpreadDepartureDeg` to set it.
 * @example clusterPreset('umi-nlos').azimuthSpreadArrivalDeg // 22
 */
export function clusterPreset(name: ClusterPreset): ClusterSpread {
  const table: Record<ClusterPreset, [number, number, number, number]> = {
    'umi-los': [3, 17, 7, 5e-9],
    'umi-nlos': [10, 22, 7, 11e-9],
    'indoor-office-los': [5, 8, 9, 0],
    'indoor-office-nlos': [5, 11, 9, 0],
    'indoor-factory-los': [5, 8, 9, 0],
    'indoor-factory-nlos': [5, 8, 9, 0],
  };
  const row = table[name];
  if (row === undefined) throw new TypeError(`clusterPreset(): name must be one of ${Object.keys(table).join(', ')}, got ${JSON.stringify(name)}`);
  return {
    subPaths: 20,
    method: 'offsets-38901',
    azimuthSpreadDepartureDeg: row[0],
    elevationSpreadDepartureDeg: 0,
    azimuthSpreadArrivalDeg: row[1],
    elevationSpreadArrivalDeg: row[2],
    delaySpreadS: row[3],
  };
}

/**
 * Circular angular spread of 3GPP TR 38.901 Annex A (A.1, from memory, M), radians:
 * sqrt(-2 ln |sum_m P_m e^(j phi_m) / sum_m P_m|).
 * @example circularAngularSpread([0.1, -0.1], [1, 1]) // 0.1 (to 1e-4)
 */
export function circularAngularSpread(anglesRad: ArrayLike<number>, powers?: ArrayLike<number>): number {
  let re = 0,
    im = 0,
    total = 0;
  for (let m = 0; m < anglesRad.length; m++) {
    const p = powers === undefined ? 1 : powers[m]!;
    re += p * Math.cos(anglesRad[m]!);
    im += p * Math.sin(anglesRad[m]!);
    total += p;
  }
  if (!(total > 0)) throw new RangeError(`circularAngularSpread(): the powers must add up to > 0, got ${total}`);
  return Math.sqrt(Math.max(0, -2 * Math.log(Math.hypot(re, im) / total)));
}

function checkSpread(fn: string, s: ClusterSpread): void {
  if (!Number.isInteger(s.subPaths) || s.subPaths < 1) throw new RangeError(`${fn}: subPaths must be an integer >= 1, got ${s.subPaths}`);
  if (s.method === 'offsets-38901' && s.subPaths !== 20)
    throw new RangeError(`${fn}: method "offsets-38901" has 20 sub-paths (Table 7.5-3), got subPaths ${s.subPaths}`);
  if (s.method !== 'gaussian' && s.method !== 'laplacian' && s.method !== 'offsets-38901')
    throw new TypeError(`${fn}: method must be "gaussian", "laplacian" or "offsets-38901", got ${JSON.stringify(s.method)}`);
  for (const key of [
    'azimuthSpreadDepartureDeg',
    'elevationSpreadDepartureDeg',
    'azimuthSpreadArrivalDeg',
    'elevationSpreadArrivalDeg',
    'delaySpreadS',
  ] as const) {
    if (!(s[key] >= 0) || !Number.isFinite(s[key])) throw new RangeError(`${fn}: ${key} must be a finite number >= 0, got ${s[key]}`);
  }
}

/** The offsets of one cluster, [M, 5] (layout of the module comment), and the sub-path phases [M]. */
function drawCluster(spread: ClusterSpread, stream: RandomStream): { offsets: Float64Array; phases: Float64Array } {
  const M = spread.subPaths;
  const offsets = new Float64Array(5 * M);
  const phases = new Float64Array(M);
  const spreads = [spread.azimuthSpreadDepartureDeg, spread.elevationSpreadDepartureDeg, spread.azimuthSpreadArrivalDeg, spread.elevationSpreadArrivalDeg];
  if (spread.method === 'offsets-38901') {
    // Random coupling: an independent permutation of the 20 rays for each angle (38.901 step 8).
    for (let a = 0; a < 4; a++) {
      const order = Array.from({ length: M }, (_, m) => m);
      for (let m = M - 1; m > 0; m--) {
        const j = Math.floor(stream.nextUniform() * (m + 1));
        [order[m], order[j]] = [order[j]!, order[m]!];
      }
      for (let m = 0; m < M; m++) offsets[5 * m + a] = spreads[a]! * RAY_OFFSETS_38901[order[m]!]!;
    }
    for (let m = 0; m < M; m++) offsets[5 * m + 4] = SUBCLUSTER_DELAY[SUBCLUSTER_OF_RAY[m]!]! * spread.delaySpreadS;
  } else {
    for (let m = 0; m < M; m++) {
      for (let a = 0; a < 4; a++) {
        let x: number;
        if (spread.method === 'gaussian') x = stream.nextNormal();
        else {
          // Laplacian of unit variance: scale 1 / sqrt(2), by inversion.
          const u = stream.nextUniform() - 0.5;
          x = -Math.SQRT1_2 * Math.sign(u) * Math.log(1 - 2 * Math.abs(u));
        }
        offsets[5 * m + a] = spreads[a]! * x;
      }
      offsets[5 * m + 4] = -spread.delaySpreadS * Math.log(stream.nextUniform());
    }
  }
  for (let m = 0; m < M; m++) phases[m] = Math.PI * (2 * stream.nextUniform() - 1);
  return { offsets, phases };
}

/**
 * A timeline whose paths are widened into clusters of sub-paths (module comment). Paths with no
 * spread (undefined) pass through unchanged, with their own ids.
 * @example
 * const p: ExplicitPathSpec = { id: 'p', delayS: 0, power: 1, phaseRad: 0, departure: [1, 0, 0], arrival: [-1, 0, 0] };
 * const t = new ClusteredTimeline(new ExplicitTimeline([p]), [clusterPreset('umi-los')], 1);
 * [t.ids.length, t.ids[3]] // [20, 'p#3']: the preset's 20 sub-paths
 */
export class ClusteredTimeline implements PathTimeline, PolarimetricSource {
  readonly ids: string[] = [];
  readonly kinds: string[] = [];
  readonly constant: boolean;
  /** True for the sub-paths of a cluster (diffuse parts: they carry the cross-polar ratio). */
  readonly diffuse: boolean[] = [];
  /** Column of the wrapped timeline each output column comes from. */
  readonly parent: Int32Array;
  /** Offsets [L, 5] (module comment); zeros for paths that pass through. */
  readonly offsets: Float64Array;
  private readonly phaseCos: Float64Array;
  private readonly phaseSin: Float64Array;
  private readonly scale: Float64Array;
  private readonly innerFrame: PathSetFrame;
  private readonly innerTransfers: Float64Array;
  private readonly direction: Vec3 = [0, 0, 0];

  /**
   * @param inner the timeline of the specular paths
   * @param spreads one entry per path of `inner` (undefined: no cluster)
   * @param seed the run's seed
   * @param streamKey prefix of the cluster keys (the user's identity), default none
   */
  constructor(
    readonly inner: PathTimeline,
    spreads: readonly (ClusterSpread | undefined)[],
    seed: number,
    streamKey?: string,
  ) {
    if (spreads.length !== inner.ids.length)
      throw new RangeError(`ClusteredTimeline(): spreads needs one entry per path (${inner.ids.length}), got ${spreads.length}`);
    const parents: number[] = [];
    const offsets: number[] = [];
    const phases: number[] = [];
    const scales: number[] = [];
    inner.ids.forEach((id, l) => {
      const s = spreads[l];
      if (s === undefined) {
        this.ids.push(id);
        this.kinds.push(inner.kinds[l]!);
        this.diffuse.push(false);
        parents.push(l);
        offsets.push(0, 0, 0, 0, 0);
        phases.push(0);
        scales.push(1);
        return;
      }
      checkSpread('ClusteredTimeline()', s);
      const key = `${streamKey === undefined ? '' : `${streamKey}/`}${id}/cluster`;
      const drawn = drawCluster(s, new RandomStream(seed, key));
      for (let k = 0; k < s.subPaths; k++) {
        this.ids.push(`${id}#${k}`);
        this.kinds.push(inner.kinds[l]!);
        this.diffuse.push(true);
        parents.push(l);
        for (let a = 0; a < 5; a++) offsets.push(drawn.offsets[5 * k + a]!);
        phases.push(drawn.phases[k]!);
        scales.push(1 / Math.sqrt(s.subPaths));
      }
    });
    this.parent = Int32Array.from(parents);
    this.offsets = Float64Array.from(offsets);
    this.phaseCos = Float64Array.from(phases, Math.cos);
    this.phaseSin = Float64Array.from(phases, Math.sin);
    this.scale = Float64Array.from(scales);
    this.constant = inner.constant;
    this.innerFrame = new PathSetFrame(inner.ids.length);
    this.innerTransfers = new Float64Array(8 * inner.ids.length);
  }

  frameAt(timeS: number, frame: PathSetFrame): void {
    const f = this.innerFrame;
    this.inner.frameAt(timeS, f);
    const off = this.offsets;
    const u = this.direction;
    for (let i = 0; i < this.ids.length; i++) {
      const l = this.parent[i]!;
      const o = 5 * i;
      frame.delayS[i] = f.delayS[l]! + off[o + 4]!;
      frame.lengthM[i] = f.lengthM[l]! + off[o + 4]! * 299_792_458;
      frame.rangeM[2 * i] = f.rangeM[2 * l]!;
      frame.rangeM[2 * i + 1] = f.rangeM[2 * l + 1]!;
      // A sub-path's turned directions have no image of the transmitter: per-end responses.
      if (this.diffuse[i] === true) frame.image[9 * i] = Number.NaN;
      else frame.image.set(f.image.subarray(9 * l, 9 * l + 9), 9 * i);
      frame.dopplerHz[i] = f.dopplerHz[l]!;
      frame.visibility[i] = f.visibility[l]!;
      this.turned(f.departure, l, off[o]!, off[o + 1]!, u);
      frame.departure.set(u, 3 * i);
      this.turned(f.arrival, l, off[o + 2]!, off[o + 3]!, u);
      frame.arrival.set(u, 3 * i);
      const ar = f.amplitude[2 * l]! * this.scale[i]!,
        ai = f.amplitude[2 * l + 1]! * this.scale[i]!;
      const c = this.phaseCos[i]!,
        s = this.phaseSin[i]!;
      frame.amplitude[2 * i] = ar * c - ai * s;
      frame.amplitude[2 * i + 1] = ar * s + ai * c;
    }
    frame.lineOfSight = f.lineOfSight;
  }

  polarimetricAt(timeS: number, out: Float64Array): void {
    const t = this.innerTransfers;
    if (this.inner.polarimetricAt !== undefined) this.inner.polarimetricAt(timeS, t);
    else {
      t.fill(0);
      for (let l = 0; l < this.inner.ids.length; l++) {
        t[8 * l] = 1;
        t[8 * l + 6] = 1;
      }
    }
    for (let i = 0; i < this.ids.length; i++) out.set(t.subarray(8 * this.parent[i]!, 8 * this.parent[i]! + 8), 8 * i);
  }

  /** The direction at src[3 l ..] turned by the azimuth and elevation offsets (degrees). */
  private turned(src: Float64Array, l: number, dAzDeg: number, dElDeg: number, out: Vec3): void {
    if (dAzDeg === 0 && dElDeg === 0) {
      out[0] = src[3 * l]!;
      out[1] = src[3 * l + 1]!;
      out[2] = src[3 * l + 2]!;
      return;
    }
    out[0] = src[3 * l]!;
    out[1] = src[3 * l + 1]!;
    out[2] = src[3 * l + 2]!;
    const [az, el] = degFromVector(out);
    unitFromDeg(az + dAzDeg, el + dElDeg, out);
  }
}
