/**
 * Triangle meshes to walls: one wall per triangle, with the file's unit and up axis turned into
 * the scene's metres and z-up frame, and a material per mesh group (an OBJ group or material, a
 * glTF primitive by its material, mesh or node name, a PLY face property or the whole file) by a mapping. Layout of a TriangleMesh:
 * `positions` xyz per vertex (the file's unit and axes), `indices` three per triangle (or none:
 * consecutive vertex triples), `groups` ranges of triangles.
 */
import type { MaterialSpec } from '../materials.js';
import type { Wall } from '../scene.js';
import { ImportError } from './geojson.js';

/**
 * A triangle mesh as read from a file (see the module comment).
 * @example const tri: TriangleMesh = { positions: Float64Array.of(0, 0, 0, 1, 0, 0, 0, 1, 0), groups: [{ name: 'floor', firstTriangle: 0, triangles: 1 }] };
 */
export interface TriangleMesh {
  /** x, y, z per vertex, in the file's unit and axes. */
  positions: ArrayLike<number>;
  /** Three vertex indices (from 0) per triangle; without them, consecutive vertex triples. */
  indices?: ArrayLike<number>;
  /** Named ranges of triangles (materials are looked up by name). */
  groups?: readonly MeshGroup[];
}

/**
 * A named range of a mesh's triangles.
 * @example const floor: MeshGroup = { name: 'floor', firstTriangle: 0, triangles: 2 };
 */
export interface MeshGroup {
  /** The group's name (OBJ usemtl, g or o; PLY face property value; glTF material, mesh or node name). */
  name: string;
  /** Further names looked up in order when `name` is not a key of the materials mapping (a glTF primitive's mesh and node names). */
  aliases?: readonly string[];
  /** Where the group is in the file, named in errors about its triangles (e.g. "nodes[2] mesh 0 primitive 1"). */
  label?: string;
  /** Index of its first triangle. */
  firstTriangle: number;
  /** How many triangles. */
  triangles: number;
}

/**
 * A length unit of mesh files.
 * @example const unit: MeshUnit = 'mm';
 */
export type MeshUnit = 'm' | 'cm' | 'mm' | 'km' | 'in' | 'ft';

/**
 * Length units of a mesh file and their size in metres.
 * @example MESH_UNITS.mm // 0.001
 */
export const MESH_UNITS: Readonly<Record<MeshUnit, number>> = { m: 1, cm: 0.01, mm: 0.001, km: 1000, in: 0.0254, ft: 0.3048 };

/**
 * How a mesh becomes walls.
 * @example const options: MeshOptions = { unit: 'mm', upAxis: 'y', materials: { Glass: 'glass' }, material: 'concrete' };
 */
export interface MeshOptions {
  /** The file's length unit (default "m"). */
  unit?: MeshUnit;
  /** The file's up axis (default "z"); "y" maps file (x, y, z) to scene (x, -z, y), a right-handed turn. */
  upAxis?: 'y' | 'z';
  /** Added after scaling and turning, metres (default [0, 0, 0]). */
  offsetM?: readonly [number, number, number];
  /** Group names to materials. */
  materials?: Readonly<Record<string, MaterialSpec>>;
  /** Material of triangles whose group is not in `materials` (default: the scene's default). */
  material?: MaterialSpec;
}

/**
 * One wall per triangle of the mesh; throws ImportError naming the file and the vertex or
 * triangle for NaN or infinite coordinates, indices out of range and degenerate triangles.
 * @example wallsFromMesh({ positions: [0, 0, 0, 1, 0, 0, 0, 0, 1] }, { upAxis: 'y', unit: 'cm' })[0]!.vertices // [[0, 0, 0], [0.01, 0, 0], [0, -0.01, 0]]
 */
export function wallsFromMesh(mesh: TriangleMesh, options: MeshOptions = {}, file = 'mesh'): Wall[] {
  const unit = options.unit ?? 'm';
  const scale = MESH_UNITS[unit];
  if (scale === undefined) throw new RangeError(`wallsFromMesh(): unit must be one of ${Object.keys(MESH_UNITS).join(', ')}, got ${JSON.stringify(unit)}`);
  const up = options.upAxis ?? 'z';
  if (up !== 'y' && up !== 'z') throw new RangeError(`wallsFromMesh(): upAxis must be "y" or "z", got ${JSON.stringify(up)}`);
  const off = options.offsetM ?? [0, 0, 0];
  const P = mesh.positions,
    nv = Math.floor(P.length / 3);
  if (P.length % 3 !== 0) throw new ImportError(file, 'positions', `must hold 3 coordinates per vertex, got ${P.length} numbers`);
  for (let i = 0; i < P.length; i++)
    if (!Number.isFinite(P[i])) throw new ImportError(file, `vertex ${Math.floor(i / 3)}`, `has a coordinate that is not a finite number (${P[i]})`);
  const I = mesh.indices;
  const nt = I === undefined ? Math.floor(nv / 3) : Math.floor(I.length / 3);
  if (I !== undefined && I.length % 3 !== 0) throw new ImportError(file, 'indices', `must hold 3 indices per triangle, got ${I.length}`);
  const groupOf = new Array<MeshGroup | undefined>(nt).fill(undefined);
  for (const g of mesh.groups ?? []) for (let t = g.firstTriangle; t < g.firstTriangle + g.triangles && t < nt; t++) groupOf[t] = g;
  // a triangle named by its place in the file where its group says where that is
  const where = (t: number): string => {
    const g = groupOf[t];
    return g?.label === undefined ? `triangle ${t}` : `${g.label} triangle ${t - g.firstTriangle}`;
  };
  const materialOf = (g: MeshGroup | undefined): MaterialSpec | undefined => {
    if (g === undefined || options.materials === undefined) return undefined;
    for (const n of [g.name, ...(g.aliases ?? [])]) if (Object.hasOwn(options.materials, n)) return options.materials[n];
    return undefined;
  };
  const point = (v: number): [number, number, number] => {
    const x = P[3 * v]! * scale,
      y = P[3 * v + 1]! * scale,
      z = P[3 * v + 2]! * scale;
    return up === 'z' ? [x + off[0], y + off[1], z + off[2]] : [x + off[0], -z + off[1], y + off[2]];
  };
  const walls: Wall[] = [];
  for (let t = 0; t < nt; t++) {
    const ids = [0, 1, 2].map((k) => (I === undefined ? 3 * t + k : I[3 * t + k]!));
    for (const v of ids) if (!(Number.isInteger(v) && v >= 0 && v < nv)) throw new ImportError(file, where(t), `refers to vertex ${v}, outside 0..${nv - 1}`);
    const [a, b, c] = ids.map(point) as [[number, number, number], [number, number, number], [number, number, number]];
    const ux = b[0] - a[0],
      uy = b[1] - a[1],
      uz = b[2] - a[2],
      vx = c[0] - a[0],
      vy = c[1] - a[1],
      vz = c[2] - a[2];
    const area2 = Math.hypot(uy * vz - uz * vy, uz * vx - ux * vz, ux * vy - uy * vx);
    const ext = Math.max(Math.hypot(ux, uy, uz), Math.hypot(vx, vy, vz));
    if (!(area2 > 1e-12 * Math.max(1, ext * ext)))
      throw new ImportError(
        file,
        where(t),
        `is degenerate (vertices ${ids.join(', ')} collinear or coinciding, area ${(area2 / 2).toPrecision(3)} m^2): remove it from the mesh`,
      );
    const material = materialOf(groupOf[t]) ?? options.material;
    walls.push(material === undefined ? { vertices: [a, b, c] } : { vertices: [a, b, c], material });
  }
  return walls;
}
