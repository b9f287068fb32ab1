/**
 * @packageDocumentation
 * pathweave io: scenario files (schema, validation, JSON Schema), NPY/NPZ/HDF5 writers and
 * readers, the streaming `generate` pipeline and the `pathweave` command line.
 */
export * from './json.js';
export * from './schema.js';
export * from './validate.js';
export * from './build.js';
export * from './atomic.js';
export * from './formats/sink.js';
export * from './formats/npy.js';
export * from './formats/index.js';
export * from './generate.js';
export * from './paths.js';
export * from './inspect.js';
export * from './version.js';
export * from './plot/index.js';
export * from './manifest.js';
export * from './merge.js';
export * from './formats/read.js';
export { main } from './cli/main.js';
