import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { scenarioJsonSchema } from '../src/scenario/schema.js';
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
});

describe('version', () => {
  it('PATHWEAVE_VERSION equals the io package version', () => {
    const pkg = JSON.parse(readFileSync(join(ROOT, 'packages', 'io', 'package.json'), 'utf8')) as { version: string };
    expect(PATHWEAVE_VERSION).toBe(pkg.version);
  });
});
