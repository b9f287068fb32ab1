/**
 * PLY polygon files (G. Turk, "The PLY Polygon File Format", 1994) to a TriangleMesh: the
 * header (`ply`, `format ascii|binary_little_endian|binary_big_endian 1.0`, `comment`,
 * `obj_info`, `element NAME COUNT`, `property TYPE NAME`, `property list COUNT-TYPE ITEM-TYPE
 * NAME`, `end_header`), then the elements in header order: in ASCII one element per line, in
 * binary packed with no padding in the stated byte order. The `vertex` element's x, y, z
 * properties are the positions; the `face` element's `vertex_indices` (or `vertex_index`) list
 * gives polygons, split into fans from their first vertex as OBJ's are. Every other element and
 * property is read past. Types: char/int8, uchar/uint8, short/int16, ushort/uint16, int/int32,
 * uint/uint32, float/float32, double/float64 (1, 1, 2, 2, 4, 4, 4, 8 bytes).
 */
import { ImportError } from './geojson.js';
import type { MeshGroup, TriangleMesh } from './mesh.js';

/**
 * How a PLY file's faces are grouped.
 * @example const options: PlyOptions = { materialProperty: 'material_index' };
 */
export interface PlyOptions {
  /**
   * A scalar property of the face element whose value names each face's group (the value
   * written as a decimal string, e.g. "2"); without it the whole file is one group, "default".
   */
  materialProperty?: string;
}

type Scalar = 'int8' | 'uint8' | 'int16' | 'uint16' | 'int32' | 'uint32' | 'float32' | 'float64';
const TYPES: Readonly<Record<string, Scalar>> = {
  char: 'int8',
  int8: 'int8',
  uchar: 'uint8',
  uint8: 'uint8',
  short: 'int16',
  int16: 'int16',
  ushort: 'uint16',
  uint16: 'uint16',
  int: 'int32',
  int32: 'int32',
  uint: 'uint32',
  uint32: 'uint32',
  float: 'float32',
  float32: 'float32',
  double: 'float64',
  float64: 'float64',
};
const SIZE: Readonly<Record<Scalar, number>> = { int8: 1, uint8: 1, int16: 2, uint16: 2, int32: 4, uint32: 4, float32: 4, float64: 8 };
const INTEGER: Readonly<Record<Scalar, boolean>> = {
  int8: true,
  uint8: true,
  int16: true,
  uint16: true,
  int32: true,
  uint32: true,
  float32: false,
  float64: false,
};

interface Property {
  name: string;
  type: Scalar;
  /** The count's type of a list property. */
  countType?: Scalar;
}
interface Element {
  name: string;
  count: number;
  properties: Property[];
}
type Format = 'ascii' | 'binary_little_endian' | 'binary_big_endian';

/**
 * Parse a PLY file's bytes (ASCII or binary, either byte order); `file` names it in errors.
 * Throws ImportError naming the header line, the element and its index for a malformed header,
 * a file that is not PLY, a truncated body, non-finite vertices, faces of fewer than 3 vertices
 * and face indices outside the vertex list.
 * @example
 * const ply = 'ply\nformat ascii 1.0\nelement vertex 4\nproperty float x\nproperty float y\nproperty float z\nelement face 1\nproperty list uchar int vertex_indices\nend_header\n0 0 0\n1 0 0\n1 1 0\n0 1 0\n4 0 1 2 3\n';
 * readPly(new TextEncoder().encode(ply)).indices // [0, 1, 2, 0, 2, 3]: the quadrilateral as two triangles
 */
export function readPly(
  data: Uint8Array,
  file = 'PLY input',
  options: PlyOptions = {},
): TriangleMesh & { positions: Float64Array; indices: number[]; groups: MeshGroup[] } {
  const { format, elements, bodyStart } = parseHeader(data, file);
  const vertex = elements.find((e) => e.name === 'vertex');
  if (vertex === undefined) throw new ImportError(file, 'header', 'declares no "vertex" element: a mesh needs vertices');
  const face = elements.find((e) => e.name === 'face');
  if (face === undefined) throw new ImportError(file, 'header', 'declares no "face" element: a point cloud is not a mesh of surfaces');
  const xyz = ['x', 'y', 'z'].map((n) => {
    const k = vertex.properties.findIndex((p) => p.name === n);
    if (k < 0 || vertex.properties[k]!.countType !== undefined)
      throw new ImportError(
        file,
        'header',
        `the "vertex" element has no scalar property "${n}" (it has ${vertex.properties.map((p) => p.name).join(', ') || 'none'})`,
      );
    return k;
  }) as [number, number, number];
  const list = face.properties.findIndex((p) => (p.name === 'vertex_indices' || p.name === 'vertex_index') && p.countType !== undefined);
  if (list < 0) throw new ImportError(file, 'header', 'the "face" element has no list property "vertex_indices" (or "vertex_index")');
  if (!INTEGER[face.properties[list]!.type])
    throw new ImportError(file, 'header', `the face list "${face.properties[list]!.name}" must hold integers, not ${face.properties[list]!.type}`);
  let groupProp = -1;
  if (options.materialProperty !== undefined) {
    groupProp = face.properties.findIndex((p) => p.name === options.materialProperty && p.countType === undefined);
    if (groupProp < 0)
      throw new ImportError(
        file,
        'header',
        `the "face" element has no scalar property "${options.materialProperty}" (the materialProperty); it has ${face.properties.map((p) => p.name).join(', ')}`,
      );
  }

  const positions = new Float64Array(3 * vertex.count);
  const indices: number[] = [];
  const groups: MeshGroup[] = [];
  let group = '';
  let faceIndex = 0,
    vertexIndex = 0;
  // one element's values: scalars in `row`, the face list in `items`
  const row: number[] = [];
  const items: number[] = [];
  const take = (el: Element, where: string): void => {
    if (el === vertex) {
      const v = vertexIndex++;
      for (let k = 0; k < 3; k++) {
        const c = row[xyz[k]!]!;
        if (!Number.isFinite(c)) throw new ImportError(file, where, `vertex ${v} has a coordinate that is not a finite number (${c})`);
        positions[3 * v + k] = c;
      }
    } else if (el === face) {
      const f = faceIndex++;
      if (items.length < 3) throw new ImportError(file, where, `face ${f} has ${items.length} vertices; a face needs at least 3`);
      for (const v of items)
        if (!(v >= 0 && v < vertex.count)) throw new ImportError(file, where, `face ${f} refers to vertex ${v}, outside 0..${vertex.count - 1}`);
      const name = groupProp < 0 ? 'default' : String(row[groupProp]);
      if (name !== group || groups.length === 0) {
        groups.push({ name, firstTriangle: indices.length / 3, triangles: 0 });
        group = name;
      }
      for (let k = 1; k + 1 < items.length; k++) indices.push(items[0]!, items[k]!, items[k + 1]!);
      groups[groups.length - 1]!.triangles += items.length - 2;
    }
  };
  const need = (el: Element): boolean => el === vertex || el === face;

  if (format === 'ascii') {
    const text = new TextDecoder('utf-8', { fatal: false }).decode(data.subarray(bodyStart));
    const lines = text.split('\n');
    const headerLines = countLines(data, bodyStart);
    let li = 0;
    for (const el of elements) {
      for (let i = 0; i < el.count; i++) {
        // blank lines between elements carry nothing
        while (li < lines.length && lines[li]!.trim() === '') li++;
        if (li >= lines.length)
          throw new ImportError(file, `element "${el.name}" ${i}`, `the file ends after ${i} of ${el.count} "${el.name}" lines: it is truncated`);
        const where = `line ${headerLines + li + 1}`;
        const tokens = lines[li++]!.trim().split(/\s+/);
        let t = 0;
        row.length = 0;
        items.length = 0;
        const next = (type: Scalar, what: string): number => {
          if (t >= tokens.length) throw new ImportError(file, where, `"${el.name}" ${i} ends before its ${what}: ${tokens.length} values on the line`);
          const s = tokens[t++]!;
          const x = number(s);
          if (x === undefined) throw new ImportError(file, where, `${JSON.stringify(s)} is not a number (${what} of "${el.name}" ${i})`);
          if (INTEGER[type] && !Number.isInteger(x))
            throw new ImportError(file, where, `${JSON.stringify(s)} is not an integer (${what} of "${el.name}" ${i}, type ${type})`);
          return x;
        };
        for (const p of el.properties) {
          if (p.countType === undefined) row.push(next(p.type, p.name));
          else {
            const n = next(p.countType, `the count of ${p.name}`);
            if (n < 0) throw new ImportError(file, where, `the count of ${p.name} of "${el.name}" ${i} is negative (${n})`);
            row.push(NaN);
            for (let k = 0; k < n; k++) {
              const x = next(p.type, `${p.name}[${k}]`);
              if (el === face && p === face.properties[list]) items.push(x);
            }
          }
        }
        if (t < tokens.length)
          throw new ImportError(file, where, `"${el.name}" ${i} has ${tokens.length - t} more values than its ${el.properties.length} properties declare`);
        if (need(el)) take(el, where);
      }
    }
    while (li < lines.length && lines[li]!.trim() === '') li++;
    if (li < lines.length)
      throw new ImportError(file, `line ${headerLines + li + 1}`, 'comes after the last element the header declares: do the counts match the file?');
  } else {
    const little = format === 'binary_little_endian';
    const view = new DataView(data.buffer, data.byteOffset, data.byteLength);
    let at = bodyStart;
    const read = (type: Scalar, el: Element, i: number): number => {
      const size = SIZE[type];
      if (at + size > data.byteLength)
        throw new ImportError(
          file,
          `element "${el.name}" ${i}`,
          `the file ends inside it (byte ${at} of ${data.byteLength}; ${el.count} "${el.name}" elements declared): it is truncated`,
        );
      let x: number;
      switch (type) {
        case 'int8':
          x = view.getInt8(at);
          break;
        case 'uint8':
          x = view.getUint8(at);
          break;
        case 'int16':
          x = view.getInt16(at, little);
          break;
        case 'uint16':
          x = view.getUint16(at, little);
          break;
        case 'int32':
          x = view.getInt32(at, little);
          break;
        case 'uint32':
          x = view.getUint32(at, little);
          break;
        case 'float32':
          x = view.getFloat32(at, little);
          break;
        default:
          x = view.getFloat64(at, little);
      }
      at += size;
      return x;
    };
    for (const el of elements) {
      const keep = need(el);
      for (let i = 0; i < el.count; i++) {
        row.length = 0;
        items.length = 0;
        for (const p of el.properties) {
          if (p.countType === undefined) row.push(read(p.type, el, i));
          else {
            const n = read(p.countType, el, i);
            if (n < 0) throw new ImportError(file, `element "${el.name}" ${i}`, `the count of ${p.name} is negative (${n})`);
            row.push(NaN);
            const isList = el === face && p === face.properties[list];
            for (let k = 0; k < n; k++) {
              const x = read(p.type, el, i);
              if (isList) items.push(x);
            }
          }
        }
        if (keep) take(el, `element "${el.name}" ${i}`);
      }
    }
    if (at !== data.byteLength)
      throw new ImportError(file, '', `has ${data.byteLength - at} bytes after the last element the header declares: do the counts match the file?`);
  }
  return { positions, indices, groups: groups.filter((g) => g.triangles > 0) };
}

/** Lines (newlines) in data[0, end). */
function countLines(data: Uint8Array, end: number): number {
  let n = 0;
  for (let i = 0; i < end; i++) if (data[i] === 10) n++;
  return n;
}

/** The header's format and elements, and the byte where the body starts (after "end_header\n"). */
function parseHeader(data: Uint8Array, file: string): { format: Format; elements: Element[]; bodyStart: number } {
  // the magic: "ply" alone on the first line (Turk 1994)
  if (!(data[0] === 0x70 && data[1] === 0x6c && data[2] === 0x79 && (data[3] === 10 || (data[3] === 13 && data[4] === 10))))
    throw new ImportError(file, '', `does not start with the line "ply" (it starts with ${JSON.stringify(latin1(data.subarray(0, 16)))}): not a PLY file`);
  const elements: Element[] = [];
  let format: Format | undefined;
  let pos = 0,
    lineNo = 0;
  for (;;) {
    const nl = data.indexOf(10, pos);
    if (nl < 0 || lineNo > 100000) throw new ImportError(file, 'header', 'has no "end_header" line: the header is incomplete');
    const line = latin1(data.subarray(pos, nl)).replace(/\r$/, '').trim();
    pos = nl + 1;
    lineNo++;
    const at = `header line ${lineNo}`;
    const w = line.split(/\s+/);
    if (lineNo === 1) continue; // "ply"
    switch (w[0]) {
      case 'format':
        if (w[1] !== 'ascii' && w[1] !== 'binary_little_endian' && w[1] !== 'binary_big_endian')
          throw new ImportError(file, at, `format ${JSON.stringify(w[1] ?? '')} is not one of ascii, binary_little_endian, binary_big_endian`);
        if (w[2] !== '1.0') throw new ImportError(file, at, `version ${JSON.stringify(w[2] ?? '')} is not 1.0, the one PLY version`);
        format = w[1];
        break;
      case 'comment':
      case 'obj_info':
        break;
      case 'element': {
        const count = Number(w[2]);
        if (w.length !== 3 || !Number.isInteger(count) || count < 0)
          throw new ImportError(file, at, `an element needs a name and a count >= 0, got ${JSON.stringify(line)}`);
        if (elements.some((e) => e.name === w[1])) throw new ImportError(file, at, `element "${w[1]}" is declared twice`);
        elements.push({ name: w[1]!, count, properties: [] });
        break;
      }
      case 'property': {
        const el = elements[elements.length - 1];
        if (el === undefined) throw new ImportError(file, at, 'a property before any element');
        if (w[1] === 'list') {
          const countType = TYPES[w[2] ?? ''],
            type = TYPES[w[3] ?? ''];
          if (w.length !== 5 || countType === undefined || type === undefined || !INTEGER[countType])
            throw new ImportError(file, at, `a list property needs an integer count type, an item type and a name, got ${JSON.stringify(line)}`);
          el.properties.push({ name: w[4]!, type, countType });
        } else {
          const type = TYPES[w[1] ?? ''];
          if (w.length !== 3 || type === undefined)
            throw new ImportError(file, at, `a property needs a type (${Object.keys(TYPES).join(', ')}) and a name, got ${JSON.stringify(line)}`);
          el.properties.push({ name: w[2]!, type });
        }
        break;
      }
      case 'end_header':
        if (format === undefined) throw new ImportError(file, 'header', 'has no "format" line');
        return { format, elements, bodyStart: pos };
      default:
        throw new ImportError(
          file,
          at,
          `${JSON.stringify(line.slice(0, 40))} is not a PLY header line (format, comment, obj_info, element, property, end_header)`,
        );
    }
  }
}

/** A token's number; nan and inf as C's printf writes them are kept (and refused later with the vertex named). */
function number(s: string): number | undefined {
  const x = Number(s);
  if (!Number.isNaN(x)) return x;
  if (/^[-+]?nan$/i.test(s)) return NaN;
  if (/^[-+]?inf$/i.test(s)) return s[0] === '-' ? -Infinity : Infinity;
  return undefined;
}

function latin1(bytes: Uint8Array): string {
  let s = '';
  for (let i = 0; i < bytes.length; i++) s += String.fromCharCode(bytes[i]!);
  return s;
}
