/**
 * Three-vectors as plain tuples, with `op(out, a, b)` functions that write into `out`
 * and return it; inputs are read first, so `out` may alias an input.
 */

/**
 * A point or direction in metres (or a unit vector), [x, y, z].
 * @example const p: Vec3 = [22, 9, 1.5]; // 22 m along x, 9 m along y, 1.5 m up
 */
export type Vec3 = [number, number, number];

/**
 * A new vector, zero unless given.
 * @example vec3() // [0, 0, 0]
 */
export function vec3(x = 0, y = 0, z = 0): Vec3 {
  return [x, y, z];
}

/**
 * out = a + b
 * @example add([0, 0, 0], [1, 2, 3], [10, 20, 30]) // [11, 22, 33]
 */
export function add(out: Vec3, a: Readonly<Vec3>, b: Readonly<Vec3>): Vec3 {
  const x = a[0] + b[0],
    y = a[1] + b[1],
    z = a[2] + b[2];
  out[0] = x;
  out[1] = y;
  out[2] = z;
  return out;
}

/**
 * out = a - b
 * @example sub([0, 0, 0], [22, 9, 1.5], [0, 0, 6]) // [22, 9, -4.5]
 */
export function sub(out: Vec3, a: Readonly<Vec3>, b: Readonly<Vec3>): Vec3 {
  const x = a[0] - b[0],
    y = a[1] - b[1],
    z = a[2] - b[2];
  out[0] = x;
  out[1] = y;
  out[2] = z;
  return out;
}

/**
 * out = a * s
 * @example scale([0, 0, 0], [1, -2, 0.5], 2) // [2, -4, 1]
 */
export function scale(out: Vec3, a: Readonly<Vec3>, s: number): Vec3 {
  out[0] = a[0] * s;
  out[1] = a[1] * s;
  out[2] = a[2] * s;
  return out;
}

/** Dot product. @example dot([1, 2, 3], [4, 5, 6]) // 32 */
export function dot(a: Readonly<Vec3>, b: Readonly<Vec3>): number {
  return a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
}

/**
 * out = a x b
 * @example cross([0, 0, 0], [1, 0, 0], [0, 1, 0]) // [0, 0, 1]
 */
export function cross(out: Vec3, a: Readonly<Vec3>, b: Readonly<Vec3>): Vec3 {
  const x = a[1] * b[2] - a[2] * b[1];
  const y = a[2] * b[0] - a[0] * b[2];
  const z = a[0] * b[1] - a[1] * b[0];
  out[0] = x;
  out[1] = y;
  out[2] = z;
  return out;
}

/** Euclidean length. @example norm([3, 4, 0]) // 5 */
export function norm(a: Readonly<Vec3>): number {
  return Math.hypot(a[0], a[1], a[2]);
}

/**
 * Distance between two points.
 * @example distance([0, 0, 6], [3, 4, 6]) // 5
 */
export function distance(a: Readonly<Vec3>, b: Readonly<Vec3>): number {
  return Math.hypot(a[0] - b[0], a[1] - b[1], a[2] - b[2]);
}

/**
 * out = a / |a|; throws RangeError for the zero vector.
 * @example normalize([0, 0, 0], [0, 3, 4]) // [0, 0.6, 0.8]
 */
export function normalize(out: Vec3, a: Readonly<Vec3>): Vec3 {
  const n = norm(a);
  if (!(n > 0)) throw new RangeError('normalize(): cannot normalise a zero-length vector');
  return scale(out, a, 1 / n);
}
