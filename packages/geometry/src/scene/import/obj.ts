/**
 * Wavefront OBJ geometry (the `v` and `f` statements, with `g`, `o` and `usemtl` naming groups)
 * to a TriangleMesh: polygons are split into fans from their first vertex, negative indices
 * count back from the last vertex read, texture and normal indices (`f 1/2/3`) are ignored, and
 * every other statement (vt, vn, mtllib, s, l, p, ...) is skipped. The group of a face is its
 * latest `usemtl` name, else its latest `g` or `o` name ("default" before any).
 */
import { ImportError } from './geojson.js';
import type { MeshGroup, TriangleMesh } from './mesh.js';

/**
 * Parse OBJ text; `file` names it in errors. Throws ImportError naming the line for a malformed
 * vertex or face, and for text that is not OBJ (no vertex and no face).
 * @example readObj('v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nusemtl glass\nf 1 2 3 4\n').indices // [0, 1, 2, 0, 2, 3]: the quadrilateral as two triangles
 */
export function readObj(text: string, file = 'OBJ input'): TriangleMesh & { indices: number[]; groups: MeshGroup[] } {
  const positions: number[] = [],
    indices: number[] = [];
  const groups: MeshGroup[] = [];
  let group = 'default',
    material: string | undefined;
  const lines = text.split(/\r?\n/);
  const setGroup = (name: string): void => {
    const last = groups[groups.length - 1];
    if (last !== undefined && last.name === name) return;
    if (last !== undefined && last.triangles === 0) groups.pop();
    groups.push({ name, firstTriangle: indices.length / 3, triangles: 0 });
  };
  setGroup(group);
  let faces = 0;
  for (let i = 0; i < lines.length; i++) {
    const line = lines[i]!.replace(/#.*/, '').trim();
    if (line === '') continue;
    const parts = line.split(/\s+/);
    const at = `line ${i + 1}`;
    switch (parts[0]) {
      case 'v': {
        if (parts.length < 4) throw new ImportError(file, at, `a vertex needs x y z, got ${JSON.stringify(line)}`);
        const index = positions.length / 3 + 1;
        for (let k = 1; k <= 3; k++) {
          const x = Number(parts[k]);
          if (!Number.isFinite(x)) throw new ImportError(file, at, `vertex ${index} has a coordinate that is not a finite number: ${JSON.stringify(parts[k])}`);
          positions.push(x);
        }
        break;
      }
      case 'f': {
        if (parts.length < 4) throw new ImportError(file, at, `a face needs at least 3 vertices, got ${JSON.stringify(line)}`);
        const nv = positions.length / 3;
        const ids = parts.slice(1).map((p) => {
          const n = Number(p.split('/')[0]);
          const v = n < 0 ? nv + n : n - 1;
          if (!Number.isInteger(n) || n === 0 || v < 0 || v >= nv)
            throw new ImportError(file, at, `face vertex ${JSON.stringify(p)} refers to no vertex read so far (1..${nv} or -1..-${nv})`);
          return v;
        });
        for (let k = 1; k + 1 < ids.length; k++) indices.push(ids[0]!, ids[k]!, ids[k + 1]!);
        groups[groups.length - 1]!.triangles += ids.length - 2;
        faces++;
        break;
      }
      case 'g':
      case 'o':
        group = parts.slice(1).join(' ') || 'default';
        if (material === undefined) setGroup(group);
        break;
      case 'usemtl':
        material = parts.slice(1).join(' ') || undefined;
        setGroup(material ?? group);
        break;
      default:
        if (!/^[a-z_]+$/i.test(parts[0]!))
          throw new ImportError(file, at, `is not an OBJ statement (${JSON.stringify(line.slice(0, 40))}): is this an OBJ file?`);
    }
  }
  if (positions.length === 0 || faces === 0) throw new ImportError(file, '', 'has no vertex ("v") or no face ("f") statement: not a Wavefront OBJ mesh');
  return { positions, indices, groups: groups.filter((g) => g.triangles > 0) };
}
