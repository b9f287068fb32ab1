/**
 * Scenario format versions. This folder keeps one scenario file per released
 * format version (v1.json, ...), never edited after its release. Each must load with the same
 * meaning in every later build, or be refused naming what changed; files written record the
 * version; a version newer than the build is refused. When a format version is released, add
 * its file here and a check of its meaning.
 *
 * Build first (`npx tsc -b`): the CLI runs from dist/.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { CURRENT_FORMAT_VERSION } from '@pathweave/io';
import { openDatasetReader } from '../../packages/io/src/formats/reader.js';
import { NUMPY_REFERENCE } from '../support/numpy-reference.js';
import { hasPython, pythonJson } from '../support/python.js';
import { ROOT, runCli, tempDir, writeScenario } from '../support/run.js';

const HERE = join(ROOT, 'test', 'format-versions');
const versionFiles = readdirSync(HERE).filter((f) => /^v\d+\.json$/.test(f)).sort();
const v1Path = join(HERE, 'v1.json');
const v1 = JSON.parse(readFileSync(v1Path, 'utf8')) as Record<string, any>;

// docs/conventions.md, evaluated independently in numpy (test/support/numpy-reference.ts).
const NUMPY_V1_MEANING = NUMPY_REFERENCE;

describe('one scenario file per released format version', () => {
  it('the folder holds v1.json .. v<current>.json, each declaring its own version', () => {
    expect(versionFiles).toEqual(Array.from({ length: CURRENT_FORMAT_VERSION }, (_, i) => `v${i + 1}.json`));
    for (const f of versionFiles) {
      const doc = JSON.parse(readFileSync(join(HERE, f), 'utf8')) as { formatVersion: number };
      expect(doc.formatVersion).toBe(Number(/\d+/.exec(f)![0]));
    }
  });

  for (const f of versionFiles) {
    it(`${f} loads in this build (validate exits 0)`, () => {
      const r = runCli(['validate', join(HERE, f)]);
      expect(r.status, r.stderr).toBe(0);
      expect(r.stdout).toContain(': valid');
    });
  }

  it.runIf(hasPython('numpy'))('v1.json keeps its meaning: its H equals a numpy evaluation of the version-1 formula, relative error <= 2e-5 in complex64', () => {
    const dir = tempDir();
    const out = join(dir, 'v1.npy');
    const r = runCli(['generate', v1Path, '--out', out, '--quiet']);
    expect(r.status, r.stderr).toBe(0);
    const result = pythonJson<{ dtype: string; shape: number[]; errors: number[] }>(NUMPY_V1_MEANING, [v1Path, out]);
    expect(result.dtype).toBe('complex64');
    expect(result.shape).toEqual([2, 24, 3, 6]);
    // numpy evaluation of docs/conventions.md's formula (C); complex64 rounding of unit-modulus phases
    // over 3 paths x 18 element pairs stays far below 2e-5 relative (as test/channel-numpy.test.ts).
    for (const e of result.errors) expect(e).toBeLessThanOrEqual(2e-5);
  });

  it('a version-1 file and the same document without formatVersion (meaning "current") give the same bytes while current is 1', () => {
    const dir = tempDir();
    const { formatVersion: _, ...unversioned } = v1;
    const file = writeScenario(dir, 'unversioned.json', unversioned);
    expect(runCli(['generate', v1Path, '--out', join(dir, 'a.npy'), '--quiet']).status).toBe(0);
    expect(runCli(['generate', file, '--out', join(dir, 'b.npy'), '--quiet']).status).toBe(0);
    const same = readFileSync(join(dir, 'a.npy')).equals(readFileSync(join(dir, 'b.npy')));
    expect(same).toBe(CURRENT_FORMAT_VERSION === 1);
  });
});

describe('files written record the format version', () => {
  for (const format of ['npz', 'h5'] as const) {
    it(`${format}: a formatVersion attribute equal to the scenario's`, async () => {
      const dir = tempDir();
      const out = join(dir, `v1.${format}`);
      expect(runCli(['generate', v1Path, '--out', out, '--quiet']).status).toBe(0);
      const reader = await openDatasetReader(out);
      try {
        expect(reader.attributes.find((a) => a.name === 'formatVersion')?.value).toBe(1);
      } finally {
        await reader.close();
      }
    });
  }

  it('npy: the side file carries the scenario with its formatVersion', () => {
    const dir = tempDir();
    const out = join(dir, 'v1.npy');
    expect(runCli(['generate', v1Path, '--out', out, '--quiet']).status).toBe(0);
    const side = JSON.parse(readFileSync(`${out}.json`, 'utf8')) as { scenario: { formatVersion: number } };
    expect(side.scenario.formatVersion).toBe(1);
  });

  it('npy: the side file records formatVersion at its top level, the current one when the scenario omits it', () => {
    const dir = tempDir();
    const { formatVersion: _, ...unversioned } = v1;
    const out = join(dir, 'u.npy');
    expect(runCli(['generate', writeScenario(dir, 'u.json', unversioned), '--out', out, '--quiet']).status).toBe(0);
    const side = JSON.parse(readFileSync(`${out}.json`, 'utf8')) as { formatVersion?: number };
    expect(side.formatVersion).toBe(1);
  });
});

describe('versions this build does not know are refused, naming the field', () => {
  for (const [value, message] of [
    [CURRENT_FORMAT_VERSION + 1, `formatVersion: this build reads scenario format versions 1 to ${CURRENT_FORMAT_VERSION}; version ${CURRENT_FORMAT_VERSION + 1} comes from a newer pathweave`],
    [0, 'formatVersion: must be >= 1, got 0'],
    [1.5, 'formatVersion: must be an integer, got 1.5'],
    ['1', 'formatVersion: must be a number, got "1"'],
  ] as const) {
    it(`formatVersion ${JSON.stringify(value)}: exit 2 with "${message}"`, () => {
      const dir = tempDir();
      const r = runCli(['validate', writeScenario(dir, 's.json', { ...v1, formatVersion: value })]);
      expect(r.status).toBe(2);
      expect(r.stderr).toContain(message);
    });
  }
});
