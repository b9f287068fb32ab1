/**
 * The version of pathweave recorded in every file written (kept equal to package.json by a test).
 * @example PATHWEAVE_VERSION // "0.1.0"
 */
export const PATHWEAVE_VERSION = '0.1.0';
