/**
 * @packageDocumentation
 * Core of pathweave: Bessel J0, keyed random streams, gain processes (static, Gauss-Markov),
 * the Clarke/Jakes correlation, and the assembler of per-subframe channel tensors.
 */
export * from './bessel.js';
export * from './random.js';
export * from './doppler.js';
export * from './gains.js';
export * from './grid.js';
export * from './pulse.js';
export * from './channel.js';
export * from './kernels/index.js';
export * from './fading/index.js';
export * from './signal/index.js';
export * from './motion.js';
export * from './timeline.js';
export * from './stream.js';
export * from './polarization-ports.js';
export * from './cluster.js';
