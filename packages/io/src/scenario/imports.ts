/**
 * `scene.imports`: surfaces read from files (GeoJSON building footprints; OBJ, PLY and binary
 * glTF meshes) and added to the scene's walls after the hand-typed ones, so the two mix in one
 * scene. Paths are relative to the scenario file's folder. loadScenario() expands them; a
 * scenario parsed from text is expanded with expandSceneImports(scenario, folder). The mesh
 * format is the file's extension (.obj, .ply, .glb), checked against the file's first bytes.
 */
import { readFileSync } from 'node:fs';
import { extname, isAbsolute, join } from 'node:path';
import { ImportError, readGlb, readObj, readPly, wallsFromGeoJson, wallsFromMesh, type MaterialSpec, type TriangleMesh, type Wall } from '@pathweave/geometry';
import type { Scenario } from './schema.js';
import { ScenarioError } from './validate.js';

type MeshImport = Extract<NonNullable<NonNullable<Scenario['scene']>['imports']>[number], { mesh: string }>;

/** What a file's first bytes say it is (for a mesh named with another format's extension). */
function sniff(bytes: Uint8Array): 'glb' | 'ply' | undefined {
  if (bytes[0] === 0x67 && bytes[1] === 0x6c && bytes[2] === 0x54 && bytes[3] === 0x46) return 'glb';
  if (bytes[0] === 0x70 && bytes[1] === 0x6c && bytes[2] === 0x79 && (bytes[3] === 10 || bytes[3] === 13)) return 'ply';
  return undefined;
}
const FORMAT_NAME = { obj: 'Wavefront OBJ', ply: 'PLY', glb: 'binary glTF' } as const;

/** The triangles of a mesh file by its extension; throws ImportError. */
async function readMesh(name: string, bytes: Uint8Array, im: MeshImport): Promise<TriangleMesh> {
  const ext = extname(name).toLowerCase().slice(1);
  if (ext === 'gltf')
    throw new ImportError(name, '', 'is JSON glTF (.gltf), which is not read: write the scene as binary glTF (.glb), which holds its buffers');
  if (ext !== 'obj' && ext !== 'ply' && ext !== 'glb')
    throw new ImportError(
      name,
      '',
      `is not a mesh format read here (extension ${JSON.stringify(extname(name))}): Wavefront OBJ (.obj), PLY (.ply) and binary glTF (.glb) are`,
    );
  const found = sniff(bytes);
  if (found !== undefined && found !== ext)
    throw new ImportError(name, '', `is named .${ext} but holds ${FORMAT_NAME[found]} (its first bytes): give the file the .${found} extension`);
  if (im.materialProperty !== undefined && ext !== 'ply')
    throw new ImportError(
      name,
      '',
      `materialProperty names a PLY face property; ${FORMAT_NAME[ext]} groups are named in the file (see docs/conventions.md, "Imported surfaces")`,
    );
  if (ext === 'obj') return readObj(new TextDecoder().decode(bytes), name);
  if (ext === 'ply') return readPly(bytes, name, im.materialProperty !== undefined ? { materialProperty: im.materialProperty } : {});
  return readGlb(bytes, name);
}

/**
 * The scenario with `scene.imports` replaced by the walls read from the files (appended to
 * `scene.walls`); throws ScenarioError naming `scene.imports[i]`, the file and the element for
 * an unreadable or broken file. A scenario without imports is returned as it is.
 * @example
 * const { scenario } = parseScenarioText(readFileSync('examples/imported-block-28ghz.json', 'utf8'));
 * (await expandSceneImports(scenario, 'examples')).scene!.walls!.length // 31: the typed pavement, 20 walls from scenes/block.geojson, 10 triangles from scenes/kiosk.obj
 */
export async function expandSceneImports(scenario: Scenario, folder: string, source = 'scenario'): Promise<Scenario> {
  const imports = scenario.scene?.imports;
  if (imports === undefined) return scenario;
  const walls: Wall[] = [...((scenario.scene!.walls ?? []) as Wall[])];
  for (const [i, im] of imports.entries()) {
    const name = 'footprints' in im ? im.footprints : im.mesh;
    const file = isAbsolute(name) ? name : join(folder, name);
    const path = `scene.imports[${i}].${'footprints' in im ? 'footprints' : 'mesh'}`;
    let bytes: Uint8Array;
    try {
      bytes = readFileSync(file);
    } catch (e) {
      throw new ScenarioError([{ path, message: `cannot read ${JSON.stringify(name)} (${file}): ${(e as NodeJS.ErrnoException).code ?? String(e)}` }], source);
    }
    try {
      if ('footprints' in im) {
        walls.push(
          ...wallsFromGeoJson(
            new TextDecoder().decode(bytes),
            {
              origin: im.origin,
              ...(im.heightProperty !== undefined ? { heightProperty: im.heightProperty } : {}),
              ...(im.defaultHeightM !== undefined ? { defaultHeightM: im.defaultHeightM } : {}),
              ...(im.materialProperty !== undefined ? { materialProperty: im.materialProperty } : {}),
              ...(im.materials !== undefined ? { materials: im.materials as Record<string, MaterialSpec> } : {}),
              ...(im.material !== undefined ? { material: im.material as MaterialSpec } : {}),
              ...(im.roofs !== undefined ? { roofs: im.roofs } : {}),
            },
            name,
          ),
        );
      } else {
        const mesh = await readMesh(name, bytes, im);
        // glTF is metres and +Y up (glTF 2.0 section 3.4); OBJ and PLY state no frame: z up unless told
        const upAxis = im.upAxis ?? (/\.glb$/i.test(name) ? 'y' : undefined);
        walls.push(
          ...wallsFromMesh(
            mesh,
            {
              ...(im.unit !== undefined ? { unit: im.unit } : {}),
              ...(upAxis !== undefined ? { upAxis } : {}),
              ...(im.offsetM !== undefined ? { offsetM: im.offsetM } : {}),
              ...(im.materials !== undefined ? { materials: im.materials as Record<string, MaterialSpec> } : {}),
              ...(im.material !== undefined ? { material: im.material as MaterialSpec } : {}),
            },
            name,
          ),
        );
      }
    } catch (e) {
      if (e instanceof ImportError) throw new ScenarioError([{ path, message: e.message }], source);
      throw e;
    }
  }
  const { imports: _done, ...scene } = scenario.scene!;
  void _done;
  return { ...scenario, scene: { ...scene, walls: walls as NonNullable<Scenario['scene']>['walls'] } };
}
