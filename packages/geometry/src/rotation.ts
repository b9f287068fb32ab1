/**
 * Rotations as 3x3 matrices stored row-major in a Float64Array(9): element (i, j) at 3 i + j.
 * Orientation convention (docs/conventions.md): R = Rz(yaw) Ry(pitch) Rx(roll), local to global.
 */
import { DEG } from './constants.js';
import type { Vec3 } from './vec3.js';

/**
 * Orientation of an array or terminal in degrees; each angle defaults to 0.
 * @example const tilted: Orientation = { yawDeg: 90, pitchDeg: 10 }; // faces +y, boresight 10 deg down
 */
export interface Orientation {
  /** Rotation about global z (from +x towards +y). */
  yawDeg?: number;
  /** Rotation about the new y; positive tilts the boresight (local +x) down. */
  pitchDeg?: number;
  /** Rotation about the new x (the boresight). */
  rollDeg?: number;
}

/**
 * A 3x3 rotation, row-major.
 * @example const flip: Mat3 = Float64Array.of(-1, 0, 0, 0, -1, 0, 0, 0, 1); // yaw 180 deg
 */
export type Mat3 = Float64Array;

/**
 * The identity rotation.
 * @example identity() // Float64Array [1, 0, 0, 0, 1, 0, 0, 0, 1]
 */
export function identity(): Mat3 {
  return Float64Array.of(1, 0, 0, 0, 1, 0, 0, 0, 1);
}

/**
 * R = Rz(yaw) Ry(pitch) Rx(roll), mapping local coordinates to global ones.
 * @example applyRotation([0, 0, 0], rotationFromOrientation({ pitchDeg: 30 }), [1, 0, 0])
 * // [0.866..., 0, -0.5]: boresight tilted 30 degrees down
 */
export function rotationFromOrientation(o: Orientation = {}): Mat3 {
  const a = (o.yawDeg ?? 0) * DEG,
    b = (o.pitchDeg ?? 0) * DEG,
    g = (o.rollDeg ?? 0) * DEG;
  const ca = Math.cos(a),
    sa = Math.sin(a),
    cb = Math.cos(b),
    sb = Math.sin(b),
    cg = Math.cos(g),
    sg = Math.sin(g);
  return Float64Array.of(
    ca * cb,
    ca * sb * sg - sa * cg,
    ca * sb * cg + sa * sg,
    sa * cb,
    sa * sb * sg + ca * cg,
    sa * sb * cg - ca * sg,
    -sb,
    cb * sg,
    cb * cg,
  );
}

/**
 * out = R v (local to global when R is an orientation).
 * @example applyRotation([0, 0, 0], rotationFromOrientation({ yawDeg: 90 }), [1, 0, 0]) // [6.1e-17, 1, 0]: local +x points along global +y
 */
export function applyRotation(out: Vec3, r: Mat3, v: Readonly<Vec3>): Vec3 {
  const x = v[0],
    y = v[1],
    z = v[2];
  out[0] = r[0]! * x + r[1]! * y + r[2]! * z;
  out[1] = r[3]! * x + r[4]! * y + r[5]! * z;
  out[2] = r[6]! * x + r[7]! * y + r[8]! * z;
  return out;
}

/**
 * out = R^T v (global to local when R is an orientation).
 * @example applyInverseRotation([0, 0, 0], rotationFromOrientation({ yawDeg: 90 }), [0, 1, 0]) // [1, 6.1e-17, 0]: global +y is the local boresight
 */
export function applyInverseRotation(out: Vec3, r: Mat3, v: Readonly<Vec3>): Vec3 {
  const x = v[0],
    y = v[1],
    z = v[2];
  out[0] = r[0]! * x + r[3]! * y + r[6]! * z;
  out[1] = r[1]! * x + r[4]! * y + r[7]! * z;
  out[2] = r[2]! * x + r[5]! * y + r[8]! * z;
  return out;
}
