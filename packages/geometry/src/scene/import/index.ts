/**
 * Scene import: building footprints from GeoJSON and triangle meshes, as walls.
 */
export * from './geodesy.js';
export * from './geojson.js';
export * from './mesh.js';
export * from './obj.js';
