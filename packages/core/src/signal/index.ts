/**
 * The test-bench signal path: time-varying MIMO convolution, noise and link budget,
 * impairments (frequency offset, phase noise), OFDM, beam space and LS channel estimation.
 */
export type { ComplexArray } from './checks.js';
export * from './convolve.js';
export * from './noise.js';
export * from './link-budget.js';
export * from './impairments.js';
export * from './ofdm.js';
export * from './beamspace.js';
export * from './estimate.js';
export * from './matrix.js';
