#!/usr/bin/env node
// Bundles the command line (packages/io/dist/cli/main.js and everything it loads, zod included)
// into packages/io/dist/bundle/, which bin/pathweave.js runs. Why: Node 20 loads an ES module
// graph file by file (resolve, open, read, compile, link), and the command's graph is about 200
// files, 95 of them zod's (60 of those its locales, which no entry point avoids); in one measured
// run the whole 4-subframe `generate` took 0.30 s unbundled and 0.22 s bundled (docs/performance.md).
// Commands and rarely used libraries stay behind dynamic imports, each its own chunk, so
// `pathweave generate` does not load the plot or HDF5 code. Run by scripts/setup.mjs after tsc.
//
// Files found at run time keep pointing where they did: in the packages' own modules,
// `new URL('<path>', import.meta.url)` (the SIMD kernels) and
// `createRequire(import.meta.url)` (libraries loaded on first use) are rewritten to start from
// the package that held the module, found through its package.json (each package exports it),
// so the bundle finds the same files and libraries from wherever it is installed. The worker
// scripts are entries of the bundle, so the command's workers start from it too.
// PATHWEAVE_UNBUNDLED=1 makes the bin run the unbundled modules instead.
import { readFileSync } from 'node:fs';
import { dirname, join, relative, resolve, sep } from 'node:path';
import { fileURLToPath } from 'node:url';
import { build } from 'rolldown';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const io = join(root, 'packages', 'io');
const outDir = join(io, 'dist', 'bundle');
const ANCHOR = '\0pathweave-package-root';
/** Worker scripts, bundled as entries of their own: a worker starts a module graph of its own, and unbundled two pool workers took 0.5 s of CPU before their first block. */
const WORKERS = Object.fromEntries(
  ['fill-worker', 'hash-worker', 'coverage-worker'].map((name) => [name, join(io, 'dist', 'dataset', 'workers', `${name}.js`)]),
);

/** The workspace package (name and directory) that holds `file`, if any. */
function packageOf(file) {
  for (const name of ['core', 'geometry', 'io']) {
    const dir = join(root, 'packages', name);
    if (file.startsWith(dir + sep)) return { name: JSON.parse(readFileSync(join(dir, 'package.json'), 'utf8')).name, dir };
  }
  return undefined;
}

const anchors = {
  name: 'pathweave-package-anchors',
  resolveId: (id) => (id === ANCHOR ? ANCHOR : null),
  load: (id) =>
    id === ANCHOR
      ? [
          "import { createRequire } from 'node:module';",
          "import { pathToFileURL } from 'node:url';",
          'const requireHere = createRequire(import.meta.url);',
          '/** Directory URL of a workspace package, as installed next to this bundle. */',
          "export const packageRoot = (name) => new URL('./', pathToFileURL(requireHere.resolve(name + '/package.json')));",
        ].join('\n')
      : null,
  transform(code, id) {
    const pkg = packageOf(id);
    if (pkg === undefined || !code.includes('import.meta.url')) return null;
    const base = `packageRoot(${JSON.stringify(pkg.name)})`;
    const out = code
      .replace(/new URL\((['"])([^'"]+)\1, import\.meta\.url\)/g, (_, _q, path) => {
        const absolute = resolve(dirname(id), path);
        // A worker script is an entry of the bundle itself, beside every chunk.
        const worker = Object.keys(WORKERS).find((name) => WORKERS[name] === absolute);
        if (worker !== undefined) return `new URL(${JSON.stringify(`./${worker}.js`)}, import.meta.url) /* bundled worker */`;
        const target = relative(pkg.dir, absolute).split(sep).join('/');
        if (target.startsWith('..')) throw new Error(`${id}: new URL('${path}') leaves its package`);
        return `new URL(${JSON.stringify(target)}, ${base})`;
      })
      .replace(/createRequire\(import\.meta\.url\)/g, `createRequire(${base})`);
    if (out.replace(/import\.meta\.url\) \/\* bundled worker \*\//g, '').includes('import.meta.url'))
      throw new Error(`${id}: a use of import.meta.url the bundle cannot rewrite`);
    return { code: `import { packageRoot } from ${JSON.stringify(ANCHOR)};\n${out}`, map: null };
  },
};

await build({
  input: { main: join(io, 'dist', 'cli', 'main.js'), ...WORKERS },
  platform: 'node',
  // Libraries loaded on first use stay out: they are found from the package that asks for them.
  external: [/^node:/, /^h5wasm(\/|$)/, /^@gltf-transform\//, 'ml-matrix', 'fft.js', 'yazl'],
  plugins: [anchors],
  logLevel: 'warn',
  output: { dir: outDir, format: 'esm', entryFileNames: '[name].js', chunkFileNames: '[name]-[hash].js', cleanDir: true },
});
