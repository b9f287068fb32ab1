/**
 * @packageDocumentation
 * pathweave io: scenario files (schema, validation, JSON Schema), NPY/NPZ/HDF5 writers and
 * readers, the streaming `generate` pipeline, manifests, merge and inspect. The command line is
 * `@pathweave/io/cli` and the SVG figures `@pathweave/io/plot`.
 *
 * In the examples, `scenario` is the one-path scenario of examples/one-path-28ghz.json (28 GHz,
 * 10 subframes, 64 subcarriers at 120 kHz, a 4-element ULA to a 2-element ULA, one static path):
 * `const { scenario } = await loadScenario('examples/one-path-28ghz.json')`.
 */
export * from './scenario/json.js';
export * from './scenario/schema.js';
export * from './scenario/validate.js';
export * from './scenario/plan.js';
export * from './scenario/build.js';
export * from './scenario/imports.js';
export * from './dataset/layout.js';
export * from './formats/atomic.js';
export * from './formats/sink.js';
export * from './formats/npy.js';
export * from './formats/index.js';
export * from './dataset/generate.js';
export * from './dataset/fill-subframes.js';
export * from './scenario/paths.js';
export * from './inspect/inspect.js';
export * from './version.js';
export * from './dataset/manifest.js';
export * from './dataset/merge.js';
export * from './dataset/coverage.js';
export * from './dataset/coverage-merge.js';
export * from './formats/reader.js';
export * from './formats/output-path.js';
