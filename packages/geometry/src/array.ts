/**
 * Antenna arrays. Element offsets are stored as Float64Array(3 N), [x0, y0, z0, x1, ...], in
 * metres from the array's reference point, in the local frame (boresight +x) and in the global
 * frame (after the orientation R = Rz(yaw) Ry(pitch) Rx(roll)).
 * ULA: along local +y. UPA: in the local y-z plane, `columns` along +y, `rows` along +z, row 0
 * lowest, element n = row * columns + column. Offsets are centred: (i - (N - 1) / 2) d.
 */
import { isotropic, type ElementPattern } from './pattern.js';
import { applyInverseRotation, applyRotation, rotationFromOrientation, type Mat3, type Orientation } from './rotation.js';
import type { Vec3 } from './vec3.js';

/**
 * An array's elements, frame and element pattern. Immutable once built.
 * @example
 * const upa = AntennaArray.upa(2, 4, 0.0025, { yawDeg: 90 });
 * upa.size // 8
 * upa.aperture() // 0.00791 (the diagonal: hypot(3, 1) * 2.5 mm)
 */
export class AntennaArray {
  /** Number of elements N. */
  readonly size: number;
  /** Element offsets in the local frame, metres, Float64Array(3 N). */
  readonly localOffsets: Float64Array;
  /** Element offsets in the global frame, metres, Float64Array(3 N). */
  readonly globalOffsets: Float64Array;
  /** Local-to-global rotation. */
  readonly rotation: Mat3;
  /** Field pattern of every element. */
  readonly pattern: ElementPattern;
  private readonly scratch: Vec3 = [0, 0, 0];
  private apertureM = -1;

  /**
   * @param localOffsets element offsets in metres in the local frame, 3 N values
   * @param orientation yaw, pitch and roll in degrees
   * @param pattern element pattern (isotropic by default)
   */
  constructor(localOffsets: Float64Array, orientation: Orientation = {}, pattern: ElementPattern = isotropic) {
    if (localOffsets.length === 0 || localOffsets.length % 3 !== 0) {
      throw new RangeError(`AntennaArray(): localOffsets must hold 3 N values with N >= 1, got ${localOffsets.length}`);
    }
    this.size = localOffsets.length / 3;
    this.localOffsets = localOffsets;
    this.rotation = rotationFromOrientation(orientation);
    this.pattern = pattern;
    this.globalOffsets = new Float64Array(localOffsets.length);
    const p: Vec3 = [0, 0, 0];
    for (let n = 0; n < this.size; n++) {
      applyRotation(p, this.rotation, [localOffsets[3 * n]!, localOffsets[3 * n + 1]!, localOffsets[3 * n + 2]!]);
      this.globalOffsets[3 * n] = p[0];
      this.globalOffsets[3 * n + 1] = p[1];
      this.globalOffsets[3 * n + 2] = p[2];
    }
  }

  /**
   * Uniform linear array of `elements` along local +y, spacing in metres.
   * @example AntennaArray.ula(4, 0.005).localOffsets // y = -0.0075, -0.0025, 0.0025, 0.0075
   */
  static ula(elements: number, spacingM: number, orientation?: Orientation, pattern?: ElementPattern): AntennaArray {
    checkCount('AntennaArray.ula()', 'elements', elements);
    const offsets = new Float64Array(3 * elements);
    for (let i = 0; i < elements; i++) offsets[3 * i + 1] = (i - (elements - 1) / 2) * spacingM;
    return new AntennaArray(offsets, orientation, pattern);
  }

  /**
   * Uniform planar array in the local y-z plane: `columns` along +y, `rows` along +z,
   * element n = row * columns + column, row 0 lowest.
   */
  static upa(rows: number, columns: number, spacingM: number, orientation?: Orientation, pattern?: ElementPattern): AntennaArray {
    checkCount('AntennaArray.upa()', 'rows', rows);
    checkCount('AntennaArray.upa()', 'columns', columns);
    const offsets = new Float64Array(3 * rows * columns);
    for (let r = 0; r < rows; r++) {
      for (let c = 0; c < columns; c++) {
        const n = r * columns + c;
        offsets[3 * n + 1] = (c - (columns - 1) / 2) * spacingM;
        offsets[3 * n + 2] = (r - (rows - 1) / 2) * spacingM;
      }
    }
    return new AntennaArray(offsets, orientation, pattern);
  }

  /** An array of elements at the given local positions in metres. */
  static custom(positions: readonly (readonly [number, number, number])[], orientation?: Orientation, pattern?: ElementPattern): AntennaArray {
    const offsets = new Float64Array(3 * positions.length);
    positions.forEach((p, i) => offsets.set(p, 3 * i));
    return new AntennaArray(offsets, orientation, pattern);
  }

  /** Largest distance between two elements, metres (the aperture D). */
  aperture(): number {
    // O(N^2) and asked for per path and step by the wavefront choice: computed once (offsets never change).
    if (this.apertureM >= 0) return this.apertureM;
    let d = 0;
    const g = this.localOffsets;
    for (let a = 0; a < this.size; a++) {
      for (let b = a + 1; b < this.size; b++) {
        d = Math.max(d, Math.hypot(g[3 * a]! - g[3 * b]!, g[3 * a + 1]! - g[3 * b + 1]!, g[3 * a + 2]! - g[3 * b + 2]!));
      }
    }
    this.apertureM = d;
    return d;
  }

  /** Element field amplitude towards a global unit direction (the pattern in the local frame). */
  elementAmplitude(u: Readonly<Vec3>): number {
    return this.pattern.amplitude(applyInverseRotation(this.scratch, this.rotation, u));
  }

  /**
   * Plane-wave array response towards a global unit direction u (docs/conventions.md):
   * r_n = g(u_local) exp(+j k0 dot(u, p_n)), written interleaved re/im into `out` (length 2 N).
   * @example new AntennaArray(Float64Array.of(0, 0, 0)).response(new Float64Array(2), [1, 0, 0], 1) // [1, 0]
   */
  response(out: Float64Array, u: Readonly<Vec3>, k0: number): Float64Array {
    if (out.length < 2 * this.size) throw new RangeError(`AntennaArray.response(): out needs ${2 * this.size} values, got ${out.length}`);
    const g = this.elementAmplitude(u);
    const p = this.globalOffsets;
    const ux = u[0],
      uy = u[1],
      uz = u[2];
    for (let n = 0; n < this.size; n++) {
      const phase = k0 * (ux * p[3 * n]! + uy * p[3 * n + 1]! + uz * p[3 * n + 2]!);
      out[2 * n] = g * Math.cos(phase);
      out[2 * n + 1] = g * Math.sin(phase);
    }
    return out;
  }

  /**
   * Spherical-wave response to a source at `source` (global, relative to the array's reference
   * point): r_n = g (|q| / |q - p_n|) exp(-j k0 (|q - p_n| - |q|)), each element's own distance
   * in the amplitude (the 1/d of the free-space field) and the phase; the common delay and
   * spreading |q| are not counted twice. Tends to `response(q / |q|)` as |q| grows.
   */
  sphericalResponse(out: Float64Array, source: Readonly<Vec3>, k0: number): Float64Array {
    if (out.length < 2 * this.size) throw new RangeError(`AntennaArray.sphericalResponse(): out needs ${2 * this.size} values, got ${out.length}`);
    const range = Math.hypot(source[0], source[1], source[2]);
    if (!(range > 0)) throw new RangeError('AntennaArray.sphericalResponse(): the source sits on the reference point');
    const g = this.elementAmplitude([source[0] / range, source[1] / range, source[2] / range]);
    const p = this.globalOffsets;
    for (let n = 0; n < this.size; n++) {
      const d = Math.hypot(source[0] - p[3 * n]!, source[1] - p[3 * n + 1]!, source[2] - p[3 * n + 2]!);
      const phase = -k0 * (d - range);
      const a = (g * range) / d;
      out[2 * n] = a * Math.cos(phase);
      out[2 * n + 1] = a * Math.sin(phase);
    }
    return out;
  }
}

/**
 * Two ports per element: slant +45 / -45 degrees, or vertical / horizontal.
 * @example const ports: DualPolarization = 'slant45'; // p = 0 at +45 deg, p = 1 at -45 deg
 */
export type DualPolarization = 'slant45' | 'vh';

/**
 * The local polarisation unit vectors of the two ports of a dual-polarised element, in port
 * order: "slant45" gives p = 0 at +45 degrees (from local +z towards local +y) and p = 1 at
 * -45 degrees; "vh" gives p = 0 vertical (local +z) and p = 1 horizontal (local +y).
 * @example dualPolarizedPortVectors('vh') // [[0, 0, 1], [0, 1, 0]]
 */
export function dualPolarizedPortVectors(scheme: DualPolarization): Vec3[] {
  if (scheme === 'vh')
    return [
      [0, 0, 1],
      [0, 1, 0],
    ];
  if (scheme === 'slant45')
    return [
      [0, Math.SQRT1_2, Math.SQRT1_2],
      [0, -Math.SQRT1_2, Math.SQRT1_2],
    ];
  throw new TypeError(`dualPolarizedPortVectors(): scheme must be "slant45" or "vh", got ${JSON.stringify(scheme)}`);
}

function checkCount(fn: string, name: string, value: number): void {
  if (!Number.isInteger(value) || value < 1) throw new RangeError(`${fn}: ${name} must be an integer >= 1, got ${value}`);
}
