import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { hasPython } from '../../../test/support/python.js';
import { EnuFrame, geodeticToEcef, WGS84_A } from '../src/scene/import/geodesy.js';
import { ImportError, wallsFromGeoJson } from '../src/scene/import/geojson.js';
import { wallsFromMesh } from '../src/scene/import/mesh.js';
import { readObj } from '../src/scene/import/obj.js';
import { prepareScene, type Wall } from '../src/scene/scene.js';
import { traceScene } from '../src/scene/tracer.js';

const feature = (coordinates: unknown, properties: Record<string, unknown> = { height: 12 }, type = 'Polygon') => ({
  type: 'Feature',
  properties,
  geometry: { type, coordinates },
});
const square = [
  [
    [13.4, 52.5],
    [13.4003, 52.5],
    [13.4003, 52.5002],
    [13.4, 52.5002],
    [13.4, 52.5],
  ],
];
const origin = { latitudeDeg: 52.5, longitudeDeg: 13.4 };

describe('WGS-84 geodetic -> ECEF -> ENU', () => {
  it("meets the ellipsoid's defining values (V: NIMA TR8350.2, WGS 84, table 3.1: a = 6378137 m, b = 6356752.3142 m)", () => {
    expect(geodeticToEcef({ latitudeDeg: 0, longitudeDeg: 0 })).toEqual([WGS84_A, 0, 0]);
    expect(geodeticToEcef({ latitudeDeg: 0, longitudeDeg: 90 })[1]).toBeCloseTo(WGS84_A, 6);
    expect(geodeticToEcef({ latitudeDeg: 90, longitudeDeg: 0 })[2]).toBeCloseTo(6356752.3142, 4);
    expect(geodeticToEcef({ latitudeDeg: -90, longitudeDeg: 0, heightM: 100 })[2]).toBeCloseTo(-6356852.3142, 4);
  });

  it('reproduces the worked examples of IOGP Guidance Note 7-2 (EPSG methods 9602 and 9836; M: values from memory, confirmed by numpy to the digits quoted)', () => {
    // Method 9602 (geographic/geocentric), WGS 84: 53 deg 48' 33.820" N, 2 deg 07' 46.380" E, h = 73.0 m
    // -> X = 3771793.968 m, Y = 140253.342 m, Z = 5124304.349 m.
    const lat = 53 + 48 / 60 + 33.82 / 3600,
      lon = 2 + 7 / 60 + 46.38 / 3600;
    const xyz = geodeticToEcef({ latitudeDeg: lat, longitudeDeg: lon, heightM: 73 });
    [3771793.968, 140253.342, 5124304.349].forEach((want, k) => expect(Math.abs(xyz[k]! - want)).toBeLessThan(1e-3));
    // Method 9836 (geocentric/topocentric): origin 55 N, 5 E, h0 = 200 m (X0 = 3652755.3058, Y0 = 319574.6799,
    // Z0 = 5201547.3536) and the point above, given there rounded to the centimetre, -> east -189013.869 m,
    // north -128642.040 m, up -4220.171 m. The example's point is the rounded ECEF, so allow 5 mm.
    const origin = geodeticToEcef({ latitudeDeg: 55, longitudeDeg: 5, heightM: 200 });
    [3652755.3058, 319574.6799, 5201547.3536].forEach((want, k) => expect(Math.abs(origin[k]! - want)).toBeLessThan(1e-4));
    const enu = new EnuFrame({ latitudeDeg: 55, longitudeDeg: 5, heightM: 200 }).fromGeodetic(lat, lon, 73);
    [-189013.869, -128642.04, -4220.171].forEach((want, k) => expect(Math.abs(enu[k]! - want)).toBeLessThan(5e-3));
  });

  it.runIf(hasPython('numpy'))('agrees with an independent numpy computation of the same published formulas (C: numpy, to 1 mm)', () => {
    const pts = [
      [52.5, 13.4, 0, 52.5012, 13.4031, 35],
      [-33.86, 151.21, 20, -33.87, 151.2, 5],
      [0.5, -78.3, 2800, 0.49, -78.31, 2750],
      [78.2, 15.6, 0, 78.21, 15.7, 10],
    ];
    const py = `
import json, sys, numpy as np
a = 6378137.0; f = 1 / 298.257223563; e2 = f * (2 - f)
def ecef(lat, lon, h):
    lat, lon = np.radians(lat), np.radians(lon)
    n = a / np.sqrt(1 - e2 * np.sin(lat) ** 2)
    return np.array([(n + h) * np.cos(lat) * np.cos(lon), (n + h) * np.cos(lat) * np.sin(lon), (n * (1 - e2) + h) * np.sin(lat)])
out = []
for lat0, lon0, h0, lat, lon, h in json.load(sys.stdin):
    p, l = np.radians(lat0), np.radians(lon0)
    r = np.array([[-np.sin(l), np.cos(l), 0], [-np.sin(p) * np.cos(l), -np.sin(p) * np.sin(l), np.cos(p)], [np.cos(p) * np.cos(l), np.cos(p) * np.sin(l), np.sin(p)]])
    out.append(list(r @ (ecef(lat, lon, h) - ecef(lat0, lon0, h0))))
print(json.dumps(out))`;
    const want = JSON.parse(execFileSync('/usr/bin/python3', ['-c', py], { input: JSON.stringify(pts) }).toString()) as number[][];
    pts.forEach(([lat0, lon0, h0, lat, lon, h], i) => {
      const got = new EnuFrame({ latitudeDeg: lat0!, longitudeDeg: lon0!, heightM: h0! }).fromGeodetic(lat!, lon!, h!);
      for (let k = 0; k < 3; k++) expect(Math.abs(got[k]! - want[i]![k]!)).toBeLessThan(1e-3);
    });
    // a sanity figure beside it: 0.001 degree of longitude at 45 N is a cos(45) N(45) pi / 180e3 = 78.85 m (M: textbook)
    expect(new EnuFrame({ latitudeDeg: 45, longitudeDeg: 7 }).fromGeodetic(45, 7.001, 0)[0]).toBeCloseTo(78.847, 3);
  });

  it("refuses an origin outside the ellipsoid's coordinates", () => {
    expect(() => new EnuFrame({ latitudeDeg: 91, longitudeDeg: 0 })).toThrow('EnuFrame(): origin.latitudeDeg must be within [-90, 90], got 91');
    expect(() => new EnuFrame({ latitudeDeg: Number.NaN, longitudeDeg: 0 })).toThrow(
      'EnuFrame(): origin.latitudeDeg must be a finite number of degrees, got NaN',
    );
  });
});

describe('GeoJSON footprints', () => {
  it('extrude a footprint into one facade per edge and a flat roof, in ENU metres about the origin', () => {
    const walls = wallsFromGeoJson(
      { type: 'FeatureCollection', features: [feature(square, { height: 12, kind: 'glazed' })] },
      { origin, materialProperty: 'kind', materials: { glazed: 'glass' } },
    );
    expect(walls).toHaveLength(5);
    const enu = new EnuFrame(origin);
    const [x1, y1] = enu.fromGeodetic(52.5, 13.4003),
      [x2, y2] = enu.fromGeodetic(52.5002, 13.4003);
    expect(walls[1]!.vertices).toEqual([
      [x1, y1, 0],
      [x2, y2, 0],
      [x2, y2, 12],
      [x1, y1, 12],
    ]);
    expect(walls[4]!.vertices.every((v) => v[2] === 12)).toBe(true);
    expect(walls.every((w) => w.material === 'glass')).toBe(true);
    // 0.0003 degree of longitude at 52.5 N is about 20.36 m (M: a cos(lat) dlon, spherical estimate to 0.3 %)
    expect(x1! / 20.36).toBeCloseTo(1, 2);
    expect(() => prepareScene({ walls })).not.toThrow();
  });

  it('mix with hand-typed walls, and reflect like the same walls typed by hand (bit-identical paths)', () => {
    const imported = wallsFromGeoJson(feature(square), { origin, roofs: false });
    const typed: Wall[] = imported.map((w) => ({ vertices: w.vertices.map((v) => [v[0]!, v[1]!, v[2]!]) }));
    const ground: Wall = {
      vertices: [
        [-50, -50, 0],
        [80, -50, 0],
        [80, 80, 0],
        [-50, 80, 0],
      ],
    };
    const tx = { position: [-10, 5, 5] as [number, number, number] },
      rx = { position: [-10, 15, 1.5] as [number, number, number] }; // both before the west facade
    const a = traceScene({ walls: [...imported, ground], maxReflectionOrder: 2 }, tx, rx, 28e9).paths;
    const b = traceScene({ walls: [...typed, ground], maxReflectionOrder: 2 }, tx, rx, 28e9).paths;
    expect(a.length).toBeGreaterThan(2);
    expect(a).toEqual(b);
  });

  it('refuse broken input naming the file and the element', () => {
    const f = 'block.geojson';
    const open = [
      [
        [13.4, 52.5],
        [13.4003, 52.5],
        [13.4003, 52.5002],
        [13.4, 52.5002],
      ],
    ];
    expect(() => wallsFromGeoJson(feature(open), { origin }, f)).toThrow(
      new ImportError(
        f,
        'geometry.coordinates[0]',
        'the ring is not closed: first position [13.4,52.5] differs from the last [13.4,52.5002] (RFC 7946 section 3.1.6)',
      ),
    );
    const nan = [
      [
        [13.4, 52.5],
        [13.4003, null],
        [13.4003, 52.5002],
        [13.4, 52.5],
      ],
    ];
    expect(() => wallsFromGeoJson({ type: 'FeatureCollection', features: [feature(square), feature(nan)] }, { origin }, f)).toThrow(
      'block.geojson: features[1].geometry.coordinates[0][1]: must be a position [longitude, latitude] or [longitude, latitude, altitude] of finite numbers, got [13.4003,null]',
    );
    expect(() => wallsFromGeoJson(feature([...square, square[0]]), { origin }, f)).toThrow('block.geojson: geometry.coordinates[1]: is a hole (inner ring)');
    expect(() => wallsFromGeoJson(feature(square, {}), { origin }, f)).toThrow(
      'block.geojson: properties.height: is missing: every footprint needs a height in metres (or give defaultHeightM)',
    );
    expect(() => wallsFromGeoJson(feature(square, { height: -3 }), { origin }, f)).toThrow(
      'block.geojson: properties.height: must be a finite number of metres > 0, got -3',
    );
    const line = [
      [
        [13.4, 52.5],
        [13.4003, 52.5],
        [13.4, 52.5],
        [13.4, 52.5],
      ],
    ]; // there and back: no area
    expect(() => wallsFromGeoJson(feature(line), { origin }, f)).toThrow('block.geojson: geometry.coordinates[0]: the ring encloses no area');
    expect(() => wallsFromGeoJson('v 0 0 0\nf 1 2 3', { origin }, 'hall.obj')).toThrow(/^hall\.obj: is not JSON .*a GeoJSON file \(RFC 7946\) was expected$/s);
    expect(() => wallsFromGeoJson({ type: 'Topology' }, { origin }, f)).toThrow(
      'block.geojson: type: must be "FeatureCollection" or "Feature" (GeoJSON, RFC 7946), got "Topology"',
    );
    expect(() => wallsFromGeoJson(feature([13.4, 52.5], { height: 3 }, 'Point'), { origin }, f)).toThrow(
      'block.geojson: geometry.type: must be "Polygon" or "MultiPolygon" (a building footprint), got "Point"',
    );
    expect(() => wallsFromGeoJson(feature(square, { height: 3, m: 'cheese' }), { origin, materialProperty: 'm' }, f)).toThrow(
      'block.geojson: properties.m: "cheese" is neither a key of the materials mapping nor one of concrete, glass, wood, plasterboard, brick, metal',
    );
  });
});

describe('OBJ meshes', () => {
  const box = [
    '# a 4 x 3 m wall pair',
    'o hall',
    'v 0 0 0',
    'v 4 0 0',
    'v 4 0 3',
    'v 0 0 3',
    'v 0 6 0',
    'v 4 6 0',
    'v 4 6 3',
    'v 0 6 3',
    'usemtl glazing',
    'f 1 2 3 4',
    'usemtl plaster',
    'f 5/1/1 6/2/1 7/3/1',
    'f -4 -2 -1',
  ].join('\n');
  it('become one wall per triangle, materials by group, unit and up axis applied', () => {
    const mesh = readObj(box, 'hall.obj');
    expect(mesh.indices).toEqual([0, 1, 2, 0, 2, 3, 4, 5, 6, 4, 6, 7]);
    expect(mesh.groups).toEqual([
      { name: 'glazing', firstTriangle: 0, triangles: 2 },
      { name: 'plaster', firstTriangle: 2, triangles: 2 },
    ]);
    const walls = wallsFromMesh(mesh, { materials: { glazing: 'glass', plaster: 'plasterboard' } }, 'hall.obj');
    expect(walls.map((w) => w.material)).toEqual(['glass', 'glass', 'plasterboard', 'plasterboard']);
    const yUp = wallsFromMesh(mesh, { unit: 'cm', upAxis: 'y' });
    expect(yUp[0]!.vertices).toEqual([
      [0, 0, 0],
      [0.04, 0, 0],
      [0.04, -0.03, 0],
    ]); // file z = 0, 3 m -> scene y = 0, -0.03 m
  });

  it('reflect exactly like the same triangles typed by hand (bit-identical paths)', () => {
    const walls = wallsFromMesh(readObj(box));
    const typed: Wall[] = [
      {
        vertices: [
          [0, 0, 0],
          [4, 0, 0],
          [4, 0, 3],
        ],
      },
      {
        vertices: [
          [0, 0, 0],
          [4, 0, 3],
          [0, 0, 3],
        ],
      },
      {
        vertices: [
          [0, 6, 0],
          [4, 6, 0],
          [4, 6, 3],
        ],
      },
      {
        vertices: [
          [0, 6, 0],
          [4, 6, 3],
          [0, 6, 3],
        ],
      },
    ];
    const tx = { position: [1, 2, 1.5] as [number, number, number] },
      rx = { position: [3, 4, 1.2] as [number, number, number] };
    const a = traceScene({ walls, maxReflectionOrder: 3 }, tx, rx, 28e9).paths,
      b = traceScene({ walls: typed, maxReflectionOrder: 3 }, tx, rx, 28e9).paths;
    expect(a.filter((p) => p.kind === 'reflection').length).toBeGreaterThan(3);
    expect(a).toEqual(b);
  });

  it('refuse NaN vertices, bad face indices, degenerate triangles and files of another format', () => {
    expect(() => readObj('v 0 nan 0\nv 1 0 0\nv 0 1 0\nf 1 2 3', 'a.obj')).toThrow(
      'a.obj: line 1: vertex 1 has a coordinate that is not a finite number: "nan"',
    );
    expect(() => readObj('v 0 0 0\nv 1 0 0\nf 1 2 3', 'a.obj')).toThrow('a.obj: line 3: face vertex "3" refers to no vertex read so far (1..2 or -1..-2)');
    expect(() => wallsFromMesh(readObj('v 0 0 0\nv 1 0 0\nv 2 0 0\nf 1 2 3'), {}, 'a.obj')).toThrow(
      'a.obj: triangle 0: is degenerate (vertices 0, 1, 2 collinear or coinciding, area 0.00 m^2): remove it from the mesh',
    );
    expect(() => readObj('ply\nformat ascii 1.0\nelement vertex 3\nend_header\n0 0 0\n', 'a.ply')).toThrow(
      'a.ply: line 5: is not an OBJ statement ("0 0 0"): is this an OBJ file?',
    );
    expect(() => readObj('{"type": "FeatureCollection"}', 'b.geojson')).toThrow('b.geojson: line 1: is not an OBJ statement');
    expect(() => readObj('# nothing\nmtllib x.mtl\n', 'c.obj')).toThrow('c.obj: has no vertex ("v") or no face ("f") statement: not a Wavefront OBJ mesh');
    expect(() => wallsFromMesh({ positions: [0, 0, 0, 1, Infinity, 0, 0, 1, 0] }, {}, 'd.ply')).toThrow(
      'd.ply: vertex 1: has a coordinate that is not a finite number (Infinity)',
    );
  });
});
