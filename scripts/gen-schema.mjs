#!/usr/bin/env node
// Writes docs/scenario.schema.json from the zod definition in packages/io (after `tsc -b`).
// A test fails when the committed file differs from what this prints.
import { writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { scenarioJsonSchema } from '../packages/io/dist/scenario/schema.js';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
writeFileSync(join(root, 'docs', 'scenario.schema.json'), JSON.stringify(scenarioJsonSchema(), null, 2) + '\n');
