/** The version of pathweave recorded in every file written (kept equal to package.json by a test). */
export const PATHWEAVE_VERSION = '0.1.0';
