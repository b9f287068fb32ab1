/**
 * Building footprints from GeoJSON (RFC 7946): Polygon and MultiPolygon features with a height
 * property, extruded into vertical facades (one quadrilateral per ring edge) and a flat roof,
 * standing on the plane z = 0. Positions are [longitude, latitude(, altitude)] in WGS-84 degrees
 * (RFC 7946 section 4), converted to east-north-up metres about a stated origin (geodesy.ts):
 * x = east, y = north; the footprint's base is put at z = 0 and the roof at z = height (the
 * Earth's curvature under the footprint is not followed: about 0.08 m of drop 1 km away).
 * Holes (inner rings) are refused: a roof with a hole is not one polygon.
 */
import { MATERIAL_NAMES, type MaterialSpec } from '../materials.js';
import type { Wall } from '../scene.js';
import { EnuFrame, type GeodeticPoint } from './geodesy.js';

/**
 * Refused import input: the file, the element (a dotted path inside it) and why.
 * @example new ImportError('block.geojson', 'features[2].geometry.coordinates[0]', 'the ring is not closed').message // 'block.geojson: features[2].geometry.coordinates[0]: the ring is not closed'
 */
export class ImportError extends Error {
  /** The file as named by the caller. */
  readonly file: string;
  /** The element inside it (a dotted path, a line, a vertex or a triangle), or '' for the whole file. */
  readonly element: string;
  /** Why it is refused. */
  readonly reason: string;

  constructor(file: string, element: string, reason: string) {
    super(`${file}: ${element === '' ? '' : `${element}: `}${reason}`);
    this.name = 'ImportError';
    this.file = file;
    this.element = element;
    this.reason = reason;
  }
}

/**
 * How footprints become walls.
 * @example const options: FootprintOptions = { origin: { latitudeDeg: 52.52, longitudeDeg: 13.405 }, heightProperty: 'height', materials: { glass: 'glass' }, materialProperty: 'facade' };
 */
export interface FootprintOptions {
  /** The ENU origin: where x = y = 0. */
  origin: GeodeticPoint;
  /** Feature property holding the height in metres (default "height"). */
  heightProperty?: string;
  /** Height for features without the property (default: such a feature is refused). */
  defaultHeightM?: number;
  /** Feature property naming the material (its value looked up in `materials`, else used as a material name). */
  materialProperty?: string;
  /** Property values to materials. */
  materials?: Readonly<Record<string, MaterialSpec>>;
  /** Material of features without a material property (default: the scene's default, concrete). */
  material?: MaterialSpec;
  /** Flat roofs (default true). */
  roofs?: boolean;
}

type Json = unknown;
const fmt = (v: unknown): string => JSON.stringify(v) ?? String(v);

/**
 * Walls (facades, then the roof, feature by feature) of the footprints in a GeoJSON text or
 * object; `file` names it in errors. Throws ImportError for broken input.
 * @example
 * const square = { type: 'Feature', properties: { height: 10 }, geometry: { type: 'Polygon', coordinates: [[[0, 0], [0.0001, 0], [0.0001, 0.0001], [0, 0.0001], [0, 0]]] } };
 * wallsFromGeoJson({ type: 'FeatureCollection', features: [square] }, { origin: { latitudeDeg: 0, longitudeDeg: 0 } }).length // 5: four facades and a roof
 */
export function wallsFromGeoJson(input: string | Json, options: FootprintOptions, file = 'GeoJSON input'): Wall[] {
  let doc: Json = input;
  if (typeof input === 'string') {
    try {
      doc = JSON.parse(input);
    } catch (e) {
      throw new ImportError(file, '', `is not JSON (${(e as Error).message}); a GeoJSON file (RFC 7946) was expected`);
    }
  }
  const enu = new EnuFrame(options.origin);
  const hp = options.heightProperty ?? 'height';
  const walls: Wall[] = [];
  const o = doc as { type?: unknown; features?: unknown };
  let features: { f: Json; path: string }[];
  if (typeof o !== 'object' || o === null) throw new ImportError(file, '', `must be a GeoJSON object, got ${fmt(o)}`);
  if (o.type === 'FeatureCollection') {
    if (!Array.isArray(o.features)) throw new ImportError(file, 'features', `must be an array of features, got ${fmt(o.features)}`);
    features = o.features.map((f, i) => ({ f, path: `features[${i}]` }));
  } else if (o.type === 'Feature') features = [{ f: o, path: '' }];
  else throw new ImportError(file, 'type', `must be "FeatureCollection" or "Feature" (GeoJSON, RFC 7946), got ${fmt(o.type)}`);

  for (const { f, path } of features) {
    const at = (s: string): string => (path === '' ? s : `${path}.${s}`);
    const feat = f as { type?: unknown; properties?: Record<string, unknown> | null; geometry?: { type?: unknown; coordinates?: unknown } | null };
    if (typeof feat !== 'object' || feat === null || feat.type !== 'Feature')
      throw new ImportError(file, path === '' ? 'type' : path, `must be a GeoJSON Feature, got ${fmt(feat?.type ?? feat)}`);
    const props = feat.properties ?? {};
    let height = props[hp];
    if (height === undefined || height === null) {
      if (options.defaultHeightM === undefined)
        throw new ImportError(file, at(`properties.${hp}`), 'is missing: every footprint needs a height in metres (or give defaultHeightM)');
      height = options.defaultHeightM;
    }
    if (typeof height !== 'number' || !Number.isFinite(height) || height <= 0)
      throw new ImportError(file, at(`properties.${hp}`), `must be a finite number of metres > 0, got ${fmt(height)}`);
    let material: MaterialSpec | undefined = options.material;
    if (options.materialProperty !== undefined && props[options.materialProperty] !== undefined) {
      const v = props[options.materialProperty];
      if (typeof v !== 'string') throw new ImportError(file, at(`properties.${options.materialProperty}`), `must be a string naming a material, got ${fmt(v)}`);
      const mapped = options.materials?.[v];
      if (mapped === undefined && !(MATERIAL_NAMES as readonly string[]).includes(v)) {
        throw new ImportError(
          file,
          at(`properties.${options.materialProperty}`),
          `${fmt(v)} is neither a key of the materials mapping nor one of ${MATERIAL_NAMES.join(', ')}`,
        );
      }
      material = mapped ?? (v as MaterialSpec);
    }
    const g = feat.geometry;
    if (typeof g !== 'object' || g === null) throw new ImportError(file, at('geometry'), `must be a Polygon or MultiPolygon geometry, got ${fmt(g)}`);
    let polygons: { rings: unknown; path: string }[];
    if (g.type === 'Polygon') polygons = [{ rings: g.coordinates, path: at('geometry.coordinates') }];
    else if (g.type === 'MultiPolygon') {
      if (!Array.isArray(g.coordinates)) throw new ImportError(file, at('geometry.coordinates'), `must be an array of polygons, got ${fmt(g.coordinates)}`);
      polygons = g.coordinates.map((rings, i) => ({ rings, path: at(`geometry.coordinates[${i}]`) }));
    } else throw new ImportError(file, at('geometry.type'), `must be "Polygon" or "MultiPolygon" (a building footprint), got ${fmt(g.type)}`);
    for (const { rings, path: pp } of polygons) {
      if (!Array.isArray(rings) || rings.length === 0) throw new ImportError(file, pp, `must be an array of linear rings, got ${fmt(rings)}`);
      if (rings.length > 1)
        throw new ImportError(
          file,
          `${pp}[1]`,
          'is a hole (inner ring): footprints with holes are not supported (a roof with a hole is not one polygon); split the footprint',
        );
      const ring = rings[0] as unknown;
      const rp = `${pp}[0]`;
      if (!Array.isArray(ring) || ring.length < 4)
        throw new ImportError(
          file,
          rp,
          `must be a closed linear ring of at least 4 positions (RFC 7946 section 3.1.6), got ${Array.isArray(ring) ? `${ring.length} positions` : fmt(ring)}`,
        );
      const xy: [number, number][] = [];
      ring.forEach((pos: unknown, j: number) => {
        if (!Array.isArray(pos) || pos.length < 2 || pos.length > 3 || !pos.every((c) => typeof c === 'number' && Number.isFinite(c))) {
          throw new ImportError(
            file,
            `${rp}[${j}]`,
            `must be a position [longitude, latitude] or [longitude, latitude, altitude] of finite numbers, got ${fmt(pos)}`,
          );
        }
        const [lon, lat] = pos as [number, number];
        if (Math.abs(lat) > 90 || Math.abs(lon) > 180)
          throw new ImportError(file, `${rp}[${j}]`, `must have longitude within [-180, 180] and latitude within [-90, 90] degrees, got ${fmt(pos)}`);
        const e = enu.fromGeodetic(lat, lon, 0);
        xy.push([e[0], e[1]]);
      });
      const first = ring[0] as number[],
        last = ring[ring.length - 1] as number[];
      if (first[0] !== last[0] || first[1] !== last[1])
        throw new ImportError(file, rp, `the ring is not closed: first position ${fmt(first)} differs from the last ${fmt(last)} (RFC 7946 section 3.1.6)`);
      xy.pop();
      // drop repeated consecutive positions (a zero-length edge has no facade)
      const pts = xy.filter((p, j) => {
        const q = xy[(j + xy.length - 1) % xy.length]!;
        return Math.hypot(p[0] - q[0], p[1] - q[1]) > 1e-6;
      });
      let area = 0;
      for (let j = 0; j < pts.length; j++) {
        const p = pts[j]!,
          q = pts[(j + 1) % pts.length]!;
        area += p[0] * q[1] - q[0] * p[1];
      }
      if (pts.length < 3 || !(Math.abs(area) / 2 > 1e-6))
        throw new ImportError(
          file,
          rp,
          `the ring encloses no area (${pts.length} distinct positions, area ${(Math.abs(area) / 2).toPrecision(3)} m^2): a footprint needs a polygon of non-zero area`,
        );
      const mat = material === undefined ? {} : { material };
      for (let j = 0; j < pts.length; j++) {
        const p = pts[j]!,
          q = pts[(j + 1) % pts.length]!;
        walls.push({
          vertices: [
            [p[0], p[1], 0],
            [q[0], q[1], 0],
            [q[0], q[1], height],
            [p[0], p[1], height],
          ],
          ...mat,
        });
      }
      if (options.roofs ?? true) walls.push({ vertices: pts.map((p) => [p[0], p[1], height as number]), ...mat });
    }
  }
  return walls;
}
