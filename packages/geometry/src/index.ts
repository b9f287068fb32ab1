/**
 * @packageDocumentation
 * Geometry for pathweave: vectors, rotations, directions, antenna arrays, element patterns and
 * array responses, following docs/conventions.md (global frame x, y horizontal, z up).
 */
export * from './constants.js';
export * from './vec3.js';
export * from './rotation.js';
export * from './direction.js';
export * from './pattern.js';
export * from './array.js';
export * from './wavefront.js';
export * from './scene/index.js';
