/**
 * scene.imports through the scenario and the command line: imported footprints and meshes mix
 * with hand-typed walls, and broken files are refused with exit code 2 naming the import, the
 * file and the element.
 */
import { copyFileSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { wallsFromGeoJson, wallsFromMesh, readObj, traceScene } from '@pathweave/geometry';
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

  it('a scenario parsed from text is expanded against a stated folder, and refused by sceneOf before', () => {
    const { scenario } = parseScenarioText(JSON.stringify(scenarioJson));
    expect(() => sceneOf(scenario)).toThrow(
      'scene.imports: the imported files are not read yet: load the scenario with loadScenario() or expand it with expandSceneImports(scenario, folder) first',
    );
    expect(expandSceneImports(scenario, join(ROOT, 'examples')).scene!.walls).toHaveLength(1 + 20 + 10);
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
