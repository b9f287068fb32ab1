/**
 * Packages a stranger can install: `pnpm pack` of geometry, core and io gives
 * tarballs whose metadata is complete and which hold nothing of the tests or benchmarks; a fresh
 * project outside the workspace installs the three tarballs with plain npm (one install; only
 * zod, ml-matrix, fft.js, h5wasm and yazl come from the registry or npm's cache), imports them,
 * type-checks a consumer, generates a small channel to .npy through the library and through the
 * installed `pathweave` binary, and gets the same bytes as the workspace's own build.
 *
 * The tarballs come from scripts/pack.mjs, the route the READMEs give; the fresh project runs the
 * first example of docs/library.md and prints what the guide shows, and calls the command as
 * the READMEs say (`npx --no-install pathweave`).
 *
 * Needs the built dist/ (`npx tsc -b`) and pnpm 12.4.2 through npx (scripts/setup.mjs fetches it).
 * `pnpm pack` rather than `npm pack`: only pnpm rewrites `workspace:*` and `catalog:` into versions.
 */
import { spawnSync, type SpawnSyncReturns } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { ROOT, runCli, tempDir } from './support/run.js';
import { librarySnippets } from './support/docs.js';

const PACKAGES = ['geometry', 'core', 'io'] as const;
type Pkg = (typeof PACKAGES)[number];
const REGISTRY_DEPENDENCIES = ['zod', 'ml-matrix', 'fft.js', 'h5wasm', 'yazl', '@gltf-transform/core'];

/** The environment without npm's per-run variables (npm test sets npm_config_* for the workspace). */
function cleanEnv(): NodeJS.ProcessEnv {
  return Object.fromEntries(Object.entries(process.env).filter(([k]) => !k.toLowerCase().startsWith('npm_')));
}
function run(cmd: string, args: string[], cwd: string, timeout = 300_000): SpawnSyncReturns<string> {
  const r = spawnSync(cmd, args, { cwd, env: cleanEnv(), encoding: 'utf8', timeout, maxBuffer: 1 << 26 });
  if (r.status !== 0) throw new Error(`${cmd} ${args.join(' ')} in ${cwd} failed (${r.status ?? r.signal}):\n${r.stdout}\n${r.stderr}`);
  return r;
}

const work = tempDir('pathweave-packaging-');
const packs = join(work, 'packs');
const app = join(work, 'stranger-app');
const tarballs = {} as Record<Pkg, string>;
const contents = {} as Record<Pkg, string[]>;
const manifests = {} as Record<Pkg, Record<string, any>>;

const scenario = JSON.parse(readFileSync(join(ROOT, 'test', 'fixtures', 'explicit-street-corner.json'), 'utf8')) as Record<string, any>;
scenario.timing.subframes = 4;

beforeAll(() => {
  // The script of the READMEs (already built here: no set-up step).
  const packed = run(process.execPath, [join(ROOT, 'scripts', 'pack.mjs'), packs, '--no-setup'], ROOT).stdout;
  for (const pkg of PACKAGES) {
    tarballs[pkg] = join(packs, `pathweave-${pkg}-0.1.0.tgz`);
    expect(packed).toContain(tarballs[pkg]);
    contents[pkg] = run('tar', ['tzf', tarballs[pkg]], work).stdout.trim().split('\n');
    manifests[pkg] = JSON.parse(run('tar', ['xzf', tarballs[pkg], '-O', 'package/package.json'], work).stdout) as Record<string, any>;
  }
}, 300_000);

describe('the tarballs', () => {
  for (const pkg of PACKAGES) {
    it(`${pkg}: only built code, declarations, README, LICENSE and package.json; nothing of the tests or benchmarks`, () => {
      const files = contents[pkg].map((f) => f.replace(/^package\//, ''));
      const allowed = /^(package\.json|README\.md|LICENSE|dist\/.+\.(js|d\.ts)|dist\/kernels\/.+\.wasm|bin\/[^/]+\.js)$/;
      expect(files.filter((f) => !allowed.test(f))).toEqual([]);
      expect(files.filter((f) => /(^|\/)(test|tests|bench|fixtures|src|examples|scripts)\//.test(f) || /\.test\.|\.map$|tsbuildinfo/.test(f))).toEqual([]);
      expect(files).toContain('dist/index.js');
      expect(files).toContain('dist/index.d.ts');
      expect(files).toContain('LICENSE');
      expect(files).toContain('README.md');
      if (pkg === 'io') expect(files).toContain('bin/pathweave.js');
      // The WebAssembly kernel (built by scripts/setup.mjs) ships beside the JavaScript.
      if (pkg === 'core' && existsSync(join(ROOT, 'packages', 'core', 'dist', 'kernels', 'accumulate.wasm')))
        expect(files).toContain('dist/kernels/accumulate.wasm');
    });

    it(`${pkg}: complete metadata, an exports map pointing at shipped files, no workspace links left`, () => {
      const m = manifests[pkg];
      const files = contents[pkg].map((f) => f.replace(/^package\//, ''));
      expect(m.name).toBe(`@pathweave/${pkg}`);
      expect(m.version).toBe('0.1.0');
      expect(m.license).toBe('MIT');
      expect(m.type).toBe('module');
      expect(m.engines).toEqual({ node: '>=20' });
      expect(m.repository).toMatchObject({ type: 'git', directory: `packages/${pkg}` });
      expect(typeof m.repository.url).toBe('string');
      expect(typeof m.description).toBe('string');
      expect(Array.isArray(m.files)).toBe(true);
      expect(m.publishConfig).toEqual({ access: 'public' });
      // types before default (TypeScript reads the first matching condition).
      expect(Object.keys(m.exports['.'])).toEqual(['types', 'default']);
      expect(files).toContain(m.exports['.'].types.replace(/^\.\//, ''));
      expect(files).toContain(m.exports['.'].default.replace(/^\.\//, ''));
      const deps = { ...m.dependencies, ...m.devDependencies, ...m.peerDependencies } as Record<string, string>;
      for (const [name, version] of Object.entries(deps)) {
        expect(version, name).toMatch(/^\d+\.\d+\.\d+$/); // pinned, not workspace:* or catalog:
        expect([...REGISTRY_DEPENDENCIES, '@types/yazl', ...PACKAGES.map((p) => `@pathweave/${p}`)]).toContain(name);
      }
    });
  }

  it('the LICENSE is MIT, 2026, pathweave contributors', () => {
    const text = run('tar', ['xzf', tarballs.io, '-O', 'package/LICENSE'], work).stdout;
    expect(text).toMatch(/^MIT License\n\nCopyright \(c\) 2026 pathweave contributors\n/);
    expect(text).toBe(readFileSync(join(ROOT, 'LICENSE'), 'utf8'));
  });
});

describe('a fresh project outside the workspace', () => {
  beforeAll(() => {
    mkdirSync(app);
    writeFileSync(
      join(app, 'package.json'),
      JSON.stringify(
        {
          name: 'stranger-app',
          private: true,
          type: 'module',
          dependencies: Object.fromEntries(PACKAGES.map((p) => [`@pathweave/${p}`, `file:${tarballs[p]}`])),
        },
        null,
        2,
      ),
    );
    writeFileSync(join(app, 'scenario.json'), JSON.stringify(scenario, null, 2));
    // The one install: plain npm, the three tarballs, registry packages from npm's cache when there.
    run('npm', ['install', '--no-audit', '--no-fund', '--prefer-offline', '--loglevel=error'], app);
  }, 300_000);

  it('installs exactly our three packages and the registry dependencies, nothing of the workspace', () => {
    const scoped = readdirSync(join(app, 'node_modules', '@pathweave')).sort();
    expect(scoped).toEqual(['core', 'geometry', 'io']);
    const lock = JSON.parse(readFileSync(join(app, 'package-lock.json'), 'utf8')) as {
      packages: Record<string, { resolved?: string; version?: string; link?: boolean }>;
    };
    const installed = Object.keys(lock.packages)
      .filter((k) => k !== '')
      .map((k) => k.replace(/^.*node_modules\//, ''));
    for (const name of REGISTRY_DEPENDENCIES) expect(installed).toContain(name);
    for (const [key, entry] of Object.entries(lock.packages)) {
      expect(entry.link, key).not.toBe(true); // copied from the tarballs, not linked into the workspace
      if (key.includes('@pathweave/')) expect(entry.resolved).toMatch(/^file:/);
    }
  });

  it('imports the packages, generates a small channel to .npy with the library, the same bytes as the workspace build', () => {
    const script = `
      import { AntennaArray, unitFromDeg, wavelength } from '@pathweave/geometry';
      import { besselJ0 } from '@pathweave/core';
      import { generate, parseNpyHeader, parseScenarioText, PATHWEAVE_VERSION } from '@pathweave/io';
      import { readFileSync } from 'node:fs';
      import { fileURLToPath } from 'node:url';
      const lambda = wavelength(28e9);
      const r = AntennaArray.ula(8, lambda / 2).response(new Float64Array(16), unitFromDeg(0, 0), (2 * Math.PI) / lambda);
      const text = readFileSync('scenario.json', 'utf8');
      const { scenario } = parseScenarioText(text);
      const report = await generate(scenario, text, { out: 'library.npy', format: 'npy' });
      const header = parseNpyHeader(readFileSync('library.npy'));
      console.log(JSON.stringify({
        resolved: ['@pathweave/geometry', '@pathweave/core', '@pathweave/io'].map((p) => fileURLToPath(import.meta.resolve(p))),
        moduli: Array.from({ length: 8 }, (_, n) => Math.hypot(r[2 * n], r[2 * n + 1])),
        j0: besselJ0(2.404825557695773),
        version: PATHWEAVE_VERSION,
        shape: report.shape,
        header,
      }));
    `;
    writeFileSync(join(app, 'use.mjs'), script);
    const out = JSON.parse(run(process.execPath, ['use.mjs'], app).stdout) as Record<string, any>;
    for (const p of out.resolved as string[]) expect(p.startsWith(join(app, 'node_modules', '@pathweave'))).toBe(true);
    // docs/conventions.md: isotropic entries of the array response have unit modulus.
    for (const m of out.moduli as number[]) expect(m).toBeCloseTo(1, 12);
    // A&S Table 9.5: the first zero of J0 is 2.404825557695773 (V); |J0| there below 1e-12.
    expect(Math.abs(out.j0)).toBeLessThan(1e-12);
    expect(out.version).toBe('0.1.0');
    // docs/conventions.md: frequency domain [S, K, Nr, Nt]; the fixture has 64 subcarriers, a 4-element ULA and a 4 x 8 UPA.
    expect(out.shape).toEqual([4, 64, 4, 32]);
    expect(out.header).toMatchObject({ descr: '<c8', fortranOrder: false, shape: [4, 64, 4, 32] });
    // The workspace's own CLI on the same scenario gives the same bytes (docs/conventions.md, "Reproducibility").
    const reference = join(work, 'workspace.npy');
    expect(runCli(['generate', join(app, 'scenario.json'), '--out', reference, '--quiet']).status).toBe(0);
    expect(readFileSync(join(app, 'library.npy')).equals(readFileSync(reference))).toBe(true);
  });

  it('runs the installed `pathweave` binary: generate exits 0 with the same bytes, a bad scenario exits 2', () => {
    const bin = join(app, 'node_modules', '.bin', 'pathweave');
    const version = run(bin, ['--version'], app);
    expect(version.stdout.trim()).toBe('0.1.0');
    run(bin, ['generate', 'scenario.json', '--out', 'cli.npy', '--quiet'], app);
    expect(readFileSync(join(app, 'cli.npy')).equals(readFileSync(join(app, 'library.npy')))).toBe(true);
    writeFileSync(join(app, 'bad.json'), JSON.stringify({ ...scenario, carrierHz: -1 }));
    const bad = spawnSync(bin, ['validate', 'bad.json'], { cwd: app, env: cleanEnv(), encoding: 'utf8' });
    expect(bad.status).toBe(2);
    expect(bad.stderr).toContain('carrierHz: must be > 0, got -1');
  });

  it('runs the first example of docs/library.md and prints what the guide shows', () => {
    const [example] = librarySnippets(readFileSync(join(ROOT, 'docs', 'library.md'), 'utf8'));
    writeFileSync(join(app, 'library-guide.mjs'), example!.code);
    expect(run(process.execPath, ['library-guide.mjs'], app).stdout).toBe(example!.output);
  });

  it('`npx --no-install pathweave` runs the installed binary, as the READMEs say', () => {
    expect(run('npx', ['--no-install', 'pathweave', '--version'], app).stdout.trim()).toBe('0.1.0');
    const help = run('npx', ['--no-install', 'pathweave', 'validate', '--help'], app);
    expect(help.stdout.startsWith('usage: pathweave validate <scenario.json>')).toBe(true);
  });

  it('type-checks a TypeScript consumer against the shipped declarations (strict, NodeNext)', () => {
    writeFileSync(
      join(app, 'check.ts'),
      `import { AntennaArray } from '@pathweave/geometry';
import { besselJ0 } from '@pathweave/core';
import { generate, parseScenarioText, type GenerateReport } from '@pathweave/io';
declare const text: string;
const { scenario } = parseScenarioText(text);
export const pending: Promise<GenerateReport> = generate(scenario, text, { out: 'x.npy', format: 'npy' });
export const j0: number = besselJ0(1);
export const ula: AntennaArray = AntennaArray.ula(4, 0.005);
// @ts-expect-error the format is one of npy, npz, h5 (the declarations are real types, not any)
generate(scenario, text, { out: 'x.csv', format: 'csv' });
`,
    );
    writeFileSync(
      join(app, 'tsconfig.json'),
      JSON.stringify({
        compilerOptions: { strict: true, target: 'ES2022', module: 'NodeNext', moduleResolution: 'NodeNext', noEmit: true, skipLibCheck: true, types: [] },
        files: ['check.ts'],
      }),
    );
    // The workspace's TypeScript, so the install above stays the only one.
    const r = spawnSync(process.execPath, [join(ROOT, 'node_modules', 'typescript', 'bin', 'tsc'), '-p', app], { cwd: app, encoding: 'utf8' });
    expect(r.stdout + r.stderr).toBe('');
    expect(r.status).toBe(0);
  });
});
