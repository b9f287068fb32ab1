/**
 * Binary glTF 2.0 (.glb, Khronos glTF 2.0 specification) to a TriangleMesh, read with
 * @gltf-transform/core after the container is checked here (section 4.4: the 12-byte header
 * "glTF", version 2, total length, then a JSON chunk and an optional BIN chunk). Every node of
 * the default scene (else the first scene) that holds a mesh places its primitives with the
 * node's world matrix (section 3.5.2: a node's matrix, or T * R * S of its translation, rotation
 * quaternion and scale, post-multiplied down the parent chain), so instanced meshes appear once
 * per node. Positions stay in the file's frame: glTF is metres with +Y up (section 3.4), which
 * wallsFromMesh turns to z-up with upAxis "y". Modes TRIANGLES, TRIANGLE_STRIP and TRIANGLE_FAN
 * (section 3.7.2.1) become triangles; points and lines are refused. Morph targets and skins are
 * not applied (the base positions are read).
 */
import type { Node as GltfNode } from '@gltf-transform/core';
import { ImportError } from './geojson.js';
import type { MeshGroup, TriangleMesh } from './mesh.js';

const MAGIC = 0x46546c67; // "glTF" read as a little-endian uint32
const CHUNK_JSON = 0x4e4f534a; // "JSON"
const CHUNK_BIN = 0x004e4942; // "BIN\0"
const FLOAT = 5126;
const MODES = ['POINTS', 'LINES', 'LINE_LOOP', 'LINE_STRIP', 'TRIANGLES', 'TRIANGLE_STRIP', 'TRIANGLE_FAN'];

/**
 * Check the GLB container (magic, version 2, lengths of the file and its chunks, a JSON chunk
 * first, asset.version "2.0"); throws ImportError naming the file and what is wrong.
 * @example checkGlbContainer(new TextEncoder().encode('solid box\nendsolid box\n'), 'box.glb') // throws ImportError 'box.glb: does not start with the glTF magic "glTF" (it starts with "soli"): not a binary glTF file'
 */
export function checkGlbContainer(data: Uint8Array, file = 'glTF input'): void {
  const head = String.fromCharCode(...data.subarray(0, 4));
  if (data.byteLength < 12 || (data[0]! | (data[1]! << 8) | (data[2]! << 16) | (data[3]! << 24)) >>> 0 !== MAGIC)
    throw new ImportError(file, '', `does not start with the glTF magic "glTF" (it starts with ${JSON.stringify(head)}): not a binary glTF file`);
  const view = new DataView(data.buffer, data.byteOffset, data.byteLength);
  const version = view.getUint32(4, true),
    length = view.getUint32(8, true);
  if (version !== 2) throw new ImportError(file, 'header', `is binary glTF version ${version}; only version 2 (glTF 2.0) is read`);
  if (length !== data.byteLength)
    throw new ImportError(
      file,
      'header',
      `states a length of ${length} bytes but the file has ${data.byteLength}: ${length > data.byteLength ? 'it is truncated' : 'bytes follow the end'}`,
    );
  let at = 12,
    k = 0,
    json: unknown;
  while (at < data.byteLength) {
    if (at + 8 > data.byteLength) throw new ImportError(file, `chunk ${k}`, `its 8-byte header does not fit in the file (byte ${at} of ${data.byteLength})`);
    const size = view.getUint32(at, true),
      type = view.getUint32(at + 4, true);
    if (at + 8 + size > data.byteLength)
      throw new ImportError(file, `chunk ${k}`, `states ${size} bytes, more than the ${data.byteLength - at - 8} left in the file: it is truncated`);
    if (k === 0) {
      if (type !== CHUNK_JSON)
        throw new ImportError(file, 'chunk 0', `must be the JSON chunk (type 0x${CHUNK_JSON.toString(16)}), got type 0x${type.toString(16)}`);
      try {
        json = JSON.parse(new TextDecoder().decode(data.subarray(at + 8, at + 8 + size)));
      } catch (e) {
        throw new ImportError(file, 'chunk 0', `the JSON chunk is not JSON (${(e as Error).message})`);
      }
    } else if (k > 1 && type === CHUNK_BIN) {
      throw new ImportError(file, `chunk ${k}`, 'is a BIN chunk after the second: a GLB holds at most one, right after the JSON chunk');
    } // chunks of other types are skipped, as readers must (section 4.4.3)
    at += 8 + size;
    k++;
  }
  if (json === undefined) throw new ImportError(file, 'chunk 0', 'is missing: a GLB needs a JSON chunk');
  const v = (json as { asset?: { version?: unknown } } | null)?.asset?.version;
  if (v !== '2.0') throw new ImportError(file, 'asset.version', `must be "2.0" (glTF 2.0), got ${JSON.stringify(v) ?? 'nothing'}`);
}

/**
 * Read a binary glTF 2.0 file's triangles in the file's frame (metres, +Y up) with every node's
 * transform applied; one group per primitive placed by a node, named by the primitive's material
 * name, else its mesh's name, else its node's name, else "default" (and answering to the others
 * as aliases). Throws ImportError naming the file and the node, mesh and primitive for a broken
 * file: not glTF, another version, truncated, non-triangle modes, non-finite positions, indices
 * past the vertices.
 * @example
 * // a GLB laid out by hand (section 4.4): one triangle, its node moved 2 m along +x
 * const xyz = Buffer.from(Float32Array.of(0, 0, 0, 1, 0, 0, 0, 1, 0).buffer).toString('base64');
 * const gltf = { asset: { version: '2.0' }, scenes: [{ nodes: [0] }], nodes: [{ mesh: 0, translation: [2, 0, 0] }], meshes: [{ primitives: [{ attributes: { POSITION: 0 } }] }],
 *   accessors: [{ bufferView: 0, componentType: 5126, count: 3, type: 'VEC3' }], bufferViews: [{ buffer: 0, byteLength: 36 }], buffers: [{ byteLength: 36, uri: `data:application/octet-stream;base64,${xyz}` }] };
 * const json = Buffer.from(JSON.stringify(gltf).padEnd(Math.ceil(JSON.stringify(gltf).length / 4) * 4));
 * const head = new Uint32Array([0x46546c67, 2, 20 + json.length, json.length, 0x4e4f534a]);
 * const mesh = await readGlb(Buffer.concat([Buffer.from(head.buffer), json]), 'tri.glb');
 * Array.from(mesh.positions) // [2, 0, 0, 3, 0, 0, 2, 1, 0]
 */
export async function readGlb(
  data: Uint8Array,
  file = 'glTF input',
): Promise<TriangleMesh & { positions: Float64Array; indices: Uint32Array; groups: MeshGroup[] }> {
  checkGlbContainer(data, file);
  // a copy at offset 0: the library views the chunks through Uint32Arrays, which need 4-byte alignment
  const bytes = new Uint8Array(data);
  // Loaded on first use: most runs import no glTF, and the library would add to every start-up.
  const { Logger, WebIO } = await import('@gltf-transform/core');
  const io = new WebIO().setLogger(new Logger(Logger.Verbosity.SILENT));
  let doc;
  try {
    doc = await io.readBinary(bytes);
  } catch (e) {
    throw new ImportError(file, '', `is not a readable glTF 2.0 file: ${(e as Error).message}`);
  }
  const root = doc.getRoot();
  const scene = root.getDefaultScene() ?? root.listScenes()[0];
  if (scene === undefined) throw new ImportError(file, 'scenes', 'the file has no scene: nothing places its meshes');
  const nodes = root.listNodes(),
    meshes = root.listMeshes();
  const pos: number[] = [],
    idx: number[] = [],
    groups: MeshGroup[] = [];
  const visit = (node: GltfNode): void => {
    const mesh = node.getMesh();
    if (mesh !== null) {
      const ni = nodes.indexOf(node),
        mi = meshes.indexOf(mesh);
      const m = node.getWorldMatrix();
      if (!m.every(Number.isFinite)) throw new ImportError(file, `nodes[${ni}]`, `its world transform has a non-finite entry: [${m.join(', ')}]`);
      const identity = m.every((x, i) => x === (i % 5 === 0 ? 1 : 0));
      mesh.listPrimitives().forEach((prim, pi) => {
        const at = `nodes[${ni}] mesh ${mi} primitive ${pi}`;
        const mode = prim.getMode();
        if (mode < 4 || mode > 6)
          throw new ImportError(file, at, `has mode ${mode} (${MODES[mode] ?? 'unknown'}): only TRIANGLES, TRIANGLE_STRIP and TRIANGLE_FAN are surfaces`);
        const a = prim.getAttribute('POSITION');
        if (a === null) throw new ImportError(file, at, 'has no POSITION attribute');
        if (a.getType() !== 'VEC3' || a.getComponentType() !== FLOAT)
          throw new ImportError(file, at, `POSITION must be VEC3 of FLOAT (section 3.7.2.1), got ${a.getType()} of component type ${a.getComponentType()}`);
        const p = a.getArray()!,
          n = a.getCount();
        for (let i = 0; i < 3 * n; i++)
          if (!Number.isFinite(p[i]))
            throw new ImportError(file, at, `POSITION vertex ${Math.floor(i / 3)} has a coordinate that is not a finite number (${p[i]})`);
        const ia = prim.getIndices()?.getArray() ?? null;
        const count = ia === null ? n : ia.length;
        const vertexAt = (j: number): number => {
          const v = ia === null ? j : ia[j]!;
          if (!(v < n)) throw new ImportError(file, at, `index ${j} refers to vertex ${v}, outside 0..${n - 1}`);
          return v;
        };
        const base = pos.length / 3,
          first = idx.length / 3;
        for (let v = 0; v < n; v++) {
          const x = p[3 * v]!,
            y = p[3 * v + 1]!,
            z = p[3 * v + 2]!;
          // column-major 4 x 4 (section 3.5.2); the identity copies, keeping -0 and every bit
          if (identity) pos.push(x, y, z);
          else pos.push(m[0] * x + m[4] * y + m[8] * z + m[12], m[1] * x + m[5] * y + m[9] * z + m[13], m[2] * x + m[6] * y + m[10] * z + m[14]);
        }
        if (mode === 4) {
          if (count % 3 !== 0) throw new ImportError(file, at, `has ${count} vertices or indices, not a multiple of 3 for TRIANGLES`);
          for (let j = 0; j < count; j++) idx.push(base + vertexAt(j));
        } else if (mode === 5) {
          // strip: triangle i is (v_i, v_{i + 1 + i % 2}, v_{i + 2 - i % 2}) (section 3.7.2.1)
          for (let i = 0; i + 2 < count; i++) idx.push(base + vertexAt(i), base + vertexAt(i + 1 + (i % 2)), base + vertexAt(i + 2 - (i % 2)));
        } else {
          // fan: triangle i is (v_{i + 1}, v_{i + 2}, v_0) (section 3.7.2.1)
          for (let i = 0; i + 2 < count; i++) idx.push(base + vertexAt(i + 1), base + vertexAt(i + 2), base + vertexAt(0));
        }
        const names = [prim.getMaterial()?.getName() ?? '', mesh.getName(), node.getName()].filter((s) => s !== '');
        const name = names[0] ?? 'default';
        const triangles = idx.length / 3 - first;
        if (triangles > 0) groups.push({ name, aliases: names.slice(1), firstTriangle: first, triangles, label: at });
      });
    }
    for (const child of node.listChildren()) visit(child);
  };
  for (const node of scene.listChildren()) visit(node);
  if (idx.length === 0) throw new ImportError(file, '', 'places no triangle in its scene: nothing to import');
  return { positions: Float64Array.from(pos), indices: Uint32Array.from(idx), groups };
}
