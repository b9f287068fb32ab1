/**
 * Gain processes beyond AR(1) and NR symbol timing: AR(p) fitted to the Clarke/Jakes correlation,
 * sum-of-sinusoids (single and double ring), geometric Doppler with an optional Rician part, step
 * clocks (uniform or NR numerology), the under-sampling check, and the one factory that makes
 * the gain process of every fading model (factory.ts).
 */
export * from './numerology.js';
export * from './clock.js';
export * from './sampling.js';
export * from './ar.js';
export * from './sum-of-sinusoids.js';
export * from './geometric.js';
export * from './factory.js';
