import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { LAUNCH_MAX_BOUNCES, LAUNCH_MAX_RAYS, MATERIAL_NAMES, MAX_REFLECTION_ORDER, traceScene } from '@pathweave/geometry';
import { SCENARIO_DEFAULTS, scenarioJsonSchema, scenarioSchema } from '../src/scenario/schema.js';
import { PATHWEAVE_VERSION } from '../src/version.js';
import { formatProblem, safeParseScenario } from '../src/scenario/validate.js';
import { ROOT } from '../../../test/support/run.js';

describe('docs/scenario.schema.json', () => {
  it('is the JSON Schema generated from the zod definition (run scripts/gen-schema.mjs after a change)', () => {
    const committed = JSON.parse(readFileSync(join(ROOT, 'docs', 'scenario.schema.json'), 'utf8')) as unknown;
    expect(committed).toEqual(JSON.parse(JSON.stringify(scenarioJsonSchema())));
  });
  it('declares the fixed keys of docs/guide.md and refuses unknown ones', () => {
    const schema = scenarioJsonSchema() as { properties: Record<string, unknown>; required: string[]; additionalProperties: boolean };
    for (const key of ['carrierHz', 'timing', 'band', 'taps', 'transmitter', 'receiver', 'scene', 'paths', 'fading', 'seed', 'precision', 'formatVersion']) {
      expect(schema.properties).toHaveProperty(key);
    }
    expect(schema.required).toEqual(expect.arrayContaining(['carrierHz', 'timing', 'transmitter', 'fading', 'seed']));
    expect(schema.additionalProperties).toBe(false);
  });

  it('gives every key a description, every number a unit and optional keys their defaults', () => {
    type Node = {
      type?: string;
      properties?: Record<string, Node>;
      items?: Node;
      prefixItems?: Node[];
      anyOf?: Node[];
      oneOf?: Node[];
      description?: string;
      unit?: string;
      default?: unknown;
    };
    const seen: string[] = [];
    const numeric = (n: Node): boolean =>
      n.type === 'number' ||
      n.type === 'integer' ||
      (n.items !== undefined && numeric(n.items)) ||
      (n.prefixItems ?? []).some(numeric) ||
      (n.anyOf ?? []).some(numeric) ||
      (n.oneOf ?? []).some(numeric);
    const walk = (n: Node, path: string): void => {
      for (const [key, child] of Object.entries(n.properties ?? {})) {
        const at = path === '' ? key : `${path}.${key}`;
        seen.push(at);
        expect(child.description, at).toMatch(/\S/);
        if (numeric(child) && child.anyOf === undefined) expect(child.unit, at).toBeDefined();
        walk(child, at);
      }
      for (const c of [...(n.items ? [n.items] : []), ...(n.prefixItems ?? []), ...(n.anyOf ?? []), ...(n.oneOf ?? [])]) walk(c, path);
    };
    walk(scenarioJsonSchema() as Node, '');
    expect(seen.length).toBeGreaterThan(150);
    const props = (scenarioJsonSchema() as Node).properties!;
    expect(props.carrierHz!.unit).toBe('Hz');
    expect(props.precision!.default).toBe(SCENARIO_DEFAULTS.precision);
    expect(props.taps!.oneOf![0]!.properties!.pulse!.default).toBe(SCENARIO_DEFAULTS.pulse);
    expect(props.transmitter!.properties!.array!.oneOf![0]!.properties!.spacingWavelengths!.default).toBe(0.5);
  });

  it('shows the array kinds and fading models as variants (oneOf, each with its tag as a const and its own required keys)', () => {
    type Variant = { properties: Record<string, { const?: string; not?: object }>; required?: string[] };
    const props = (scenarioJsonSchema() as { properties: Record<string, { properties?: Record<string, { oneOf?: Variant[] }>; oneOf?: Variant[] }> })
      .properties;
    const kinds = props.transmitter!.properties!.array!.oneOf!;
    expect(kinds.map((v) => [v.properties.kind!.const, v.required])).toEqual([
      ['ula', ['kind', 'elements']],
      ['upa', ['kind', 'rows', 'columns']],
      ['custom', ['kind', 'positions']],
    ]);
    // A key another kind takes is refused in this one ("not": {}), so an editor flags it.
    expect(kinds[0]!.properties.rows!.not).toEqual({});
    expect(kinds[2]!.properties.spacingWavelengths!.not).toEqual({});
    const models = props.fading!.oneOf!;
    expect(models.map((v) => v.properties.model!.const)).toEqual(['static', 'gauss-markov', 'ar', 'sum-of-sinusoids', 'geometric']);
    expect(models.filter((v) => v.properties.order!.not === undefined).map((v) => v.properties.model!.const)).toEqual(['ar']);
    expect(models.filter((v) => v.properties.ricianKDb!.not === undefined).map((v) => v.properties.model!.const)).toEqual(['geometric']);
  });

  it('lists the material names as an enum and the one reflection-order limit of geometry', () => {
    const scene = (scenarioJsonSchema() as { properties: { scene: { properties: Record<string, any> } } }).properties.scene.properties;
    const material = scene.walls.items.properties.material as { anyOf: { type?: string; enum?: string[] }[] };
    expect(material.anyOf.find((o) => o.type === 'string')!.enum).toEqual([...MATERIAL_NAMES]);
    expect(scene.maxReflectionOrder.maximum).toBe(MAX_REFLECTION_ORDER);
    expect(MAX_REFLECTION_ORDER).toBe(3);
    // The schema, the scene validation and the tracer refuse the same orders.
    const scenario = (order: number) => ({
      carrierHz: 28e9,
      timing: { subframeS: 1e-3, subframes: 1 },
      band: { subcarriers: 1, spacingHz: 1e5 },
      seed: 1,
      fading: { model: 'static' },
      transmitter: { position: [0, 0], array: { kind: 'ula', elements: 1 } },
      receiver: { position: [5, 0], array: { kind: 'ula', elements: 1 } },
      scene: { maxReflectionOrder: order },
    });
    expect(scenarioSchema.safeParse(scenario(3)).success).toBe(true);
    expect(scenarioSchema.safeParse(scenario(4)).success).toBe(false);
    expect(() => traceScene({ maxReflectionOrder: 4 }, { position: [0, 0, 0] }, { position: [5, 0, 0] }, 28e9)).toThrow(
      'scene.maxReflectionOrder: must be an integer from 0 to 3, got 4',
    );
    expect(() => traceScene({}, { position: [0, 0, 0] }, { position: [5, 0, 0] }, 28e9, { maxReflectionOrder: 4 })).toThrow(
      'traceScene(): maxReflectionOrder must be an integer from 0 to 3, got 4',
    );
    expect(traceScene({}, { position: [0, 0, 0] }, { position: [5, 0, 0] }, 28e9, { maxReflectionOrder: 3 }).paths.map((p) => p.id)).toEqual(['los']);
  });

  it('takes scene.method and scene.launch with the limits of geometry, and refuses rays with angularSpacingDeg', () => {
    const scene = (scenarioJsonSchema() as { properties: { scene: { properties: Record<string, any> } } }).properties.scene.properties;
    expect(scene.method.enum).toEqual(['image', 'launch']);
    expect(scene.launch.properties.maxBounces.maximum).toBe(LAUNCH_MAX_BOUNCES);
    expect(scene.launch.properties.rays.maximum).toBe(LAUNCH_MAX_RAYS);
    const scenario = (launch: object) => ({
      carrierHz: 28e9,
      timing: { subframeS: 1e-3, subframes: 1 },
      band: { subcarriers: 1, spacingHz: 1e5 },
      seed: 1,
      fading: { model: 'static' },
      transmitter: { position: [0, 0, 1], array: { kind: 'ula', elements: 1 } },
      receiver: { position: [5, 0, 1], array: { kind: 'ula', elements: 1 } },
      scene: {
        method: 'launch',
        launch,
        walls: Array.from({ length: 400 }, (_, i) => ({
          vertices: [
            [i, 9, 0],
            [i + 0.5, 9, 0],
            [i + 0.5, 9, 3],
          ],
        })),
        maxReflectionOrder: 3,
      },
    });
    const problemsOf = (input: unknown): string[] => {
      const r = safeParseScenario(input);
      return r.ok ? [] : r.problems.map(formatProblem);
    };
    // 400 walls at order 3 are 400 + 400 x 399 + 400 x 399^2 = 63 840 400 sequences: refused for the image method, not for launching
    expect(problemsOf(scenario({ rays: 10242, maxBounces: 4 }))).toEqual([]);
    expect(problemsOf({ ...scenario({}), scene: { ...scenario({}).scene, method: 'image' } })).toEqual([
      expect.stringMatching(/^scene\.maxReflectionOrder: 400 walls at order 3 mean 63840400 reflection sequences to trace, more than the 1000000 allowed/),
    ]);
    expect(problemsOf(scenario({ rays: 10242, angularSpacingDeg: 1 }))).toEqual(['scene.launch.rays: give rays or angularSpacingDeg, not both']);
    expect(scenarioSchema.safeParse(scenario({ maxBounces: LAUNCH_MAX_BOUNCES + 1 })).success).toBe(false);
  });
});

describe('version', () => {
  it('PATHWEAVE_VERSION equals the io package version', () => {
    const pkg = JSON.parse(readFileSync(join(ROOT, 'packages', 'io', 'package.json'), 'utf8')) as { version: string };
    expect(PATHWEAVE_VERSION).toBe(pkg.version);
  });
});

describe('the variants of the scenario schema state their own keys', () => {
  const scenario = (array: object, fading: object, carrierHz = 28e9) => ({
    carrierHz,
    timing: { subframeS: 1e-3, subframes: 2 },
    band: { subcarriers: 4, spacingHz: 120e3 },
    transmitter: { position: [0, 0, 10], array },
    receiver: { position: [50, 0, 1.5], array: { kind: 'ula', elements: 1 } },
    paths: [{ aodDeg: [0, 0], aoaDeg: [180, 0], delayS: 1e-7, powerDb: -90 }],
    fading,
    seed: 1,
  });
  it('a upa without rows and columns and a model with options of other models: every problem at once, beside an unrelated one', () => {
    const r = safeParseScenario(scenario({ kind: 'upa', elements: 4 }, { model: 'static', speedMps: 3, order: 2, sinusoids: 16, ricianKDb: 3 }, -1));
    expect(r.ok ? [] : r.problems.map(formatProblem)).toEqual([
      'carrierHz: must be > 0, got -1',
      'transmitter.array.elements: does not apply to kind "upa", got 4',
      'transmitter.array.rows: is required for kind "upa" (elements along local +z)',
      'transmitter.array.columns: is required for kind "upa" (elements along local +y)',
      'fading.speedMps: has no effect with model "static"',
      'fading.order: applies only to model "ar", got model "static"',
      'fading.sinusoids: applies only to models "sum-of-sinusoids" and "geometric", got model "static"',
      'fading.ricianKDb: applies only to model "geometric", got model "static"',
    ]);
  });
  it('a tag that names no variant lists the allowed ones; a key of the variant keeps its own checks', () => {
    const r = safeParseScenario(scenario({ kind: 'dish' }, { model: 'sum-of-sinusoids', sinusoids: 5 }));
    expect(r.ok ? [] : r.problems.map(formatProblem)).toEqual([
      'transmitter.array.kind: must be one of "ula", "upa", "custom", got "dish"',
      'fading.sinusoids: must be >= 8 (Zheng & Xiao need that many for their statistics), got 5',
    ]);
    const zero = safeParseScenario(
      scenario({ kind: 'custom', positions: [[0, 0, 0]], spacingWavelengths: 0.5 }, { model: 'geometric', sinusoids: 0, ricianKDb: 6 }),
    );
    expect(zero.ok ? [] : zero.problems.map(formatProblem)).toEqual([
      'transmitter.array.spacingWavelengths: does not apply to kind "custom", got 0.5',
      'fading.sinusoids: must be >= 1, got 0',
    ]);
    expect(safeParseScenario(scenario({ kind: 'upa', rows: 2, columns: 4, spacingWavelengths: 0.5 }, { model: 'ar', order: 3, speedMps: 2 })).ok).toBe(true);
  });

  it('clusters by method: "offsets-38901", given or implied by a preset, has 20 sub-paths; taps by pulse: a roll-off only with the raised cosine', () => {
    const withClusters = (clusters: object) => ({ ...scenario({ kind: 'ula', elements: 2 }, { model: 'static' }), clusters });
    const problems = (clusters: object) => {
      const r = safeParseScenario(withClusters(clusters));
      return r.ok ? [] : r.problems.map(formatProblem);
    };
    const twenty = 'method "offsets-38901" has 20 sub-paths (3GPP TR 38.901 Table 7.5-3), got 10';
    expect(problems({ method: 'offsets-38901', subPaths: 10 })).toEqual([`clusters.subPaths: ${twenty}`]);
    expect(problems({ preset: 'umi-nlos', subPaths: 10 })).toEqual([`clusters.subPaths: ${twenty}`]);
    expect(problems({ preset: 'umi-nlos', method: 'laplacian', subPaths: 10 })).toEqual([]);
    expect(problems({ subPaths: 10, azimuthSpreadArrivalDeg: 5 })).toEqual([]);
    expect(problems({ preset: 'umi-nlos', subPaths: 20 })).toEqual([]);
    expect(problems({ method: 'circle' })).toEqual(['clusters.method: must be one of "gaussian", "laplacian", "offsets-38901", got "circle"']);
    expect(problems({ presett: 'umi-los' })).toEqual(['clusters.presett: unknown key; did you mean "preset"?']);
    const taps = (t: object) => {
      const r = safeParseScenario({ ...withClusters({}), band: undefined, taps: { sampleRateHz: 1e9, count: 8, ...t } });
      return r.ok ? [] : r.problems.map(formatProblem);
    };
    expect(taps({ rollOff: 0.2 })).toEqual(['taps.rollOff: applies only with pulse "raised-cosine"']);
    expect(taps({ pulse: 'raised-cosine', rollOff: 0.2 })).toEqual([]);
  });
});
