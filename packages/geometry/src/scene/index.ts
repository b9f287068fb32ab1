/**
 * Scene model and path tracer: materials (ITU-R P.2040), Fresnel coefficients, polarisation,
 * knife-edge diffraction (ITU-R P.526), gas absorption, scene validation and the tracer.
 */
export * from './complex.js';
export * from './materials.js';
export * from './fresnel.js';
export * from './polarization.js';
export * from './knife-edge.js';
export * from './atmosphere.js';
export * from './p676.js';
export * from './bvh.js';
export * from './occlusion.js';
export * from './scene.js';
export * from './blockage.js';
export * from './utd.js';
export * from './slab.js';
export * from './edges.js';
export * from './diffraction.js';
export * from './diffuse.js';
export * from './launch.js';
export * from './tracer.js';
export * from './import/index.js';
