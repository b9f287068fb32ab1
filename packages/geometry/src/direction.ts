/**
 * Directions (docs/conventions.md): azimuth phi from +x towards +y in (-180, 180] degrees, elevation
 * theta from the horizontal plane, positive up, in [-90, 90];
 * u = [cos(theta) cos(phi), cos(theta) sin(phi), sin(theta)].
 */
import { DEG } from './constants.js';
import type { Vec3 } from './vec3.js';

/**
 * A direction as [azimuth, elevation] in degrees.
 * @example const down: AnglesDeg = [30, -10]; // azimuth 30 deg, 10 deg below the horizontal
 */
export type AnglesDeg = [number, number];

/**
 * Unit vector of a direction given in degrees.
 * @example unitFromDeg(90, 0) // [6.1e-17, 1, 0]
 */
export function unitFromDeg(azimuthDeg: number, elevationDeg: number, out: Vec3 = [0, 0, 0]): Vec3 {
  const p = azimuthDeg * DEG,
    t = elevationDeg * DEG;
  const ct = Math.cos(t);
  out[0] = ct * Math.cos(p);
  out[1] = ct * Math.sin(p);
  out[2] = Math.sin(t);
  return out;
}

/**
 * [azimuth, elevation] in degrees of a (not necessarily unit) vector; azimuth in (-180, 180].
 * @example degFromVector([0, -1, 1]) // [-90, 45]
 */
export function degFromVector(v: Readonly<Vec3>): AnglesDeg {
  const h = Math.hypot(v[0], v[1]);
  let az = Math.atan2(v[1], v[0]) / DEG;
  if (az <= -180) az += 360;
  const el = Math.atan2(v[2], h) / DEG;
  return [h === 0 ? 0 : az, el];
}
