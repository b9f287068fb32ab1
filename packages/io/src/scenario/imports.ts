/**
 * `scene.imports`: surfaces read from files (GeoJSON building footprints, OBJ meshes) and added
 * to the scene's walls after the hand-typed ones, so the two mix in one scene. Paths are relative
 * to the scenario file's folder. loadScenario() expands them; a scenario parsed from text is
 * expanded with expandSceneImports(scenario, folder).
 */
import { readFileSync } from 'node:fs';
import { isAbsolute, join } from 'node:path';
import { ImportError, readObj, wallsFromGeoJson, wallsFromMesh, type MaterialSpec, type Wall } from '@pathweave/geometry';
import type { Scenario } from './schema.js';
import { ScenarioError } from './validate.js';

/**
 * The scenario with `scene.imports` replaced by the walls read from the files (appended to
 * `scene.walls`); throws ScenarioError naming `scene.imports[i]`, the file and the element for
 * an unreadable or broken file. A scenario without imports is returned as it is.
 * @example
 * const { scenario } = parseScenarioText(readFileSync('examples/imported-block-28ghz.json', 'utf8'));
 * expandSceneImports(scenario, 'examples').scene!.walls!.length // 31: the typed pavement, 20 walls from scenes/block.geojson, 10 triangles from scenes/kiosk.obj
 */
export function expandSceneImports(scenario: Scenario, folder: string, source = 'scenario'): Scenario {
  const imports = scenario.scene?.imports;
  if (imports === undefined) return scenario;
  const walls: Wall[] = [...((scenario.scene!.walls ?? []) as Wall[])];
  imports.forEach((im, i) => {
    const name = 'footprints' in im ? im.footprints : im.mesh;
    const file = isAbsolute(name) ? name : join(folder, name);
    const path = `scene.imports[${i}].${'footprints' in im ? 'footprints' : 'mesh'}`;
    let text: string;
    try {
      text = readFileSync(file, 'utf8');
    } catch (e) {
      throw new ScenarioError([{ path, message: `cannot read ${JSON.stringify(name)} (${file}): ${(e as NodeJS.ErrnoException).code ?? String(e)}` }], source);
    }
    try {
      if ('footprints' in im) {
        walls.push(
          ...wallsFromGeoJson(
            text,
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
        if (!/\.obj$/i.test(name)) throw new ImportError(name, '', 'is not a mesh format read here: OBJ (.obj) is; PLY and binary glTF are not read yet');
        walls.push(
          ...wallsFromMesh(
            readObj(text, name),
            {
              ...(im.unit !== undefined ? { unit: im.unit } : {}),
              ...(im.upAxis !== undefined ? { upAxis: im.upAxis } : {}),
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
  });
  const { imports: _done, ...scene } = scenario.scene!;
  void _done;
  return { ...scenario, scene: { ...scene, walls: walls as NonNullable<Scenario['scene']>['walls'] } };
}
