#!/usr/bin/env node
// Correlation error and cost of the gain processes, as a Markdown table (docs/fading.md).
// Run from the repository root after `npx tsc -b`: node scripts/fading-table.mjs
//
// Every model runs R unit-power paths for N steps of T = 1 ms at f_D = 50 Hz (f_D T = 0.05), or
// f_t = 30, f_r = 20 Hz for the two-ends rows. Lags k = 0..K cover 2 pi f k T up to the third zero
// of J0 (8.6537) at the larger spread. Columns:
//   model error   max_k |r_model(k) - target(k)|, r_model the exact correlation of the model
//                 (AR: the Yule-Walker recursion continued past lag p; SoS: its ensemble
//                 correlation, equal to the target by construction; AR(1): alpha^k)
//   sample error  max_k |c(k) - target(k)| of the sample correlation over the R paths (includes
//                 estimation noise, about 0.01 at this size)
//   ns/path-step  wall time of fill() divided by R N (one core, this machine)
import { performance } from 'node:perf_hooks';
import {
  AutoregressiveGains,
  arPowerSpectralDensity,
  clarkeTargetCorrelation,
  fitAutoregressive,
  GaussMarkovGains,
  GeometricGains,
  SumOfSinusoidsGains,
  besselJ0,
  uniformClock,
} from '../packages/core/dist/index.js';

const T = 1e-3;
const R = 64;
const N = 16384;
const THIRD_ZERO = 8.653727912911013;

const target = (dopplers, k) => dopplers.reduce((v, f) => v * besselJ0(2 * Math.PI * f * k * T), 1);

function sampleCorrelation(g, L, k) {
  let s = 0;
  for (let l = 0; l < L; l++)
    for (let n = 0; n + k < N; n++) s += g[2 * ((n + k) * L + l)] * g[2 * (n * L + l)] + g[2 * ((n + k) * L + l) + 1] * g[2 * (n * L + l) + 1];
  return s / (L * (N - k));
}

function arModelCorrelation(fit, K) {
  const r = Array.from(fit.correlation);
  for (let k = fit.order + 1; k <= K; k++) {
    let v = 0;
    for (let j = 1; j <= fit.order; j++) v += fit.coefficients[j - 1] * r[k - j];
    r.push(v);
  }
  return r;
}

const rows = [];
function measure(name, params, dopplers, makeProcess, modelCorrelation, ownTarget = (k) => target(dopplers, k)) {
  const K = Math.ceil(THIRD_ZERO / (2 * Math.PI * Math.max(...dopplers) * T));
  const paths = Array.from({ length: R }, (_, i) => ({ id: `${name}-${i}`, power: 1, phaseRad: 0, alpha: 0, dopplersHz: dopplers, dopplerHz: 20 }));
  const process = makeProcess(paths);
  const out = new Float64Array(2 * R * N);
  const t0 = performance.now();
  process.fill(out, 0, N);
  const ns = ((performance.now() - t0) * 1e6) / (R * N);
  let model = 0;
  let sample = 0;
  const exact = modelCorrelation(process, K);
  for (let k = 0; k <= K; k++) {
    model = Math.max(model, Math.abs(exact[k] - ownTarget(k)));
    sample = Math.max(sample, Math.abs(sampleCorrelation(out, R, k) - ownTarget(k)));
  }
  rows.push([name, params, `${dopplers.join(' + ')} Hz`, `0..${K}`, model.toExponential(1), sample.toExponential(1), ns.toFixed(0)]);
}

const alpha = (d) => target(d, 1);
measure(
  'gauss-markov (AR(1))',
  'alpha = R(1)',
  [50],
  (p) =>
    new GaussMarkovGains(
      p.map((x) => ({ ...x, alpha: alpha([50]) })),
      1,
    ),
  (_, K) => Array.from({ length: K + 1 }, (_, k) => alpha([50]) ** k),
);
for (const order of [5, 10, 20, 30]) {
  measure(
    'ar',
    `order ${order}`,
    [50],
    (p) => new AutoregressiveGains(p, 1, { order, stepS: T }),
    (g, K) => arModelCorrelation(g.fits[0], K),
  );
}
measure(
  'ar',
  'order 48',
  [30, 20],
  (p) => new AutoregressiveGains(p, 1, { order: 48, stepS: T }),
  (g, K) => arModelCorrelation(g.fits[0], K),
);
for (const sinusoids of [8, 16, 32]) {
  measure(
    'sum-of-sinusoids',
    `M = ${sinusoids}`,
    [50],
    (p) => new SumOfSinusoidsGains(p, 1, { sinusoids, clock: uniformClock(T) }),
    (_, K) => Array.from({ length: K + 1 }, (_, k) => target([50], k)),
  );
}
for (const sinusoids of [8, 16]) {
  measure(
    'sum-of-sinusoids (double ring)',
    `M = ${sinusoids} per end`,
    [30, 20],
    (p) => new SumOfSinusoidsGains(p, 1, { sinusoids, clock: uniformClock(T) }),
    (_, K) => Array.from({ length: K + 1 }, (_, k) => target([30, 20], k)),
  );
}
// Geometric with K = 0 dB: target Re E[rho(t + tau) rho*(t)] = (K cos(2 pi f_l tau) + J0) / (K + 1), f_l = 20 Hz.
const kLin = 1;
const geometricTarget = (k) => (kLin * Math.cos(2 * Math.PI * 20 * k * T) + target([50], k)) / (kLin + 1);
measure(
  'geometric',
  'K = 0 dB, f_l = 20 Hz, M = 16',
  [50],
  (p) => new GeometricGains(p, 1, { clock: uniformClock(T), ricianKDb: 0, sinusoids: 16 }),
  (_, K) => Array.from({ length: K + 1 }, (_, k) => geometricTarget(k)),
  geometricTarget,
);
measure(
  'geometric',
  'no K (specular only)',
  [50],
  (p) => new GeometricGains(p, 1, { clock: uniformClock(T) }),
  (_, K) => Array.from({ length: K + 1 }, (_, k) => Math.cos(2 * Math.PI * 20 * k * T)),
  (k) => Math.cos(2 * Math.PI * 20 * k * T),
);

console.log(`T = ${T * 1e3} ms, ${R} paths x ${N} steps, Node ${process.version}\n`);
console.log('| model | parameters | spreads | lags | model error | sample error | ns / path-step |');
console.log('|---|---|---|---|---|---|---|');
for (const r of rows) console.log(`| ${r.join(' | ')} |`);

// Spectral floor of AR(p) set by the loading epsilon: the mean two-sided density over
// 3 f_D <= |f| < 1 / (2T), against epsilon T (the density of white noise of power epsilon), and
// the ratio of the spectral peak (near f_D) to that floor.
console.log('\n| AR order | loading epsilon | floor / (epsilon T) | floor, dB re white unit power | peak / floor, dB |');
console.log('|---|---|---|---|---|');
for (const loading of [1e-4, 1e-5, 1e-6]) {
  const fit = fitAutoregressive(clarkeTargetCorrelation([50], T, 30), loading);
  let floor = 0;
  let bins = 0;
  let peak = 0;
  for (let f = 0; f < 0.5 / T; f += 0.05) {
    const d = arPowerSpectralDensity(fit, f, T);
    peak = Math.max(peak, d);
    if (f >= 150) {
      floor += d;
      bins++;
    }
  }
  floor /= bins;
  console.log(
    `| 30 | ${loading.toExponential(0)} | ${(floor / (loading * T)).toFixed(3)} | ${(10 * Math.log10(floor / T)).toFixed(1)} | ${(10 * Math.log10(peak / floor)).toFixed(1)} |`,
  );
}
