/**
 * PLY and binary glTF meshes: the same box written by this test as OBJ, ASCII PLY, binary PLY
 * (both byte orders) and .glb becomes the same walls and traces bit-identical paths to the
 * triangles typed by hand; glTF node transforms against a hand-computed rotation; refusals
 * naming the file and the element.
 *
 * Layouts written here from their descriptions:
 * - PLY: G. Turk, "The PLY Polygon File Format" (1994): the "ply" line, "format ascii 1.0" or
 *   "format binary_little_endian 1.0" / "binary_big_endian 1.0", "element NAME COUNT",
 *   "property TYPE NAME", "property list COUNT-TYPE ITEM-TYPE NAME", "end_header", then the
 *   elements in order, packed without padding in binary. (M: from memory of the description.)
 * - GLB: Khronos glTF 2.0 specification, section 4.4 (binary glTF layout): a 12-byte header
 *   (magic 0x46546C67 "glTF", version 2, total length, little-endian uint32), then chunks of
 *   [length, type, data] with type 0x4E4F534A "JSON" first and 0x004E4942 "BIN" second, each
 *   padded to 4 bytes (JSON with spaces). (M.) The .glb files of the box are also written with
 *   @gltf-transform/core's own writer.
 */
import { Document, WebIO } from '@gltf-transform/core';
import { describe, expect, it } from 'vitest';
import { ImportError } from '../src/scene/import/geojson.js';
import { checkGlbContainer, readGlb } from '../src/scene/import/gltf.js';
import { wallsFromMesh } from '../src/scene/import/mesh.js';
import { readObj } from '../src/scene/import/obj.js';
import { readPly } from '../src/scene/import/ply.js';
import type { Wall } from '../src/scene/scene.js';
import { traceScene } from '../src/scene/tracer.js';

// an 8 x 6 x 3 m box: corners and six quadrilateral faces (corner indices), two faces glazed
const corners = [
  [0, 0, 0],
  [8, 0, 0],
  [8, 6, 0],
  [0, 6, 0],
  [0, 0, 3],
  [8, 0, 3],
  [8, 6, 3],
  [0, 6, 3],
];
const quads = [
  [0, 3, 2, 1], // floor
  [4, 5, 6, 7], // ceiling
  [0, 1, 5, 4], // y = 0
  [1, 2, 6, 5], // x = 8 (glazed)
  [2, 3, 7, 6], // y = 6 (glazed)
  [3, 0, 4, 7], // x = 0
];
const glazed = (q: number): boolean => q === 3 || q === 4;

// The same box typed by hand: each quadrilateral as the fan (a, b, c), (a, c, d).
const typed: Wall[] = [
  { vertices: [[0, 0, 0], [0, 6, 0], [8, 6, 0]], material: 'concrete' },
  { vertices: [[0, 0, 0], [8, 6, 0], [8, 0, 0]], material: 'concrete' },
  { vertices: [[0, 0, 3], [8, 0, 3], [8, 6, 3]], material: 'concrete' },
  { vertices: [[0, 0, 3], [8, 6, 3], [0, 6, 3]], material: 'concrete' },
  { vertices: [[0, 0, 0], [8, 0, 0], [8, 0, 3]], material: 'concrete' },
  { vertices: [[0, 0, 0], [8, 0, 3], [0, 0, 3]], material: 'concrete' },
  { vertices: [[8, 0, 0], [8, 6, 0], [8, 6, 3]], material: 'glass' },
  { vertices: [[8, 0, 0], [8, 6, 3], [8, 0, 3]], material: 'glass' },
  { vertices: [[8, 6, 0], [0, 6, 0], [0, 6, 3]], material: 'glass' },
  { vertices: [[8, 6, 0], [0, 6, 3], [8, 6, 3]], material: 'glass' },
  { vertices: [[0, 6, 0], [0, 0, 0], [0, 0, 3]], material: 'concrete' },
  { vertices: [[0, 6, 0], [0, 0, 3], [0, 6, 3]], material: 'concrete' },
]; // prettier-ignore

const enc = (s: string): Uint8Array => new TextEncoder().encode(s);

function objBox(): string {
  const lines = corners.map((c) => `v ${c.join(' ')}`);
  quads.forEach((q, i) => lines.push(`usemtl ${glazed(i) ? 'glazing' : 'render'}`, `f ${q.map((v) => v + 1).join(' ')}`));
  return lines.join('\n');
}

/** PLY header (Turk 1994) for the box: float or double vertices, uchar/int lists, a uchar face property "material_index". */
function plyHeader(format: string, coord: 'float' | 'double'): string {
  return [
    'ply',
    `format ${format} 1.0`,
    'comment the 8 x 6 x 3 m box of import-formats.test.ts',
    `element vertex ${corners.length}`,
    `property ${coord} x`,
    `property ${coord} y`,
    `property ${coord} z`,
    `element face ${quads.length}`,
    'property list uchar int vertex_indices',
    'property uchar material_index',
    'end_header',
    '',
  ].join('\n');
}
function asciiPly(): Uint8Array {
  const body = [...corners.map((c) => c.join(' ')), ...quads.map((q, i) => `4 ${q.join(' ')} ${glazed(i) ? 1 : 0}`)];
  return enc(plyHeader('ascii', 'float') + body.join('\n') + '\n');
}
function binaryPly(little: boolean, coord: 'float' | 'double'): Uint8Array {
  const header = enc(plyHeader(little ? 'binary_little_endian' : 'binary_big_endian', coord));
  const size = coord === 'float' ? 4 : 8;
  const body = new DataView(new ArrayBuffer(corners.length * 3 * size + quads.length * (1 + 4 * 4 + 1)));
  let at = 0;
  for (const c of corners)
    for (const x of c) {
      if (coord === 'float') body.setFloat32(at, x, little);
      else body.setFloat64(at, x, little);
      at += size;
    }
  quads.forEach((q, i) => {
    body.setUint8(at++, 4);
    for (const v of q) {
      body.setInt32(at, v, little);
      at += 4;
    }
    body.setUint8(at++, glazed(i) ? 1 : 0);
  });
  const out = new Uint8Array(header.length + body.byteLength);
  out.set(header);
  out.set(new Uint8Array(body.buffer), header.length);
  return out;
}

/** The box as .glb by @gltf-transform/core's writer: y-up (file (x, y, z) = scene (x, z, -y)), two primitives named by material. */
async function glbBox(): Promise<Uint8Array> {
  const doc = new Document();
  const buffer = doc.createBuffer();
  const toFile = (c: number[]): number[] => [c[0]!, c[2]!, -c[1]!];
  const mesh = doc.createMesh('box');
  for (const wantGlazed of [false, true]) {
    const pos: number[] = [];
    quads.forEach((q, i) => {
      if (glazed(i) !== wantGlazed) return;
      for (const t of [
        [q[0]!, q[1]!, q[2]!],
        [q[0]!, q[2]!, q[3]!],
      ])
        for (const v of t) pos.push(...toFile(corners[v]!));
    });
    const position = doc.createAccessor().setType('VEC3').setArray(new Float32Array(pos)).setBuffer(buffer);
    mesh.addPrimitive(
      doc
        .createPrimitive()
        .setAttribute('POSITION', position)
        .setMaterial(doc.createMaterial(wantGlazed ? 'glazing' : 'render')),
    );
  }
  doc.createScene('room').addChild(doc.createNode('hall').setMesh(mesh));
  return new WebIO().writeBinary(doc);
}

/** A GLB laid out by hand (section 4.4) around a glTF JSON object and an optional BIN chunk. */
function glbBytes(json: unknown, bin?: Uint8Array, version = 2): Uint8Array {
  let text = JSON.stringify(json);
  text = text.padEnd(Math.ceil(text.length / 4) * 4, ' ');
  const j = enc(text);
  const b = bin === undefined ? new Uint8Array(0) : bin;
  const bPad = bin === undefined ? 0 : Math.ceil(b.length / 4) * 4;
  const total = 12 + 8 + j.length + (bin === undefined ? 0 : 8 + bPad);
  const out = new Uint8Array(total);
  const dv = new DataView(out.buffer);
  dv.setUint32(0, 0x46546c67, true);
  dv.setUint32(4, version, true);
  dv.setUint32(8, total, true);
  dv.setUint32(12, j.length, true);
  dv.setUint32(16, 0x4e4f534a, true);
  out.set(j, 20);
  if (bin !== undefined) {
    dv.setUint32(20 + j.length, bPad, true);
    dv.setUint32(24 + j.length, 0x004e4942, true);
    out.set(b, 28 + j.length);
  }
  return out;
}
/** glTF JSON with one mesh of one primitive over `count` float VEC3 positions in buffer 0. */
function oneMesh(count: number, extra: { mode?: number; nodes?: unknown[]; indices?: number } = {}): Record<string, unknown> {
  return {
    asset: { version: '2.0' },
    scene: 0,
    scenes: [{ nodes: [0] }],
    nodes: extra.nodes ?? [{ mesh: 0, name: 'n0' }],
    meshes: [
      {
        name: 'm0',
        primitives: [
          { attributes: { POSITION: 0 }, ...(extra.mode !== undefined ? { mode: extra.mode } : {}), ...(extra.indices !== undefined ? { indices: 1 } : {}) },
        ],
      },
    ],
    accessors: [
      { bufferView: 0, componentType: 5126, count, type: 'VEC3' },
      ...(extra.indices !== undefined ? [{ bufferView: 1, componentType: 5125, count: extra.indices, type: 'SCALAR' }] : []),
    ],
    bufferViews: [
      { buffer: 0, byteOffset: 0, byteLength: 12 * count },
      ...(extra.indices !== undefined ? [{ buffer: 0, byteOffset: 12 * count, byteLength: 4 * extra.indices }] : []),
    ],
    buffers: [{ byteLength: 12 * count + 4 * (extra.indices ?? 0) }],
  };
}
const f32 = (...x: number[]): Uint8Array => new Uint8Array(Float32Array.from(x).buffer);

const MATERIALS = { glazing: 'glass', render: 'concrete', '1': 'glass', '0': 'concrete' } as const;

describe('PLY and binary glTF meshes: the box in every format', () => {
  it('become the walls typed by hand, and trace bit-identical paths to them', async () => {
    const fromObj = wallsFromMesh(readObj(objBox(), 'box.obj'), { materials: MATERIALS }, 'box.obj');
    const plyOpt = { materialProperty: 'material_index' };
    const fromAscii = wallsFromMesh(readPly(asciiPly(), 'box.ply', plyOpt), { materials: MATERIALS }, 'box.ply');
    const fromLe = wallsFromMesh(readPly(binaryPly(true, 'float'), 'le.ply', plyOpt), { materials: MATERIALS }, 'le.ply');
    const fromBe = wallsFromMesh(readPly(binaryPly(false, 'double'), 'be.ply', plyOpt), { materials: MATERIALS }, 'be.ply');
    const glb = await readGlb(await glbBox(), 'box.glb');
    expect(glb.groups.map((g) => [g.name, g.aliases, g.triangles])).toEqual([
      ['render', ['box', 'hall'], 8],
      ['glazing', ['box', 'hall'], 4],
    ]);
    // the glTF box holds the concrete triangles first: put them back in face order to compare
    const fromGlbRaw = wallsFromMesh(glb, { upAxis: 'y', materials: MATERIALS }, 'box.glb');
    const fromGlb = [0, 1, 2, 3, 4, 5, 8, 9, 10, 11, 6, 7].map((k) => fromGlbRaw[k]!);
    for (const walls of [fromObj, fromAscii, fromLe, fromBe, fromGlb]) expect(walls).toEqual(typed);

    const tx = { position: [1.5, 2, 2.2] as [number, number, number] },
      rx = { position: [6.5, 4.5, 1.4] as [number, number, number] };
    const reference = traceScene({ walls: typed, maxReflectionOrder: 2 }, tx, rx, 28e9).paths;
    expect(reference.filter((p) => p.kind === 'reflection').length).toBeGreaterThanOrEqual(6); // the six faces each reflect once
    for (const walls of [fromObj, fromAscii, fromLe, fromBe, fromGlb])
      expect(traceScene({ walls, maxReflectionOrder: 2 }, tx, rx, 28e9).paths).toEqual(reference);
  });

  it('a PLY without a material property is one group, "default", given the import\'s material', () => {
    const header = plyHeader('ascii', 'float').replace('property uchar material_index\n', '');
    const body = [...corners.map((c) => c.join(' ')), ...quads.map((q) => `4 ${q.join(' ')}`)].join('\n');
    const mesh = readPly(enc(header + body), 'plain.ply');
    expect(mesh.groups).toEqual([{ name: 'default', firstTriangle: 0, triangles: 12 }]);
    expect(wallsFromMesh(mesh, { material: 'wood' }).every((w) => w.material === 'wood')).toBe(true);
  });

  it('reads PLY elements it does not use, comments, obj_info and CRLF header lines', () => {
    const text = [
      'ply',
      'format ascii 1.0',
      'obj_info written by hand',
      'element vertex 3',
      'property double x',
      'property double y',
      'property double z',
      'property uchar red',
      'element edge 1',
      'property int vertex1',
      'property int vertex2',
      'element face 1',
      'property list uint8 uint32 vertex_index',
      'end_header',
      '0.1 0 0 255',
      '1 0 0 0',
      '0 1 0.25 7',
      '0 1',
      '3 2 1 0',
    ].join('\r\n');
    const mesh = readPly(enc(text), 'crlf.ply');
    expect(Array.from(mesh.positions)).toEqual([0.1, 0, 0, 1, 0, 0, 0, 1, 0.25]);
    expect(mesh.indices).toEqual([2, 1, 0]);
  });
});

describe('glTF node transforms (glTF 2.0 specification, section 3.5.2: local = T * R * S, world = parent world * local)', () => {
  it('nested translation, rotation and scale agree with the rotation computed by hand', async () => {
    // parent: translation (10, 0, 0), scale 2; child: rotation 90 degrees about +y, quaternion
    // (x, y, z, w) = (0, sin 45, 0, cos 45), translation (0, 1, 0).
    // By hand, R_y(90) = [[0, 0, 1], [0, 1, 0], [-1, 0, 0]]:
    //   (1, 0, 0) -> R (0, 0, -1) -> +T (0, 1, -1) -> *2 (0, 2, -2) -> +(10, 0, 0) = (10, 2, -2)
    //   (0, 0, 1) -> R (1, 0, 0)  -> +T (1, 1, 0)  -> *2 (2, 2, 0)  -> (12, 2, 0)
    //   (0, 1, 0) -> R (0, 1, 0)  -> +T (0, 2, 0)  -> *2 (0, 4, 0)  -> (10, 4, 0)
    const s = Math.SQRT1_2;
    const json = oneMesh(3, {
      nodes: [
        { name: 'parent', translation: [10, 0, 0], scale: [2, 2, 2], children: [1] },
        { name: 'child', mesh: 0, rotation: [0, s, 0, s], translation: [0, 1, 0] },
      ],
    });
    const mesh = await readGlb(glbBytes(json, f32(1, 0, 0, 0, 0, 1, 0, 1, 0)), 'nested.glb');
    const expected = [10, 2, -2, 12, 2, 0, 10, 4, 0];
    Array.from(mesh.positions).forEach((x, i) => expect(Math.abs(x - expected[i]!)).toBeLessThan(1e-12));
    // then glTF's +y up to the scene's +z up: (x, y, z) -> (x, -z, y)
    const wall = wallsFromMesh(mesh, { upAxis: 'y' })[0]!;
    const up = [
      [10, 2, 2],
      [12, 0, 2],
      [10, 0, 4],
    ];
    wall.vertices.forEach((v, i) => v.forEach((x, k) => expect(Math.abs(x - up[i]![k]!)).toBeLessThan(1e-12)));
  });

  it('a matrix node, a mesh placed by two nodes, strips and fans (section 3.7.2.1)', async () => {
    const nodes = [
      { mesh: 0, matrix: [1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 5, 6, 7, 1] }, // column-major: translation (5, 6, 7)
      { mesh: 0 },
    ];
    const twice = await readGlb(glbBytes({ ...oneMesh(3, { nodes }), scenes: [{ nodes: [0, 1] }] }, f32(0, 0, 0, 1, 0, 0, 0, 1, 0)), 'two.glb');
    expect(Array.from(twice.positions)).toEqual([5, 6, 7, 6, 6, 7, 5, 7, 7, 0, 0, 0, 1, 0, 0, 0, 1, 0]);
    expect(Array.from(twice.indices)).toEqual([0, 1, 2, 3, 4, 5]);
    const quad = f32(0, 0, 0, 1, 0, 0, 0, 1, 0, 1, 1, 0);
    const strip = await readGlb(glbBytes(oneMesh(4, { mode: 5 }), quad), 'strip.glb');
    expect(Array.from(strip.indices)).toEqual([0, 1, 2, 1, 3, 2]); // p_i = (v_i, v_{i+1+i%2}, v_{i+2-i%2})
    const fan = await readGlb(glbBytes(oneMesh(4, { mode: 6 }), quad), 'fan.glb');
    expect(Array.from(fan.indices)).toEqual([1, 2, 0, 2, 3, 0]); // p_i = (v_{i+1}, v_{i+2}, v_0)
  });
});

describe('broken PLY and glTF files are refused naming the file and the element', () => {
  const refuse = (f: () => unknown, message: string): void => {
    let err: unknown;
    try {
      f();
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(ImportError);
    expect((err as Error).message).toBe(message);
  };
  const refuseAsync = async (p: Promise<unknown>, message: string): Promise<void> => {
    const err = await p.then(
      () => undefined,
      (e: unknown) => e,
    );
    expect(err).toBeInstanceOf(ImportError);
    expect((err as Error).message).toBe(message);
  };
  const ply = (body: string, header = plyHeader('ascii', 'float')): Uint8Array => enc(header + body);
  const good = [...corners.map((c) => c.join(' ')), ...quads.map((q, i) => `4 ${q.join(' ')} ${glazed(i) ? 1 : 0}`)];

  it('PLY: NaN and infinite vertices, degenerate triangles, faces past the vertex list', () => {
    const nan = [...good];
    nan[2] = '8 nan 0';
    refuse(() => readPly(ply(nan.join('\n')), 'nan.ply'), 'nan.ply: line 14: vertex 2 has a coordinate that is not a finite number (NaN)');
    const inf = new Uint8Array(binaryPly(true, 'double'));
    const hl = enc(plyHeader('binary_little_endian', 'double')).length;
    new DataView(inf.buffer).setFloat64(hl + 8 * 4, -Infinity, true); // vertex 1, y
    refuse(() => readPly(inf, 'inf.ply'), 'inf.ply: element "vertex" 1: vertex 1 has a coordinate that is not a finite number (-Infinity)');
    const past = [...good];
    past[8] = '4 0 3 2 8 0';
    refuse(() => readPly(ply(past.join('\n')), 'past.ply'), 'past.ply: line 20: face 0 refers to vertex 8, outside 0..7');
    const flat = [...good];
    flat[9] = '4 4 5 5 4 0'; // the ceiling collapsed onto one edge
    expect(() => wallsFromMesh(readPly(ply(flat.join('\n')), 'flat.ply'), {}, 'flat.ply')).toThrow(
      'flat.ply: triangle 2: is degenerate (vertices 4, 5, 5 collinear or coinciding, area 0.00 m^2): remove it from the mesh',
    );
    const two = [...good];
    two[8] = '2 0 3 0';
    refuse(() => readPly(ply(two.join('\n')), 'two.ply'), 'two.ply: line 20: face 0 has 2 vertices; a face needs at least 3');
    refuse(() => readPly(ply(good.join('\n').replace('8 0 0', '8 x 0')), 'word.ply'), 'word.ply: line 13: "x" is not a number (y of "vertex" 1)');
  });

  it('PLY: truncated binary and ASCII bodies, bytes or lines beyond the counts', () => {
    const le = binaryPly(true, 'float');
    const hl = enc(plyHeader('binary_little_endian', 'float')).length;
    refuse(
      () => readPly(le.subarray(0, le.length - 5), 'cut.ply'),
      `cut.ply: element "face" 5: the file ends inside it (byte ${le.length - 5} of ${le.length - 5}; 6 "face" elements declared): it is truncated`,
    );
    refuse(
      () => readPly(le.subarray(0, hl + 50), 'cut2.ply'),
      `cut2.ply: element "vertex" 4: the file ends inside it (byte ${hl + 48} of ${hl + 50}; 8 "vertex" elements declared): it is truncated`,
    );
    expect(hl + 8 * 12 + 6 * 18).toBe(le.length); // the layout: 8 vertices of 3 floats, 6 faces of 1 + 4 * 4 + 1 bytes
    const longer = new Uint8Array(le.length + 3);
    longer.set(le);
    refuse(() => readPly(longer, 'long.ply'), 'long.ply: has 3 bytes after the last element the header declares: do the counts match the file?');
    refuse(
      () => readPly(ply(good.slice(0, 11).join('\n')), 'short.ply'),
      'short.ply: element "face" 3: the file ends after 3 of 6 "face" lines: it is truncated',
    );
    refuse(
      () => readPly(ply([...good, '1 2 3'].join('\n')), 'more.ply'),
      'more.ply: line 26: comes after the last element the header declares: do the counts match the file?',
    );
  });

  it('PLY: headers that are not PLY, another version, missing x/y/z, faces or the material property', () => {
    refuse(() => readPly(enc(objBox()), 'box.ply'), 'box.ply: does not start with the line "ply" (it starts with "v 0 0 0\\nv 8 0 0\\n"): not a PLY file');
    refuse(() => readPly(ply(good.join('\n'), plyHeader('ascii', 'float').replace('1.0', '2.0')), 'v2.ply'), 'v2.ply: header line 2: version "2.0" is not 1.0, the one PLY version');
    refuse(() => readPly(ply('', plyHeader('binary_middle_endian', 'float')), 'mid.ply'), 'mid.ply: header line 2: format "binary_middle_endian" is not one of ascii, binary_little_endian, binary_big_endian');
    refuse(() => readPly(ply(good.join('\n'), plyHeader('ascii', 'float').replace('property float z', 'property float w')), 'noz.ply'), 'noz.ply: header: the "vertex" element has no scalar property "z" (it has x, y, w)');
    refuse(() => readPly(enc('ply\nformat ascii 1.0\nelement vertex 1\nproperty float x\n'), 'open.ply'), 'open.ply: header: has no "end_header" line: the header is incomplete');
    refuse(() => readPly(enc('ply\nformat ascii 1.0\nelement vertex 0\nproperty float x\nproperty float y\nproperty float z\nend_header\n'), 'cloud.ply'), 'cloud.ply: header: declares no "face" element: a point cloud is not a mesh of surfaces');
    refuse(() => readPly(ply(good.join('\n'), plyHeader('ascii', 'float').replace('property uchar', 'property uint128')), 'type.ply'), 'type.ply: header line 10: a property needs a type (char, int8, uchar, uint8, short, int16, ushort, uint16, int, int32, uint, uint32, float, float32, double, float64) and a name, got "property uint128 material_index"');
    refuse(() => readPly(asciiPly(), 'box.ply', { materialProperty: 'colour' }), 'box.ply: header: the "face" element has no scalar property "colour" (the materialProperty); it has vertex_indices, material_index');
  }); // prettier-ignore

  it('glTF: not glTF (magic), another version, truncated, non-triangle modes, non-finite positions, indices past the vertices', async () => {
    refuse(() => checkGlbContainer(asciiPly(), 'box.glb'), 'box.glb: does not start with the glTF magic "glTF" (it starts with "ply\\n"): not a binary glTF file');
    const tri = f32(0, 0, 0, 1, 0, 0, 0, 1, 0);
    await refuseAsync(readGlb(glbBytes(oneMesh(3), tri, 1), 'v1.glb'), 'v1.glb: header: is binary glTF version 1; only version 2 (glTF 2.0) is read');
    const ok = glbBytes(oneMesh(3), tri);
    await refuseAsync(readGlb(ok.subarray(0, ok.length - 8), 'cut.glb'), `cut.glb: header: states a length of ${ok.length} bytes but the file has ${ok.length - 8}: it is truncated`);
    const lying = new Uint8Array(ok);
    new DataView(lying.buffer).setUint32(8, ok.length - 8, true); // the header agrees with the cut file, the BIN chunk does not
    await refuseAsync(readGlb(lying.subarray(0, ok.length - 8), 'cut2.glb'), 'cut2.glb: chunk 1: states 36 bytes, more than the 28 left in the file: it is truncated');
    await refuseAsync(readGlb(glbBytes({ ...oneMesh(3), asset: { version: '1.0' } }, tri), 'old.glb'), 'old.glb: asset.version: must be "2.0" (glTF 2.0), got "1.0"');
    await refuseAsync(readGlb(glbBytes(oneMesh(3, { mode: 1 }), tri), 'lines.glb'), 'lines.glb: nodes[0] mesh 0 primitive 0: has mode 1 (LINES): only TRIANGLES, TRIANGLE_STRIP and TRIANGLE_FAN are surfaces');
    await refuseAsync(readGlb(glbBytes(oneMesh(3), f32(0, 0, 0, 1, NaN, 0, 0, 1, 0)), 'nan.glb'), 'nan.glb: nodes[0] mesh 0 primitive 0: POSITION vertex 1 has a coordinate that is not a finite number (NaN)');
    const idx = new Uint8Array(36 + 12);
    idx.set(tri);
    new Uint32Array(idx.buffer, 36, 3).set([0, 1, 3]);
    await refuseAsync(readGlb(glbBytes(oneMesh(3, { indices: 3 }), idx), 'idx.glb'), 'idx.glb: nodes[0] mesh 0 primitive 0: index 2 refers to vertex 3, outside 0..2');
    // a degenerate triangle is named by its node, mesh and primitive
    const flat = await readGlb(glbBytes(oneMesh(3), f32(0, 0, 0, 1, 0, 0, 2, 0, 0)), 'flat.glb');
    expect(() => wallsFromMesh(flat, { upAxis: 'y' }, 'flat.glb')).toThrow('flat.glb: nodes[0] mesh 0 primitive 0 triangle 0: is degenerate');
  }); // prettier-ignore
});
