import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { MATERIAL_NAMES, MAX_REFLECTION_ORDER, traceScene } from '@pathweave/geometry';
import { SCENARIO_DEFAULTS, scenarioJsonSchema, scenarioSchema } from '../src/scenario/schema.js';
import { PATHWEAVE_VERSION } from '../src/version.js';
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
    type Node = { type?: string; properties?: Record<string, Node>; items?: Node; prefixItems?: Node[]; anyOf?: Node[]; description?: string; unit?: string; default?: unknown };
    const seen: string[] = [];
    const numeric = (n: Node): boolean => n.type === 'number' || n.type === 'integer' || (n.items !== undefined && numeric(n.items)) || (n.prefixItems ?? []).some(numeric) || (n.anyOf ?? []).some(numeric);
    const walk = (n: Node, path: string): void => {
      for (const [key, child] of Object.entries(n.properties ?? {})) {
        const at = path === '' ? key : `${path}.${key}`;
        seen.push(at);
        expect(child.description, at).toMatch(/\S/);
        if (numeric(child) && child.anyOf === undefined) expect(child.unit, at).toBeDefined();
        walk(child, at);
      }
      for (const c of [...(n.items ? [n.items] : []), ...(n.prefixItems ?? []), ...(n.anyOf ?? [])]) walk(c, path);
    };
    walk(scenarioJsonSchema() as Node, '');
    expect(seen.length).toBeGreaterThan(150);
    const props = (scenarioJsonSchema() as Node).properties!;
    expect(props.carrierHz!.unit).toBe('Hz');
    expect(props.precision!.default).toBe(SCENARIO_DEFAULTS.precision);
    expect(props.taps!.properties!.pulse!.default).toBe(SCENARIO_DEFAULTS.pulse);
    expect(props.transmitter!.properties!.array!.properties!.spacingWavelengths!.default).toBe(0.5);
  });

  it('lists the material names as an enum and the one reflection-order limit of geometry', () => {
    const scene = (scenarioJsonSchema() as { properties: { scene: { properties: Record<string, any> } } }).properties.scene.properties;
    const material = scene.walls.items.properties.material as { anyOf: { type?: string; enum?: string[] }[] };
    expect(material.anyOf.find((o) => o.type === 'string')!.enum).toEqual([...MATERIAL_NAMES]);
    expect(scene.maxReflectionOrder.maximum).toBe(MAX_REFLECTION_ORDER);
    expect(MAX_REFLECTION_ORDER).toBe(3);
    // The schema, the scene validation and the tracer refuse the same orders.
    const scenario = (order: number) => ({
      carrierHz: 28e9, timing: { subframeS: 1e-3, subframes: 1 }, band: { subcarriers: 1, spacingHz: 1e5 }, seed: 1, fading: { model: 'static' },
      transmitter: { position: [0, 0], array: { kind: 'ula', elements: 1 } }, receiver: { position: [5, 0], array: { kind: 'ula', elements: 1 } },
      scene: { maxReflectionOrder: order },
    });
    expect(scenarioSchema.safeParse(scenario(3)).success).toBe(true);
    expect(scenarioSchema.safeParse(scenario(4)).success).toBe(false);
    expect(() => traceScene({ maxReflectionOrder: 4 }, { position: [0, 0, 0] }, { position: [5, 0, 0] }, 28e9)).toThrow('scene.maxReflectionOrder: must be an integer from 0 to 3, got 4');
    expect(() => traceScene({}, { position: [0, 0, 0] }, { position: [5, 0, 0] }, 28e9, { maxReflectionOrder: 4 })).toThrow('traceScene(): maxReflectionOrder must be an integer from 0 to 3, got 4');
    expect(traceScene({}, { position: [0, 0, 0] }, { position: [5, 0, 0] }, 28e9, { maxReflectionOrder: 3 }).paths.map((p) => p.id)).toEqual(['los']);
  });
});

describe('version', () => {
  it('PATHWEAVE_VERSION equals the io package version', () => {
    const pkg = JSON.parse(readFileSync(join(ROOT, 'packages', 'io', 'package.json'), 'utf8')) as { version: string };
    expect(PATHWEAVE_VERSION).toBe(pkg.version);
  });
});
