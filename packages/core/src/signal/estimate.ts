/**
 * Least-squares MIMO channel estimation from pilots.
 *
 * Layouts (row-major, complex interleaved re/im):
 *   pilots   X [Nt, P]   row t is the pilot sequence of transmit stream t
 *   received Y [Nr, P]   Y = H X + W, W ~ CN(0, sigma^2) i.i.d.
 *   channel  H [Nr, Nt]  one subcarrier (or a flat channel)
 * LS estimate: H_hat = Y X^H (X X^H)^-1 (X of full row rank, P >= Nt). With orthogonal pilots
 * of power p per sample (X X^H = P p I) the error H_hat - H = W X^H / (P p) has i.i.d. entries
 * of variance sigma^2 / (P p), so the normalised MSE is
 *   NMSE = E||H_hat - H||^2 / E||H||^2 = sigma^2 / (P p g),  g = mean channel power per entry
 * (Kay, Fundamentals of Statistical Signal Processing: Estimation Theory, 1993, ch. 4, linear
 * model; Biguesh & Gershman, IEEE Trans. Signal Process., 2006, LS case; both from memory, M).
 */
import { allocateLike, checkInteger, checkLength, checkNonNegative, checkPositive, type ComplexArray } from './checks.js';

/**
 * Orthogonal pilots X [Nt, P]: X[t, p] = sqrt(power) exp(-j 2 pi t p / P) (rows of a DFT
 * matrix), so X X^H = P power I. Needs P >= Nt.
 * @example orthogonalPilots(2, 2) // [1, 0, 1, 0,  1, 0, -1, ~0]
 */
export function orthogonalPilots(transmitters: number, length: number, power = 1): Float64Array {
  const fn = 'orthogonalPilots()';
  checkInteger(fn, 'transmitters', transmitters, 1);
  checkInteger(fn, 'length', length, 1);
  checkPositive(fn, 'power', power);
  if (length < transmitters) throw new RangeError(`${fn}: length must be >= transmitters (${transmitters}) for orthogonal rows, got ${length}`);
  const X = new Float64Array(2 * transmitters * length);
  const a = Math.sqrt(power);
  for (let t = 0; t < transmitters; t++) {
    for (let p = 0; p < length; p++) {
      const phase = (-2 * Math.PI * ((t * p) % length)) / length;
      X[2 * (t * length + p)] = a * Math.cos(phase);
      X[2 * (t * length + p) + 1] = a * Math.sin(phase);
    }
  }
  return X;
}

/**
 * Noiseless narrowband reception Y = H X: H [Nr, Nt], X [Nt, P], out [Nr, P].
 * @example narrowbandReceive(Float64Array.of(0, 1), Float64Array.of(2, 0), 1, 1, 1) // [0, 2]
 */
export function narrowbandReceive(
  H: ComplexArray,
  X: ComplexArray,
  receivers: number,
  transmitters: number,
  samples: number,
  out?: Float64Array,
): Float64Array {
  const fn = 'narrowbandReceive()';
  checkInteger(fn, 'receivers', receivers, 1);
  checkInteger(fn, 'transmitters', transmitters, 1);
  checkInteger(fn, 'samples', samples, 1);
  checkLength(fn, 'H', H, 2 * receivers * transmitters, `[${receivers}, ${transmitters}] complex interleaved`);
  checkLength(fn, 'X', X, 2 * transmitters * samples, `[${transmitters}, ${samples}] complex interleaved`);
  const Y = out ?? new Float64Array(2 * receivers * samples);
  checkLength(fn, 'out', Y, 2 * receivers * samples, `[${receivers}, ${samples}] complex interleaved`);
  for (let r = 0; r < receivers; r++) {
    for (let p = 0; p < samples; p++) {
      let re = 0,
        im = 0;
      for (let t = 0; t < transmitters; t++) {
        const hr = H[2 * (r * transmitters + t)]!,
          hi = H[2 * (r * transmitters + t) + 1]!;
        const xr = X[2 * (t * samples + p)]!,
          xi = X[2 * (t * samples + p) + 1]!;
        re += hr * xr - hi * xi;
        im += hr * xi + hi * xr;
      }
      Y[2 * (r * samples + p)] = re;
      Y[2 * (r * samples + p) + 1] = im;
    }
  }
  return Y;
}

/**
 * Least-squares channel estimate H_hat = Y X^H (X X^H)^-1, out [Nr, Nt] in Y's precision.
 * Throws when X X^H is singular (pilots without full row rank).
 * @example lsChannelEstimate(Float64Array.of(0, 2), Float64Array.of(2, 0), 1, 1, 1) // [0, 1]
 */
export function lsChannelEstimate(
  Y: ComplexArray,
  X: ComplexArray,
  receivers: number,
  transmitters: number,
  pilotLength: number,
  out?: ComplexArray,
): ComplexArray {
  const fn = 'lsChannelEstimate()';
  checkInteger(fn, 'receivers', receivers, 1);
  checkInteger(fn, 'transmitters', transmitters, 1);
  checkInteger(fn, 'pilotLength', pilotLength, 1);
  const Nr = receivers,
    Nt = transmitters,
    P = pilotLength;
  checkLength(fn, 'Y', Y, 2 * Nr * P, `[${Nr}, ${P}] complex interleaved`);
  checkLength(fn, 'X', X, 2 * Nt * P, `[${Nt}, ${P}] complex interleaved`);
  if (P < Nt) throw new RangeError(`${fn}: pilotLength must be >= transmitters (${Nt}) for an LS estimate, got ${P}`);
  const Hhat = out ?? allocateLike(Y, 2 * Nr * Nt);
  checkLength(fn, 'out', Hhat, 2 * Nr * Nt, `[${Nr}, ${Nt}] complex interleaved`);
  // G = X X^H (Nt x Nt) and its inverse by Gauss-Jordan with partial pivoting.
  const G = new Float64Array(2 * Nt * Nt);
  for (let a = 0; a < Nt; a++) {
    for (let b = 0; b < Nt; b++) {
      let re = 0,
        im = 0;
      for (let p = 0; p < P; p++) {
        const ar = X[2 * (a * P + p)]!,
          ai = X[2 * (a * P + p) + 1]!;
        const br = X[2 * (b * P + p)]!,
          bi = -X[2 * (b * P + p) + 1]!;
        re += ar * br - ai * bi;
        im += ar * bi + ai * br;
      }
      G[2 * (a * Nt + b)] = re;
      G[2 * (a * Nt + b) + 1] = im;
    }
  }
  const Ginv = invertComplex(fn, G, Nt);
  // YXh = Y X^H (Nr x Nt), then H_hat = YXh Ginv.
  const YXh = new Float64Array(2 * Nr * Nt);
  for (let r = 0; r < Nr; r++) {
    for (let t = 0; t < Nt; t++) {
      let re = 0,
        im = 0;
      for (let p = 0; p < P; p++) {
        const yr = Y[2 * (r * P + p)]!,
          yi = Y[2 * (r * P + p) + 1]!;
        const xr = X[2 * (t * P + p)]!,
          xi = -X[2 * (t * P + p) + 1]!;
        re += yr * xr - yi * xi;
        im += yr * xi + yi * xr;
      }
      YXh[2 * (r * Nt + t)] = re;
      YXh[2 * (r * Nt + t) + 1] = im;
    }
  }
  for (let r = 0; r < Nr; r++) {
    for (let t = 0; t < Nt; t++) {
      let re = 0,
        im = 0;
      for (let j = 0; j < Nt; j++) {
        const ar = YXh[2 * (r * Nt + j)]!,
          ai = YXh[2 * (r * Nt + j) + 1]!;
        const br = Ginv[2 * (j * Nt + t)]!,
          bi = Ginv[2 * (j * Nt + t) + 1]!;
        re += ar * br - ai * bi;
        im += ar * bi + ai * br;
      }
      Hhat[2 * (r * Nt + t)] = re;
      Hhat[2 * (r * Nt + t) + 1] = im;
    }
  }
  return Hhat;
}

/**
 * Normalised mean squared error ||estimate - truth||^2 / ||truth||^2 over all entries.
 * @example normalizedMse(Float64Array.of(1.1, 0), Float64Array.of(1, 0)) // 0.01 (to rounding)
 */
export function normalizedMse(estimate: ComplexArray, truth: ComplexArray): number {
  const fn = 'normalizedMse()';
  checkLength(fn, 'estimate', estimate, truth.length, 'the same layout as truth');
  let err = 0,
    ref = 0;
  for (let i = 0; i < truth.length; i++) {
    const d = estimate[i]! - truth[i]!;
    err += d * d;
    ref += truth[i]! * truth[i]!;
  }
  if (!(ref > 0)) throw new RangeError(`${fn}: truth has zero power, so the error cannot be normalised, got ||truth||^2 = ${ref}`);
  return err / ref;
}

/**
 * Inputs of the LS theory.
 * @example lsNmseTheory({ noiseVariance: 0.01, pilotLength: 4, pilotPower: 2, meanChannelPower: 0.5 } satisfies LsTheoryInput) // 0.0025 (= 0.01 / (4 * 2 * 0.5))
 */
export interface LsTheoryInput {
  /** Noise power per complex sample sigma^2. */
  noiseVariance: number;
  /** Pilot length P. */
  pilotLength: number;
  /** Pilot power p per sample and stream. Default 1. */
  pilotPower?: number;
  /** Mean channel power per entry g = E|h_ij|^2. Default 1. */
  meanChannelPower?: number;
}

/**
 * Theoretical NMSE of LS with orthogonal pilots: sigma^2 / (P p g) (module comment; Kay 1993
 * ch. 4, Biguesh & Gershman 2006, M).
 * @example lsNmseTheory({ noiseVariance: 0.1, pilotLength: 8 }) // 0.0125
 */
export function lsNmseTheory(input: LsTheoryInput): number {
  const fn = 'lsNmseTheory()';
  checkNonNegative(fn, 'noiseVariance', input.noiseVariance);
  checkInteger(fn, 'pilotLength', input.pilotLength, 1);
  const p = input.pilotPower ?? 1;
  const g = input.meanChannelPower ?? 1;
  checkPositive(fn, 'pilotPower', p);
  checkPositive(fn, 'meanChannelPower', g);
  return input.noiseVariance / (input.pilotLength * p * g);
}

function invertComplex(fn: string, G: Float64Array, n: number): Float64Array {
  const A = Float64Array.from(G);
  const I = new Float64Array(2 * n * n);
  for (let i = 0; i < n; i++) I[2 * (i * n + i)] = 1;
  let scale = 0;
  for (let i = 0; i < A.length; i++) scale = Math.max(scale, Math.abs(A[i]!));
  for (let c = 0; c < n; c++) {
    let pivot = c,
      best = -1;
    for (let r = c; r < n; r++) {
      const m = Math.hypot(A[2 * (r * n + c)]!, A[2 * (r * n + c) + 1]!);
      if (m > best) {
        best = m;
        pivot = r;
      }
    }
    if (!(best > 1e-12 * scale)) throw new RangeError(`${fn}: X X^H is singular (pilots without full row rank), got pivot ${best} at column ${c}`);
    if (pivot !== c) {
      for (let j = 0; j < 2 * n; j++) {
        const a = 2 * c * n + j,
          b = 2 * pivot * n + j;
        [A[a], A[b]] = [A[b]!, A[a]!];
        [I[a], I[b]] = [I[b]!, I[a]!];
      }
    }
    const pr = A[2 * (c * n + c)]!,
      pi = A[2 * (c * n + c) + 1]!;
    const d = pr * pr + pi * pi;
    const ir = pr / d,
      ii = -pi / d; // 1 / pivot
    for (let j = 0; j < n; j++) {
      for (const M of [A, I]) {
        const xr = M[2 * (c * n + j)]!,
          xi = M[2 * (c * n + j) + 1]!;
        M[2 * (c * n + j)] = xr * ir - xi * ii;
        M[2 * (c * n + j) + 1] = xr * ii + xi * ir;
      }
    }
    for (let r = 0; r < n; r++) {
      if (r === c) continue;
      const fr = A[2 * (r * n + c)]!,
        fi = A[2 * (r * n + c) + 1]!;
      if (fr === 0 && fi === 0) continue;
      for (let j = 0; j < n; j++) {
        for (const M of [A, I]) {
          const xr = M[2 * (c * n + j)]!,
            xi = M[2 * (c * n + j) + 1]!;
          M[2 * (r * n + j)] = M[2 * (r * n + j)]! - (fr * xr - fi * xi);
          M[2 * (r * n + j) + 1] = M[2 * (r * n + j) + 1]! - (fr * xi + fi * xr);
        }
      }
    }
  }
  return I;
}
