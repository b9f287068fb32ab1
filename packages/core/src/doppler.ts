/**
 * Doppler frequencies and the Clarke/Jakes correlation of the Gauss-Markov gain
 * (docs/conventions.md, Gains): one moving end, alpha = J0(2 pi f_D T); both ends moving with isotropic
 * scattering around each, alpha = J0(2 pi f_t T) J0(2 pi f_r T) (Akki & Haber, 1986).
 */
import { SPEED_OF_LIGHT } from '@pathweave/geometry';
import { besselJ0 } from './bessel.js';

/**
 * Maximum Doppler shift f_D = f_c v / c in hertz.
 * @example maxDopplerHz(28e9, 30) // 2801.938...
 */
export function maxDopplerHz(carrierHz: number, speedMps: number): number {
  return (carrierHz * speedMps) / SPEED_OF_LIGHT;
}

/**
 * Clarke/Jakes correlation J0(2 pi f_D lag) of one moving end.
 * @example clarkeCorrelation(280.194, 0.125e-3) // 0.98792958...
 */
export function clarkeCorrelation(dopplerHz: number, lagS: number): number {
  return besselJ0(2 * Math.PI * dopplerHz * lagS);
}

/**
 * Where a path's Doppler spread came from (the precedence of docs/conventions.md, Gains).
 * @example const source: DopplerSource = 'terminals'; // from the terminals' speeds
 */
export type DopplerSource = 'path' | 'fading.speedMps' | 'terminals' | 'none';

/**
 * The Doppler spread(s) of one path and the resulting lag-1 correlation.
 * @example const still: PathCorrelation = { dopplersHz: [], alpha: 1, source: 'none' }; // nothing moves
 */
export interface PathCorrelation {
  /** Doppler spreads of the moving ends, Hz (one or two entries; empty when nothing moves). */
  dopplersHz: number[];
  /** Lag-1 correlation alpha of the Gauss-Markov process. */
  alpha: number;
  /** What set the spread. */
  source: DopplerSource;
}

/**
 * Resolve a path's correlation by the precedence of docs/conventions.md (Gains): its own `maxDopplerHz`, else
 * `fading.speedMps` (one moving end), else the terminals' speeds (one or both ends).
 * @example pathCorrelation({ carrierHz: 28e9, stepS: 1e-3, transmitterSpeedMps: 0, receiverSpeedMps: 3 }) // { dopplersHz: [280.19], alpha: 0.3629, source: 'terminals' }: J0(2 pi 280.19 Hz * 1 ms)
 */
export function pathCorrelation(opts: {
  carrierHz: number;
  stepS: number;
  pathMaxDopplerHz?: number | undefined;
  fadingSpeedMps?: number | undefined;
  transmitterSpeedMps: number;
  receiverSpeedMps: number;
}): PathCorrelation {
  const { carrierHz, stepS } = opts;
  let dopplers: number[];
  let source: DopplerSource;
  if (opts.pathMaxDopplerHz !== undefined) {
    dopplers = [opts.pathMaxDopplerHz];
    source = 'path';
  } else if (opts.fadingSpeedMps !== undefined) {
    dopplers = [maxDopplerHz(carrierHz, opts.fadingSpeedMps)];
    source = 'fading.speedMps';
  } else {
    dopplers = [opts.transmitterSpeedMps, opts.receiverSpeedMps].filter((v) => v > 0).map((v) => maxDopplerHz(carrierHz, v));
    source = dopplers.length > 0 ? 'terminals' : 'none';
  }
  let alpha = 1;
  for (const f of dopplers) alpha *= clarkeCorrelation(f, stepS);
  return { dopplersHz: dopplers, alpha, source };
}
