/**
 * Element patterns: the field amplitude g(u_local) of one element towards a direction given
 * in the array's own frame (boresight local +x). A pattern in dBi, A, is the amplitude 10^(A/20).
 */
import { DEG } from './constants.js';
import { degFromVector } from './direction.js';
import type { Vec3 } from './vec3.js';

/**
 * Field amplitude of one element towards a local unit direction.
 * @example const halfSpace: ElementPattern = { name: 'front', amplitude: (u) => (u[0] > 0 ? 1 : 0) };
 * halfSpace.amplitude([-1, 0, 0]) // 0
 */
export interface ElementPattern {
  /** Short name recorded in metadata, e.g. "isotropic". */
  readonly name: string;
  /** Field amplitude (linear, not dB) towards the local unit vector `uLocal`. */
  amplitude(uLocal: Readonly<Vec3>): number;
}

/**
 * The isotropic element: unit amplitude everywhere.
 * @example isotropic.amplitude([0, 0, -1]) // 1
 */
export const isotropic: ElementPattern = Object.freeze({
  name: 'isotropic',
  amplitude: (): number => 1,
});

/**
 * Gain in dBi of the directional element of 3GPP TR 38.901 Table 7.3-1: 65 degree half-power
 * beamwidths, 30 dB front-to-back and side-lobe limits, 8 dBi at boresight.
 * Elevation is measured from the horizontal, so the table's (theta'' - 90) is -elevation.
 * @example sectorElementGainDbi(0, 0) // 8
 */
export function sectorElementGainDbi(azimuthDeg: number, elevationDeg: number): number {
  const vertical = -Math.min(12 * (elevationDeg / 65) ** 2, 30);
  const horizontal = -Math.min(12 * (azimuthDeg / 65) ** 2, 30);
  return 8 - Math.min(-(vertical + horizontal), 30);
}

/**
 * The 38.901 Table 7.3-1 element as a pattern (field amplitude 10^(A/20)).
 * @example sector38901.amplitude([1, 0, 0]) // 2.512 (8 dBi at boresight)
 * sector38901.amplitude([-1, 0, 0]) // 0.0794 (-22 dBi: 30 dB below boresight)
 */
export const sector38901: ElementPattern = Object.freeze({
  name: '3gpp-38.901',
  amplitude(uLocal: Readonly<Vec3>): number {
    const [az, el] = degFromVector(uLocal);
    return 10 ** (sectorElementGainDbi(az, el) / 20);
  },
});

/**
 * A pattern tabulated by the user on a regular grid of local azimuth and elevation (degrees),
 * gains in dBi, row-major [elevation][azimuth], interpolated bilinearly.
 * @example
 * const table = tabulatedPattern([-90, 90], [-90, 90], [[0, 6], [0, 6]]);
 * table.amplitude([1, 0, 0]) // 1.413 (3 dBi, halfway between 0 and 6 dBi)
 */
export function tabulatedPattern(azimuthsDeg: readonly number[], elevationsDeg: readonly number[], gainsDbi: readonly (readonly number[])[]): ElementPattern {
  const checkAxis = (axis: readonly number[], name: string): void => {
    if (axis.length < 2) throw new RangeError(`tabulatedPattern(): ${name} needs at least 2 values, got ${axis.length}`);
    for (let i = 1; i < axis.length; i++) {
      if (!(axis[i]! > axis[i - 1]!)) throw new RangeError(`tabulatedPattern(): ${name} must increase, got ${axis[i - 1]} then ${axis[i]}`);
    }
  };
  checkAxis(azimuthsDeg, 'azimuthsDeg');
  checkAxis(elevationsDeg, 'elevationsDeg');
  if (gainsDbi.length !== elevationsDeg.length || gainsDbi.some((row) => row.length !== azimuthsDeg.length)) {
    throw new RangeError(`tabulatedPattern(): gainsDbi must be ${elevationsDeg.length} rows of ${azimuthsDeg.length} values`);
  }
  const locate = (axis: readonly number[], x: number): [number, number] => {
    const last = axis.length - 1;
    if (x <= axis[0]!) return [0, 0];
    if (x >= axis[last]!) return [last - 1, 1];
    let i = 0;
    while (axis[i + 1]! < x) i++;
    return [i, (x - axis[i]!) / (axis[i + 1]! - axis[i]!)];
  };
  return Object.freeze({
    name: 'table',
    amplitude(uLocal: Readonly<Vec3>): number {
      const [az, el] = degFromVector(uLocal);
      const [i, fi] = locate(azimuthsDeg, az);
      const [j, fj] = locate(elevationsDeg, el);
      const g = (jj: number, ii: number): number => gainsDbi[jj]![ii]!;
      const dbi = (1 - fj) * ((1 - fi) * g(j, i) + fi * g(j, i + 1)) + fj * ((1 - fi) * g(j + 1, i) + fi * g(j + 1, i + 1));
      return 10 ** (dbi / 20);
    },
  });
}

/**
 * Degrees per radian, re-exported for pattern authors.
 * @example RAD_TO_DEG * Math.PI // 180
 */
export const RAD_TO_DEG = 1 / DEG;
