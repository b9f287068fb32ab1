/**
 * WGS-84 geodetic coordinates to Earth-centred Earth-fixed (ECEF) and to local east-north-up
 * (ENU) metres about an origin: the published closed forms (NIMA TR8350.2, WGS 84, sections 3
 * and 4; the ENU rotation as in any geodesy text, e.g. Hofmann-Wellenhof et al., GNSS, 2008).
 *   N = a / sqrt(1 - e^2 sin^2(lat)),  X = (N + h) cos(lat) cos(lon),  Y = (N + h) cos(lat) sin(lon),
 *   Z = (N (1 - e^2) + h) sin(lat);
 *   [e, n, u] = R(lat0, lon0) (P - P0) with rows [-sin lon0, cos lon0, 0],
 *   [-sin lat0 cos lon0, -sin lat0 sin lon0, cos lat0], [cos lat0 cos lon0, cos lat0 sin lon0, sin lat0].
 */

/**
 * WGS-84 semi-major axis a, metres.
 * @example WGS84_A // 6378137
 */
export const WGS84_A = 6378137;
/**
 * WGS-84 flattening f.
 * @example 1 / WGS84_F // 298.257223563
 */
export const WGS84_F = 1 / 298.257223563;
const E2 = WGS84_F * (2 - WGS84_F);

/**
 * A geodetic position: latitude and longitude in degrees (WGS-84), height above the ellipsoid in metres.
 * @example const origin: GeodeticPoint = { latitudeDeg: 48.8584, longitudeDeg: 2.2945, heightM: 35 };
 */
export interface GeodeticPoint {
  /** Geodetic latitude, degrees north, [-90, 90]. */
  latitudeDeg: number;
  /** Longitude, degrees east. */
  longitudeDeg: number;
  /** Default 0. */
  heightM?: number;
}

/**
 * ECEF [X, Y, Z] metres of a geodetic point.
 * @example geodeticToEcef({ latitudeDeg: 90, longitudeDeg: 0 })[2] // 6356752.314245179: the semi-minor axis b = a (1 - f)
 */
export function geodeticToEcef(p: GeodeticPoint): [number, number, number] {
  const lat = (p.latitudeDeg * Math.PI) / 180,
    lon = (p.longitudeDeg * Math.PI) / 180,
    h = p.heightM ?? 0;
  const s = Math.sin(lat),
    c = Math.cos(lat);
  const N = WGS84_A / Math.sqrt(1 - E2 * s * s);
  return [(N + h) * c * Math.cos(lon), (N + h) * c * Math.sin(lon), (N * (1 - E2) + h) * s];
}

/**
 * A converter from geodetic points to ENU metres about `origin` (its ECEF position and rotation computed once).
 * @example
 * const enu = new EnuFrame({ latitudeDeg: 0, longitudeDeg: 0 });
 * enu.fromGeodetic(0, 0, 100) // [0, 0, 100]: straight up at the origin
 */
export class EnuFrame {
  /** Where east = north = up = 0. */
  readonly origin: GeodeticPoint;
  private readonly o: [number, number, number];
  private readonly r: Float64Array;

  constructor(origin: GeodeticPoint) {
    const bad = ['latitudeDeg', 'longitudeDeg'].find((k) => !Number.isFinite((origin as unknown as Record<string, number>)[k]));
    if (bad !== undefined)
      throw new RangeError(`EnuFrame(): origin.${bad} must be a finite number of degrees, got ${String((origin as unknown as Record<string, unknown>)[bad])}`);
    if (Math.abs(origin.latitudeDeg) > 90) throw new RangeError(`EnuFrame(): origin.latitudeDeg must be within [-90, 90], got ${origin.latitudeDeg}`);
    this.origin = origin;
    this.o = geodeticToEcef(origin);
    const lat = (origin.latitudeDeg * Math.PI) / 180,
      lon = (origin.longitudeDeg * Math.PI) / 180;
    const sl = Math.sin(lat),
      cl = Math.cos(lat),
      so = Math.sin(lon),
      co = Math.cos(lon);
    this.r = Float64Array.of(-so, co, 0, -sl * co, -sl * so, cl, cl * co, cl * so, sl);
  }

  /**
   * [east, north, up] metres of a point given by latitude, longitude (degrees) and height (m).
   * @example new EnuFrame({ latitudeDeg: 45, longitudeDeg: 7 }).fromGeodetic(45, 7.001, 0)[0] // 78.847: 0.001 degree of longitude at 45 degrees north
   */
  fromGeodetic(latitudeDeg: number, longitudeDeg: number, heightM = 0): [number, number, number] {
    const p = geodeticToEcef({ latitudeDeg, longitudeDeg, heightM });
    const dx = p[0] - this.o[0],
      dy = p[1] - this.o[1],
      dz = p[2] - this.o[2],
      r = this.r;
    return [r[0]! * dx + r[1]! * dy + r[2]! * dz, r[3]! * dx + r[4]! * dy + r[5]! * dz, r[6]! * dx + r[7]! * dy + r[8]! * dz];
  }
}
