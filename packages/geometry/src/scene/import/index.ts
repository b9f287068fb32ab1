/**
 * Scene import: building footprints from GeoJSON and triangle meshes (OBJ, PLY, binary glTF), as walls.
 */
export * from './geodesy.js';
export * from './geojson.js';
export * from './gltf.js';
export * from './mesh.js';
export * from './obj.js';
export * from './ply.js';
