/**
 * scene.imports through the scenario and the command line: imported footprints and meshes mix
 * with hand-typed walls, and broken files are refused with exit code 2 naming the import, the
 * file and the element. A box written by the test as OBJ, ASCII PLY, binary PLY and binary glTF
 * (layouts: G. Turk, "The PLY Polygon File Format", 1994; Khronos glTF 2.0 specification,
 * section 4.4, binary glTF; both M, from memory of the published descriptions) gives through
 * `paths --json` exactly the paths of the same triangles typed as walls.
 */
import { copyFileSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { wallsFromGeoJson, wallsFromMesh, readObj, readPly, traceScene } from '@pathweave/geometry';
import { expandSceneImports, loadScenario, parseScenarioText, sceneOf } from '@pathweave/io';
import { ROOT, runCli, tempDir, writeScenario } from './support/run.js';

const demo = join(ROOT, 'examples', 'imported-block-28ghz.json');
const scenarioJson = JSON.parse(readFileSync(demo, 'utf8')) as Record<string, any>;

describe('scene.imports', () => {
  it('loadScenario appends the imported walls after the hand-typed ones: the same walls as the geometry readers give', async () => {
    const { scenario } = await loadScenario(demo);
    const walls = scenario.scene!.walls!;
    const im = scenarioJson.scene.imports;
    const fromGeo = wallsFromGeoJson(readFileSync(join(ROOT, 'examples', 'scenes', 'block.geojson'), 'utf8'), {
      origin: im[0].origin,
      heightProperty: 'height',
      materialProperty: 'facade',
      materials: { glazed: 'glass' },
    });
    const fromObj = wallsFromMesh(readObj(readFileSync(join(ROOT, 'examples', 'scenes', 'kiosk.obj'), 'utf8')), {
      offsetM: [40, -5, 0],
      materials: { front: 'glass', shell: 'metal' },
    });
    expect(walls).toEqual([...scenarioJson.scene.walls, ...fromGeo, ...fromObj]);
    expect(fromGeo).toHaveLength(4 * 5); // 4 buildings: 4 facades and a roof each
    expect(fromObj).toHaveLength(10); // 5 quadrilaterals of the kiosk (its floor left open) as triangles
    expect(scenario.scene!.imports).toBeUndefined();
    // the expanded scene traces like the same walls typed by hand (bit-identical paths)
    const typed = parseScenarioText(JSON.stringify({ ...scenarioJson, scene: { ...scenarioJson.scene, imports: undefined, walls } })).scenario;
    const tx = { position: [10, 0, 6] as [number, number, number] },
      rx = { position: [27, 25, 1.5] as [number, number, number] };
    const a = traceScene(sceneOf(scenario), tx, rx, 28e9).paths,
      b = traceScene(sceneOf(typed), tx, rx, 28e9).paths;
    expect(a.length).toBeGreaterThan(3);
    expect(a).toEqual(b);
  });

  it('the bus-shelter demo imports its PLY shelter in centimetres, a material per face, after the typed walls', async () => {
    const { scenario } = await loadScenario(join(ROOT, 'examples', 'bus-shelter-28ghz.json'));
    const walls = scenario.scene!.walls!;
    expect(walls).toHaveLength(2 + 8); // pavement and facade, then 4 quadrilaterals as triangles
    const shelter = wallsFromMesh(
      readPly(readFileSync(join(ROOT, 'examples', 'scenes', 'shelter.ply')), 'shelter.ply', { materialProperty: 'material_index' }),
      {
        unit: 'cm',
        offsetM: [10, 0, 0],
        materials: { '0': 'metal', '1': 'glass' },
      },
    );
    expect(walls.slice(2)).toEqual(shelter);
    expect(shelter.map((w) => w.material)).toEqual(['glass', 'glass', 'glass', 'glass', 'glass', 'glass', 'metal', 'metal']);
    // the back pane's first triangle: file corners (0, 150, 0), (400, 150, 0), (400, 150, 250) cm, moved 10 m along x
    expect(shelter[0]!.vertices).toEqual([
      [10, 1.5, 0],
      [14, 1.5, 0],
      [14, 1.5, 2.5],
    ]);
  });

  it('a scenario parsed from text is expanded against a stated folder, and refused by sceneOf before', async () => {
    const { scenario } = parseScenarioText(JSON.stringify(scenarioJson));
    expect(() => sceneOf(scenario)).toThrow(
      'scene.imports: the imported files are not read yet: load the scenario with loadScenario() or expand it with expandSceneImports(scenario, folder) first',
    );
    expect((await expandSceneImports(scenario, join(ROOT, 'examples'))).scene!.walls).toHaveLength(1 + 20 + 10);
  });

  it('the command line refuses broken imports with exit code 2, naming the import, the file and the element', () => {
    const dir = tempDir();
    const fc = JSON.parse(readFileSync(join(ROOT, 'examples', 'scenes', 'block.geojson'), 'utf8'));
    fc.features[2].geometry.coordinates[0].pop();
    writeFileSync(join(dir, 'open.geojson'), JSON.stringify(fc));
    writeFileSync(join(dir, 'nan.obj'), 'v 0 0 0\nv 1 NaN 0\nv 0 1 0\nf 1 2 3\n');
    writeFileSync(join(dir, 'flat.obj'), 'v 0 0 0\nv 1 0 0\nv 2 0 0\nf 1 2 3\n');
    copyFileSync(join(ROOT, 'examples', 'scenes', 'block.geojson'), join(dir, 'block.obj')); // a file of another format
    const cases: [Record<string, unknown>, string][] = [
      [
        { ...scenarioJson.scene.imports[0], footprints: 'open.geojson' },
        'scene.imports[0].footprints: open.geojson: features[2].geometry.coordinates[0]: the ring is not closed',
      ],
      [{ mesh: 'nan.obj' }, 'scene.imports[0].mesh: nan.obj: line 2: vertex 2 has a coordinate that is not a finite number: "NaN"'],
      [{ mesh: 'flat.obj' }, 'scene.imports[0].mesh: flat.obj: triangle 0: is degenerate'],
      [{ mesh: 'block.obj' }, 'scene.imports[0].mesh: block.obj: line 1: is not an OBJ statement ("{"): is this an OBJ file?'],
      [{ mesh: 'missing.obj' }, 'scene.imports[0].mesh: cannot read "missing.obj"'],
    ];
    for (const [im, message] of cases) {
      const file = writeScenario(dir, 'scenario.json', { ...scenarioJson, scene: { ...scenarioJson.scene, imports: [im] } });
      const r = runCli(['paths', file]);
      expect(r.status).toBe(2);
      expect(r.stderr).toContain(message);
    }
  });
});

// An 8 x 6 x 3 m box beside the street of the demo: corners, quadrilateral faces, the glazed ones.
const OFFSET = [20, 30, 0] as const;
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
  [0, 3, 2, 1],
  [4, 5, 6, 7],
  [0, 1, 5, 4],
  [1, 2, 6, 5],
  [2, 3, 7, 6],
  [3, 0, 4, 7],
];
const glazed = (q: number): boolean => q === 3 || q === 4;
const enc = (t: string): Buffer => Buffer.from(t, 'latin1');

function plyBox(format: 'ascii' | 'binary_little_endian' | 'binary_big_endian'): Buffer {
  const header = [
    'ply',
    `format ${format} 1.0`,
    `element vertex ${corners.length}`,
    'property float x',
    'property float y',
    'property float z',
    `element face ${quads.length}`,
    'property list uchar uint vertex_indices',
    'property ushort material_index',
    'end_header',
    '',
  ].join('\n');
  if (format === 'ascii')
    return enc(header + [...corners.map((c) => c.join(' ')), ...quads.map((q, i) => `4 ${q.join(' ')} ${glazed(i) ? 7 : 3}`)].join('\n') + '\n');
  const little = format === 'binary_little_endian';
  const body = new DataView(new ArrayBuffer(corners.length * 12 + quads.length * (1 + 16 + 2)));
  let at = 0;
  for (const c of corners)
    for (const x of c) {
      body.setFloat32(at, x, little);
      at += 4;
    }
  quads.forEach((q, i) => {
    body.setUint8(at++, 4);
    for (const v of q) {
      body.setUint32(at, v, little);
      at += 4;
    }
    body.setUint16(at, glazed(i) ? 7 : 3, little);
    at += 2;
  });
  return Buffer.concat([enc(header), Buffer.from(body.buffer)]);
}

/** A GLB laid out per the glTF 2.0 specification, section 4.4: header, JSON chunk, BIN chunk (4-byte padded). */
function glb(json: unknown, bin: Buffer, version = 2): Buffer {
  let text = JSON.stringify(json);
  text = text.padEnd(Math.ceil(text.length / 4) * 4, ' ');
  const head = Buffer.alloc(20),
    binHead = Buffer.alloc(8);
  head.writeUInt32LE(0x46546c67, 0); // "glTF"
  head.writeUInt32LE(version, 4);
  head.writeUInt32LE(20 + text.length + 8 + bin.length, 8);
  head.writeUInt32LE(text.length, 12);
  head.writeUInt32LE(0x4e4f534a, 16); // "JSON"
  binHead.writeUInt32LE(bin.length, 0);
  binHead.writeUInt32LE(0x004e4942, 4); // "BIN"
  return Buffer.concat([head, enc(text), binHead, bin]);
}
/** The box as glTF: +Y up (file (x, y, z) = scene (x, z, -y)), one indexed primitive per material, in a node named "annex". */
function glbBox(mode = 4, version = 2): Buffer {
  const pos = Buffer.from(Float32Array.from(corners.flatMap((c) => [c[0]!, c[2]!, -c[1]!])).buffer);
  const tri = (which: boolean): number[] => quads.flatMap((q, i) => (glazed(i) === which ? [q[0]!, q[1]!, q[2]!, q[0]!, q[2]!, q[3]!] : []));
  const a = tri(false),
    b = tri(true);
  const idx = Buffer.from(Uint32Array.from([...a, ...b]).buffer);
  const json = {
    asset: { version: '2.0' },
    scene: 0,
    scenes: [{ nodes: [0] }],
    nodes: [{ name: 'annex', mesh: 0 }],
    materials: [{ name: 'render' }, { name: 'glazing' }],
    meshes: [
      {
        name: 'box',
        primitives: [
          { attributes: { POSITION: 0 }, indices: 1, material: 0, mode },
          { attributes: { POSITION: 0 }, indices: 2, material: 1, mode },
        ],
      },
    ],
    accessors: [
      { bufferView: 0, componentType: 5126, count: 8, type: 'VEC3', min: [0, 0, -6], max: [8, 3, 0] },
      { bufferView: 1, componentType: 5125, count: a.length, type: 'SCALAR' },
      { bufferView: 1, byteOffset: 4 * a.length, componentType: 5125, count: b.length, type: 'SCALAR' },
    ],
    bufferViews: [
      { buffer: 0, byteOffset: 0, byteLength: pos.length },
      { buffer: 0, byteOffset: pos.length, byteLength: idx.length },
    ],
    buffers: [{ byteLength: pos.length + idx.length }],
  };
  return glb(json, Buffer.concat([pos, idx]), version);
}

describe('scene.imports of PLY and binary glTF meshes through the command line', () => {
  const dir = tempDir();
  writeFileSync(
    join(dir, 'box.obj'),
    [
      ...corners.map((c) => `v ${c.join(' ')}`),
      ...quads.flatMap((q, i) => [`usemtl ${glazed(i) ? 'glazing' : 'render'}`, `f ${q.map((v) => v + 1).join(' ')}`]),
    ].join('\n'),
  );
  writeFileSync(join(dir, 'box.ply'), plyBox('ascii'));
  writeFileSync(join(dir, 'box-le.ply'), plyBox('binary_little_endian'));
  writeFileSync(join(dir, 'box-be.ply'), plyBox('binary_big_endian'));
  writeFileSync(join(dir, 'box.glb'), glbBox());
  const pavement = scenarioJson.scene.walls;
  const base = { ...scenarioJson, scene: { ...scenarioJson.scene, imports: undefined, walls: pavement } };
  const byName = { glazing: 'glass', render: 'concrete', '7': 'glass', '3': 'concrete' };

  it('the box read as OBJ, ASCII PLY, binary PLY (both byte orders) and .glb gives the paths of the same triangles typed by hand', () => {
    // typed: each quadrilateral as the fan (a, b, c), (a, c, d), moved by OFFSET, in face order
    const typed = quads.flatMap((q, i) =>
      [
        [q[0]!, q[1]!, q[2]!],
        [q[0]!, q[2]!, q[3]!],
      ].map((t) => ({ vertices: t.map((v) => corners[v]!.map((x, k) => x + OFFSET[k]!)), material: glazed(i) ? 'glass' : 'concrete' })),
    );
    const reference = runCli(['paths', writeScenario(dir, 'typed.json', { ...base, scene: { ...base.scene, walls: [...pavement, ...typed] } }), '--json']);
    expect(reference.status, reference.stderr).toBe(0);
    const paths = JSON.parse(reference.stdout) as { interactions: { object: string }[] }[];
    // reflections off the box's triangles (walls[1..12]) are among them
    expect(paths.filter((p) => p.interactions.some((x) => /^walls\[([1-9]|1[0-2])\]$/.test(x.object))).length).toBeGreaterThan(0);
    const cases: Record<string, unknown>[] = [
      { mesh: 'box.obj', offsetM: OFFSET, materials: byName },
      { mesh: 'box.ply', materialProperty: 'material_index', offsetM: OFFSET, materials: byName },
      { mesh: 'box-le.ply', materialProperty: 'material_index', offsetM: OFFSET, materials: byName },
      { mesh: 'box-be.ply', materialProperty: 'material_index', offsetM: OFFSET, materials: byName },
      { mesh: 'box.glb', offsetM: OFFSET, materials: byName }, // +Y up and metres by the glTF 2.0 specification: no upAxis needed
    ];
    const order = [0, 1, 2, 3, 4, 5, 10, 11, 6, 7, 8, 9]; // the glb's first primitive holds faces 0, 1, 2, 5, its second 3, 4
    for (const im of cases) {
      const file = writeScenario(dir, 'imported.json', { ...base, scene: { ...base.scene, imports: [im] } });
      const r = runCli(['paths', file, '--json']);
      expect(r.status, `${im.mesh as string}: ${r.stderr}`).toBe(0);
      if (im.mesh !== 'box.glb') expect(r.stdout).toBe(reference.stdout);
      else {
        // the same paths, but the triangles of the glTF file are numbered primitive by primitive
        const renumber = (t: string): string =>
          t.replace(/walls\[(\d+)\]/g, (_m, n: string) => (Number(n) === 0 ? 'walls[0]' : `walls[${order.indexOf(Number(n) - 1) + 1}]`));
        const sortById = (text: string) => (JSON.parse(text) as { id: string }[]).sort((x, y) => (x.id < y.id ? -1 : x.id > y.id ? 1 : 0));
        expect(sortById(renumber(r.stdout))).toEqual(sortById(reference.stdout));
      }
    }
  });

  it('refuses broken PLY and glTF files with exit code 2, naming the import, the file and the element', () => {
    const nan = plyBox('ascii').toString('latin1').replace('8 6 0', '8 nan 0');
    writeFileSync(join(dir, 'nan.ply'), nan);
    const le = plyBox('binary_little_endian');
    writeFileSync(join(dir, 'cut.ply'), le.subarray(0, le.length - 10));
    writeFileSync(join(dir, 'past.ply'), plyBox('ascii').toString('latin1').replace('4 0 3 2 1 3', '4 0 3 2 9 3'));
    writeFileSync(join(dir, 'v1.glb'), glbBox(4, 1));
    writeFileSync(join(dir, 'lines.glb'), glbBox(1));
    writeFileSync(join(dir, 'ply.glb'), plyBox('ascii'));
    writeFileSync(join(dir, 'glb.ply'), glbBox());
    writeFileSync(join(dir, 'json.glb'), readFileSync(join(ROOT, 'examples', 'scenes', 'block.geojson')));
    writeFileSync(join(dir, 'box.gltf'), '{}');
    writeFileSync(join(dir, 'box.stl'), 'solid box\nendsolid box\n');
    const cases: [Record<string, unknown>, string][] = [
      [{ mesh: 'nan.ply' }, 'scene.imports[0].mesh: nan.ply: line 13: vertex 2 has a coordinate that is not a finite number (NaN)'],
      [
        { mesh: 'cut.ply' },
        `scene.imports[0].mesh: cut.ply: element "face" 5: the file ends inside it (byte ${le.length - 10} of ${le.length - 10}; 6 "face" elements declared): it is truncated`,
      ],
      [{ mesh: 'past.ply' }, 'scene.imports[0].mesh: past.ply: line 19: face 0 refers to vertex 9, outside 0..7'],
      [{ mesh: 'v1.glb' }, 'scene.imports[0].mesh: v1.glb: header: is binary glTF version 1; only version 2 (glTF 2.0) is read'],
      [
        { mesh: 'lines.glb' },
        'scene.imports[0].mesh: lines.glb: nodes[0] mesh 0 primitive 0: has mode 1 (LINES): only TRIANGLES, TRIANGLE_STRIP and TRIANGLE_FAN are surfaces',
      ],
      [{ mesh: 'ply.glb' }, 'scene.imports[0].mesh: ply.glb: is named .glb but holds PLY (its first bytes): give the file the .ply extension'],
      [{ mesh: 'glb.ply' }, 'scene.imports[0].mesh: glb.ply: is named .ply but holds binary glTF (its first bytes): give the file the .glb extension'],
      [{ mesh: 'json.glb' }, 'scene.imports[0].mesh: json.glb: does not start with the glTF magic "glTF" (it starts with "{\\n \\""): not a binary glTF file'],
      [
        { mesh: 'box.gltf' },
        'scene.imports[0].mesh: box.gltf: is JSON glTF (.gltf), which is not read: write the scene as binary glTF (.glb), which holds its buffers',
      ],
      [
        { mesh: 'box.stl' },
        'scene.imports[0].mesh: box.stl: is not a mesh format read here (extension ".stl"): Wavefront OBJ (.obj), PLY (.ply) and binary glTF (.glb) are',
      ],
      [
        { mesh: 'box.obj', materialProperty: 'material_index' },
        'scene.imports[0].mesh: box.obj: materialProperty names a PLY face property; Wavefront OBJ groups are named in the file',
      ],
    ];
    for (const [im, message] of cases) {
      const file = writeScenario(dir, 'broken.json', { ...base, scene: { ...base.scene, imports: [im] } });
      const r = runCli(['paths', file]);
      expect(r.status, `${im.mesh as string}: ${r.stderr}`).toBe(2);
      expect(r.stderr).toContain(message);
    }
  });
});
