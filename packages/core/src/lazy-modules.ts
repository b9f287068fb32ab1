/**
 * Dependencies loaded on first use, synchronously (CommonJS `require`), so a process that never
 * fits an AR(p) model, takes singular values or runs an OFDM plan does not pay for loading them:
 * ml-matrix alone took about 0.09 s of CPU at start-up (a 6000-line CommonJS file read through
 * Node's ESM-to-CommonJS lexer), fft.js about 0.015 s (docs/performance.md, "Start-up").
 */
import { createRequire } from 'node:module';
import type * as MlMatrix from 'ml-matrix';
import type FFT from 'fft.js';

const requireHere = createRequire(import.meta.url);
let mlMatrix: typeof MlMatrix | undefined;
let fft: typeof FFT | undefined;

/** The ml-matrix module (its CommonJS build, the same code its ES module re-exports). */
export function loadMlMatrix(): typeof MlMatrix {
  return (mlMatrix ??= requireHere('ml-matrix') as typeof MlMatrix);
}

/** The fft.js constructor. */
export function loadFft(): typeof FFT {
  return (fft ??= requireHere('fft.js') as typeof FFT);
}
