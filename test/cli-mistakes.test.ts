/**
 * The usual first-hour mistakes, each caught with a message that says how to fix it (exact
 * text and exit code asserted): values implausible for their unit, angles that look like
 * radians, element spacing below a twentieth of a wavelength, the nearest-key suggestion,
 * `<command> --help`, `--quiet`, and `--user` by id or index.
 */
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROOT, runCli, tempDir, writeScenario } from './support/run.js';

const base = JSON.parse(readFileSync(join(ROOT, 'test', 'fixtures', 'explicit-street-corner.json'), 'utf8')) as Record<string, any>;
base.timing.subframes = 2;
const variant = (edit: (s: Record<string, any>) => void): Record<string, any> => {
  const s = structuredClone(base);
  edit(s);
  return s;
};
const dir = tempDir('pathweave-mistakes-');
let n = 0;
const file = (s: unknown): string => writeScenario(dir, `s${n++}.json`, s);

/** validate and generate both refuse with exit 2 and these exact problem lines; nothing is written. */
function refused(s: unknown, lines: string[]): void {
  const f = file(s);
  const v = runCli(['validate', f]);
  expect(v.status).toBe(2);
  expect(v.stdout).toBe('');
  expect(v.stderr).toBe(`error: ${f}: ${lines.length} problem${lines.length === 1 ? '' : 's'}\n${lines.map((l) => `  ${l}\n`).join('')}`);
  const out = join(dir, `refused-${n}.npy`);
  const g = runCli(['generate', f, '--out', out]);
  expect(g.status).toBe(2);
  expect(g.stderr).toContain(lines[0]!);
  expect(existsSync(out)).toBe(false);
}

describe('values implausible for their unit are refused with the unit they look like', () => {
  it('carrierHz 5.9 (GHz written under a key in hertz)', () => {
    refused(
      variant((s) => (s.carrierHz = 5.9)),
      ['carrierHz: must be in hertz (>= 1e6, 1 MHz), got 5.9: it looks like GHz: write 5.9e9 for 5.9 GHz'],
    );
  });
  it('carrierHz 2400 (MHz)', () => {
    refused(
      variant((s) => (s.carrierHz = 2400)),
      ['carrierHz: must be in hertz (>= 1e6, 1 MHz), got 2400: it looks like kHz or MHz: write 2400e6 for 2400 MHz'],
    );
  });
  it('band.spacingHz 120 (kHz)', () => {
    refused(
      variant((s) => (s.band.spacingHz = 60)),
      ['band.spacingHz: must be in hertz (>= 100), got 60: it looks like kHz: write 60e3 for 60 kHz'],
    );
  });
  it('taps.sampleRateHz 400 (MS/s) and 1.5 (GS/s)', () => {
    const taps = (rate: number) =>
      variant((s) => {
        delete s.band;
        s.taps = { sampleRateHz: rate, count: 16 };
      });
    refused(taps(400), ['taps.sampleRateHz: must be in hertz (>= 1e3), got 400: it looks like MS/s: write 400e6 for 400 MS/s']);
    refused(taps(1.5), ['taps.sampleRateHz: must be in hertz (>= 1e3), got 1.5: it looks like GS/s: write 1.5e9 for 1.5 GS/s']);
  });
  it('element spacing below 1/20 of a wavelength: spacingWavelengths in metres, custom positions too close', () => {
    // 28 GHz: lambda = 299792458 / 28e9 = 0.0107069 m, lambda / 2 = 0.00535344 m (C).
    refused(
      variant((s) => (s.receiver.array.spacingWavelengths = 0.005)),
      [
        'receiver.array.spacingWavelengths: must be >= 0.05 (1/20 of a wavelength), got 0.005: the key is in wavelengths (0.5 is half a wavelength, 0.00535344 m at this carrier); 0.005 m would be 0.46699 wavelengths',
      ],
    );
    refused(
      variant(
        (s) =>
          (s.receiver.array = {
            kind: 'custom',
            positions: [
              [0, 0, 0],
              [0, 0.0001, 0],
            ],
          }),
      ),
      ['receiver.array.positions: elements 0 and 1 are 0.0001 m apart, below 1/20 of a wavelength (0.000535344 m at this carrier); positions are in metres'],
    );
  });
  it('plausible values of the demos still pass', () => {
    for (const demo of ['street-corner-28ghz', 'highway-39ghz', 'factory-floor-60ghz', 'street-corner-users-28ghz']) {
      const v = runCli(['validate', join(ROOT, 'examples', `${demo}.json`)]);
      expect(v.status, v.stderr).toBe(0);
      expect(v.stdout).not.toContain('radians');
    }
  });
});

describe('warnings and suggestions', () => {
  it('angles that look like radians are warned about, and the scenario stays valid', () => {
    const f = file(
      variant((s) => {
        s.paths[0].aodDeg = [0.64, -0.2];
        s.paths[0].aoaDeg = [-2.5, 0.2];
        s.paths[1].aodDeg = [1.01, -0.14];
        s.paths[1].aoaDeg = [-2.06, 0.14];
        s.paths[2].aodDeg = [0.38, -0.24];
        s.paths[2].aoaDeg = [-2.97, 0.05];
      }),
    );
    const v = runCli(['validate', f]);
    expect(v.status).toBe(0);
    expect(v.stdout).toContain(
      '  warning: paths[].aodDeg and paths[].aoaDeg: every angle is within +-pi (largest |value| 2.97); these keys are in degrees; if the values are radians, multiply them by 180/pi\n',
    );
  });
  it('the nearest-key suggestion never proposes a key already present (timing.subframs)', () => {
    refused(
      variant((s) => {
        s.timing.subframs = s.timing.subframes;
        delete s.timing.subframes;
      }),
      ['timing.subframes: is required (number)', 'timing.subframs: unknown key; did you mean "subframes"?'],
    );
  });
});

describe('the command line', () => {
  for (const command of ['generate', 'paths', 'validate', 'inspect', 'merge', 'plot']) {
    it(`pathweave ${command} --help prints that command's usage and exits 0`, () => {
      const r = runCli([command, '--help']);
      expect(r.status).toBe(0);
      expect(r.stderr).toBe('');
      expect(r.stdout.startsWith(`usage: pathweave ${command} `)).toBe(true);
      expect(runCli([command, 'x.json', '-h']).stdout).toBe(r.stdout);
    });
  }

  it('--quiet prints nothing on stdout (generate and merge) and the file is written', () => {
    const f = file(base);
    const out = join(dir, 'quiet.npy');
    const g = runCli(['generate', f, '--out', out, '--quiet']);
    expect(g.status).toBe(0);
    expect(g.stdout).toBe('');
    expect(g.stderr).toBe('');
    expect(existsSync(out)).toBe(true);
    const parts = [0, 1].map((i) => join(dir, `quiet-part-${i}.npy`));
    for (const i of [0, 1]) {
      // --out names each part by {index} (without it every task would write the same file)
      const part = runCli(['generate', f, '--out', join(dir, 'quiet-part-{index}.npy'), '--shard', `${i}/2`, '--quiet']);
      expect(part.status, part.stderr).toBe(0);
      expect(part.stdout).toBe('');
    }
    const m = runCli(['merge', ...parts, '--out', join(dir, 'quiet-merged.npy'), '--quiet']);
    expect(m.status, m.stderr).toBe(0);
    expect(m.stdout).toBe('');
    expect(readFileSync(join(dir, 'quiet-merged.npy')).equals(readFileSync(out))).toBe(true);
  });

  it('--user takes an id or an index in paths and plot, and a wrong one lists the ids', () => {
    const users = join(ROOT, 'examples', 'street-corner-users-28ghz.json');
    const byId = runCli(['paths', users, '--user', 'window', '--json']);
    const byIndex = runCli(['paths', users, '--user', '3', '--json']);
    expect(byId.status).toBe(0);
    expect(byId.stdout).toBe(byIndex.stdout);
    const bad = runCli(['paths', users, '--user', 'pedestrian']);
    expect(bad.status).toBe(2);
    expect(bad.stderr).toBe(
      'error: paths: --user must be a receiver id (walker, crossing-a, crossing-b, window, across) or an index in [0, 4], got "pedestrian"\nrun "pathweave paths --help" for its options\n',
    );
    const svgId = join(dir, 'user-id.svg'),
      svgIndex = join(dir, 'user-index.svg');
    expect(runCli(['plot', users, '--kind', 'delay-profile', '--user', 'crossing-a', '--out', svgId]).status).toBe(0);
    expect(runCli(['plot', users, '--kind', 'delay-profile', '--user', '1', '--out', svgIndex]).status).toBe(0);
    expect(readFileSync(svgId, 'utf8')).toBe(readFileSync(svgIndex, 'utf8'));
    const badPlot = runCli(['plot', users, '--kind', 'scene', '--user', '7', '--out', join(dir, 'x.svg')]);
    expect(badPlot.status).toBe(2);
    expect(badPlot.stderr).toBe(
      'error: plot: --user must be a receiver id (walker, crossing-a, crossing-b, window, across) or an index in [0, 4], got 7\nrun "pathweave plot --help" for its options\n',
    );
  });
});
