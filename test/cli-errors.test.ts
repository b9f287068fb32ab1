/**
 * Bad input: a clear message and exit code 2 (docs/conventions.md, "Command line"), and no output file is
 * created or overwritten.
 */
import { existsSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROOT, runCli, tempDir, writeScenario } from './support/run.js';

const good = JSON.parse(readFileSync(join(ROOT, 'test', 'fixtures', 'three-path-static.json'), 'utf8')) as Record<string, unknown>;
const withChange = (edit: (s: Record<string, any>) => void): Record<string, unknown> => {
  const s = structuredClone(good) as Record<string, any>;
  edit(s);
  return s;
};

function refuse(scenario: unknown, expected: string | RegExp, extraArgs: string[] = []): string {
  const dir = tempDir();
  const file = writeScenario(dir, 'scenario.json', scenario);
  const out = join(dir, 'out.npy');
  writeFileSync(out, 'an earlier file that must survive');
  const r = runCli(['generate', file, '--out', out, ...extraArgs]);
  expect(r.status).toBe(2);
  if (typeof expected === 'string') expect(r.stderr).toContain(expected);
  else expect(r.stderr).toMatch(expected);
  expect(readFileSync(out, 'utf8')).toBe('an earlier file that must survive');
  expect(readdirSync(dir).sort()).toEqual(['out.npy', 'scenario.json']); // no temporary file left
  const v = runCli(['validate', file]);
  if (extraArgs.length === 0) expect(v.status).toBe(2);
  return r.stderr;
}

describe('refused input', () => {
  it('malformed JSON, with line and column', () => {
    const text = JSON.stringify(good, null, 2).replace('"seed": 3', '"seed": 3,');
    const err = refuse(text, /not valid JSON: expected a key in double quotes but found '}' at line \d+, column 1/);
    expect(err).not.toContain('    at '); // no stack trace
  });

  it('a negative or zero frequency', () => {
    refuse(
      withChange((s) => (s.carrierHz = -28e9)),
      'carrierHz: must be > 0, got -28000000000',
    );
    refuse(
      withChange((s) => (s.band.spacingHz = 0)),
      'band.spacingHz: must be > 0, got 0',
    );
  });

  it('NaN or a string where a number belongs', () => {
    refuse(JSON.stringify(good).replace('"carrierHz":39000000000', '"carrierHz":NaN'), 'NaN and Infinity are not JSON numbers');
    refuse(
      withChange((s) => (s.paths[1].delayS = '171 ns')),
      'paths[1].delayS: must be a number, got "171 ns"',
    );
    refuse(
      withChange((s) => (s.timing.subframeS = 'NaN')),
      'timing.subframeS: must be a number, got "NaN"',
    );
  });

  it('an array with no elements', () => {
    refuse(
      withChange((s) => (s.receiver.array.elements = 0)),
      'receiver.array.elements: must be >= 1, got 0',
    );
    refuse(
      withChange((s) => (s.transmitter.array = { kind: 'custom', positions: [] })),
      'transmitter.array.positions: must have at least 1 item, got []',
    );
    refuse(
      withChange((s) => delete s.receiver.array.elements),
      'receiver.array.elements: is required for kind "ula"',
    );
  });

  it('an unknown key, with the nearest known key', () => {
    // A typo replaces the key it misspells; a key already present is never suggested.
    refuse(
      withChange((s) => {
        s.transmitter.array.spacingWavelength = 0.5;
        delete s.transmitter.array.spacingWavelengths;
      }),
      'transmitter.array.spacingWavelength: unknown key; did you mean "spacingWavelengths"?',
    );
    refuse(
      withChange((s) => {
        s.fadding = s.fading;
        delete s.fading;
      }),
      'fadding: unknown key; did you mean "fading"?',
    );
  });

  it('a seed that is not an integer below 2^53', () => {
    refuse(
      withChange((s) => (s.seed = 1.5)),
      'seed: must be an integer, got 1.5',
    );
    refuse(
      withChange((s) => (s.seed = 2 ** 53)),
      'seed: must be an integer below 2^53, got 9007199254740992',
    );
    refuse(
      withChange((s) => (s.seed = -1)),
      'seed: must be >= 0, got -1',
    );
    refuse(good, '--seed must be an integer in [0, 9007199254740991], got 9007199254740992', ['--seed', '9007199254740992']);
  });

  it('an output larger than the limit, before any work, saying the size', () => {
    const err = refuse(
      withChange((s) => (s.timing.subframes = 100_000_000)),
      /the output would be 590\.1 GiB \(633600000000 bytes, shape \[100000000, 33, 3, 8\]\), over the limit of 64\.0 GiB; raise it with --max-bytes/,
      [],
    );
    expect(err).not.toContain('\n    at ');
    refuse(good, 'over the limit of 1000 B', ['--max-bytes', '1000']);
  });

  it('reports every problem at once', () => {
    const err = refuse(
      withChange((s) => {
        s.carrierHz = 0;
        s.seed = 'x';
        s.receiver.array.kind = 'dish';
      }),
      '3 problems',
    );
    expect(err).toContain('carrierHz: must be > 0, got 0');
    expect(err).toContain('seed: must be a number, got "x"');
    expect(err).toContain('receiver.array.kind: must be one of "ula", "upa", "custom", got "dish"');
  });

  it('bad command lines exit 2', () => {
    expect(runCli(['generate', join(ROOT, 'test', 'fixtures', 'three-path-static.json')]).stderr).toContain('--out <file> is required');
    const r = runCli(['generate', 'x.json', '--out', 'y.npy', '--sead', '1']);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('unknown option --sead; did you mean --seed?');
    expect(runCli(['frobnicate']).status).toBe(2);
    const missing = runCli(['validate', join(tempDir(), 'none.json')]);
    expect(missing.status).toBe(2);
    expect(missing.stderr).toContain('cannot read the file: ENOENT');
    const dir = tempDir();
    const intoDir = runCli(['generate', join(ROOT, 'test', 'fixtures', 'three-path-static.json'), '--out', dir]);
    expect(intoDir.status).toBe(2); // refused before any work: --out names a folder
    expect(intoDir.stderr).toContain(`error: --out ${dir}: ${dir} is a folder; name a file in it, e.g. ${join(dir, 'run.h5')}`);
  });

  it('validate prints a one-screen summary of a valid scenario', () => {
    const r = runCli(['validate', join(ROOT, 'test', 'fixtures', 'three-path-static.json')]);
    expect(r.status).toBe(0);
    expect(r.stdout).toContain('UPA 2 rows x 4 columns');
    expect(r.stdout).toContain('H complex64 [3, 33, 3, 8], 18.6 KiB (19008 bytes)');
    expect(r.stdout.split('\n').length).toBeLessThan(25);
    expect(existsSync(join(ROOT, 'out.npy'))).toBe(false);
  });
});
