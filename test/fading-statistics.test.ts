/**
 * Statistics of the fading models against outside references: scipy.special.j0 for the
 * correlations, the windowed expectation of Welch's estimate (from scipy's j0 and scipy's Hann
 * window) for the Doppler spectrum, scipy.stats (rayleigh, rice) for the envelopes.
 *
 * Tolerances (fixed seeds, so every run gives the same numbers; the bounds say how far an honest
 * estimate of that sample size may stray):
 * - AR(p) is Gaussian. For a circular complex Gaussian process with real correlation rho, the
 *   sample correlation c(k) = (1/n) sum_i x_(i+k) x_i^* (n = N - k products) has, by Isserlis'
 *   theorem (Bartlett's formula), Var(Re c(k)) = (1 / 2n) sum_(|m|<n) (1 - |m|/n) [rho(m)^2 + rho(m+k) rho(m-k)].
 *   R independent paths divide it by R; we allow 5 standard deviations per lag.
 * - Sum-of-sinusoids is not Gaussian and a single realisation is not ergodic, so each path's
 *   time average c_r(k) is one i.i.d. draw (paths are independent by their keyed streams) whose
 *   ensemble mean is the target; we allow 5 s / sqrt(R), s the sample standard deviation over the
 *   R paths (Student t with R - 1 >= 39 degrees of freedom: two-sided p < 2e-5 per lag).
 * - Kolmogorov-Smirnov: the statistic D of n i.i.d. samples exceeds 1.949 / sqrt(n) with
 *   probability 0.001 (asymptotic Kolmogorov distribution, common practice for n >= 100).
 */
import FFT from 'fft.js';
import { describe, expect, it } from 'vitest';
import {
  AutoregressiveGains,
  GeometricGains,
  SumOfSinusoidsGains,
  arPowerSpectralDensity,
  uniformClock,
  type FadingPath,
  type GainProcess,
} from '@pathweave/core';
import { hasPython, pythonJson } from './support/python.js';

const HAVE = hasPython('numpy', 'scipy');
const FIVE_SIGMA = 5;
const KS_CRITICAL_0_001 = 1.949;

function makePaths(count: number, dopplersHz: number[], prefix: string, extra: Partial<FadingPath> = {}): FadingPath[] {
  return Array.from({ length: count }, (_, i) => ({ id: `${prefix}-${i}`, power: 1, phaseRad: 0, dopplersHz, ...extra }));
}

function run(g: GainProcess, steps: number): Float64Array {
  const out = new Float64Array(2 * steps * g.pathCount);
  g.fill(out, 0, steps);
  return out;
}

/** Per-path time averages of x_(n+k) x_n^*, and of the I/Q products, [R] each. */
function pathCorrelations(g: Float64Array, L: number, N: number, k: number): { re: Float64Array; ii: Float64Array; qq: Float64Array; iq: Float64Array } {
  const re = new Float64Array(L),
    ii = new Float64Array(L),
    qq = new Float64Array(L),
    iq = new Float64Array(L);
  for (let l = 0; l < L; l++) {
    let sii = 0,
      sqq = 0,
      siq = 0;
    for (let n = 0; n + k < N; n++) {
      const a = 2 * ((n + k) * L + l),
        b = 2 * (n * L + l);
      sii += g[a]! * g[b]!;
      sqq += g[a + 1]! * g[b + 1]!;
      siq += g[a]! * g[b + 1]!;
    }
    const n = N - k;
    ii[l] = sii / n;
    qq[l] = sqq / n;
    iq[l] = siq / n;
    re[l] = (sii + sqq) / n;
  }
  return { re, ii, qq, iq };
}

const mean = (x: ArrayLike<number>): number => Array.from(x).reduce((a, b) => a + b, 0) / x.length;
const sd = (x: ArrayLike<number>): number => {
  const m = mean(x);
  return Math.sqrt(Array.from(x).reduce((a, b) => a + (b - m) ** 2, 0) / (x.length - 1));
};

/** scipy.special.j0 products: target[m] = prod_i j0(2 pi f_i m T), m = 0..count-1. */
function scipyTarget(dopplersHz: number[], stepS: number, count: number): number[] {
  return pythonJson<number[]>(
    'import sys, json, numpy as np; from scipy.special import j0\n' +
      'f = json.loads(sys.argv[1]); T = float(sys.argv[2]); m = np.arange(int(sys.argv[3]))\n' +
      'r = np.ones(len(m))\n' +
      'for fi in f: r = r * j0(2 * np.pi * fi * m * T)\n' +
      'print(json.dumps(r.tolist()))',
    [JSON.stringify(dopplersHz), String(stepS), String(count)],
  );
}

/** Lags 0..K with K the first lag past the third zero of J0 (8.6537, A&S 9.5 (V)) at the largest spread. */
function lagsToThirdZero(fMaxHz: number, stepS: number): number {
  return Math.ceil(8.653727912911013 / (2 * Math.PI * fMaxHz * stepS)) + 1;
}

describe.skipIf(!HAVE)('AR(p) follows J0 beyond lag 1 (scipy.special.j0 (C); Baddour & Beaulieu 2005 (M))', () => {
  for (const [dopplers, order] of [
    [[50], 30],
    [[30, 20], 48],
  ] as const) {
    it(`dopplers ${dopplers.join('+')} Hz, T = 1 ms, order ${order}`, () => {
      const T = 1e-3,
        R = 40,
        N = 20000;
      const K = lagsToThirdZero(dopplers[0]!, T);
      expect(K).toBeLessThanOrEqual(order); // the fit reproduces lags 0..p; we test inside them
      const g = run(new AutoregressiveGains(makePaths(R, [...dopplers], `ar${dopplers.length}`), 11, { order, stepS: T }), N);
      const rho = scipyTarget([...dopplers], T, N + K + 1);
      for (let k = 0; k <= K; k++) {
        const n = N - k;
        let v = 0;
        for (let m = -(n - 1); m <= n - 1; m++) {
          const w = 1 - Math.abs(m) / n;
          v += w * (rho[Math.abs(m)]! ** 2 + rho[Math.abs(m + k)]! * rho[Math.abs(m - k)]!);
        }
        const tol = FIVE_SIGMA * Math.sqrt(v / (2 * n) / R);
        const c = mean(pathCorrelations(g, R, N, k).re);
        expect(Math.abs(c - rho[k]!), `lag ${k}: ${c} vs ${rho[k]} (tol ${tol})`).toBeLessThan(tol);
      }
    });
  }
});

describe.skipIf(!HAVE)('sum-of-sinusoids follows J0 (Zheng & Xiao 2003 (V abstract, M formulas); scipy.special.j0 (C))', () => {
  for (const dopplers of [[50], [30, 20]]) {
    it(`dopplers ${dopplers.join('+')} Hz, M = 16, I/Q each J0 / 2 and uncorrelated`, () => {
      const T = 1e-3,
        R = 60,
        N = 8000;
      const K = lagsToThirdZero(dopplers[0]!, T);
      const g = run(new SumOfSinusoidsGains(makePaths(R, dopplers, `sos${dopplers.length}`), 5, { sinusoids: 16, clock: uniformClock(T) }), N);
      const rho = scipyTarget(dopplers, T, K + 1);
      let worst = 0;
      for (let k = 0; k <= K; k++) {
        const c = pathCorrelations(g, R, N, k);
        for (const [name, values, target] of [
          ['complex', c.re, rho[k]!],
          ['in-phase', c.ii, rho[k]! / 2],
          ['quadrature', c.qq, rho[k]! / 2],
          ['cross', c.iq, 0],
        ] as const) {
          const tol = (FIVE_SIGMA * sd(values)) / Math.sqrt(R);
          const err = Math.abs(mean(values) - target);
          worst = Math.max(worst, err);
          expect(err, `${name} lag ${k}: ${mean(values)} vs ${target} (tol ${tol})`).toBeLessThan(tol);
        }
      }
      expect(worst).toBeLessThan(0.05); // the 5 s / sqrt(R) bounds are themselves small
    });
  }
});

/** Welch's estimate with a periodic Hann window, 50 % overlap; fftshifted two-sided density per Hz. */
function welch(g: Float64Array, L: number, l: number, N: number, size: number, fsHz: number): Float64Array {
  const fft = new FFT(size);
  const input = fft.createComplexArray() as number[];
  const spectrum = fft.createComplexArray() as number[];
  const window = Float64Array.from({ length: size }, (_, n) => 0.5 - 0.5 * Math.cos((2 * Math.PI * n) / size));
  const energy = window.reduce((a, b) => a + b * b, 0);
  const psd = new Float64Array(size);
  let segments = 0;
  for (let start = 0; start + size <= N; start += size / 2) {
    for (let n = 0; n < size; n++) {
      const i = 2 * ((start + n) * L + l);
      input[2 * n] = g[i]! * window[n]!;
      input[2 * n + 1] = g[i + 1]! * window[n]!;
    }
    fft.transform(spectrum, input);
    for (let k = 0; k < size; k++) {
      const shifted = (k + size / 2) % size; // bin k of the centred grid is FFT bin k - size/2
      psd[k] = psd[k]! + (spectrum[2 * shifted]! ** 2 + spectrum[2 * shifted + 1]! ** 2) / (fsHz * energy);
    }
    segments++;
  }
  for (let k = 0; k < size; k++) psd[k] = psd[k]! / segments;
  return psd;
}

describe.skipIf(!HAVE)('sum-of-sinusoids Doppler spectrum: Clarke U shape in |f| <= f_D (Welch, fft.js)', () => {
  it('band powers match the windowed expectation of J0 and Clarke asin law', () => {
    const fD = 200,
      fs = 1000,
      T = 1 / fs,
      R = 40,
      N = 16384,
      size = 1024;
    const g = run(new SumOfSinusoidsGains(makePaths(R, [fD], 'welch'), 9, { sinusoids: 16, clock: uniformClock(T) }), N);
    // Expected Welch density E[P_k] = sum_m r_w(m) rho(m) e^(-j 2 pi k m / size) / (fs sum w^2),
    // rho = scipy.special.j0, w = scipy.signal.get_window('hann') (periodic), r_w its autocorrelation.
    const expected = pythonJson<number[]>(
      'import sys, json, numpy as np; from scipy.special import j0; from scipy.signal import get_window\n' +
        'fD, fs, N = float(sys.argv[1]), float(sys.argv[2]), int(sys.argv[3])\n' +
        "w = get_window('hann', N); rw = np.correlate(w, w, 'full'); m = np.arange(-(N - 1), N)\n" +
        'c = np.zeros(N, complex); np.add.at(c, m % N, rw * j0(2 * np.pi * fD * m / fs))\n' +
        'P = np.fft.fftshift(np.fft.fft(c).real) / (fs * np.sum(w * w))\n' +
        'print(json.dumps(P.tolist()))',
      [String(fD), String(fs), String(size)],
    );
    const df = fs / size;
    const freq = (k: number): number => (k - size / 2) * df;
    // Ten bands across [-f_D, f_D); the outer two extend to +-fs/2 so they keep what the window
    // smears past the edge singularities. A band holds the bins [first, last], i.e. the
    // frequencies [f_first - df/2, f_last + df/2).
    const bandEdges = Array.from({ length: 11 }, (_, i) => -fD + (i * 2 * fD) / 10);
    bandEdges[0] = -Infinity;
    bandEdges[10] = Infinity;
    const bandBins = bandEdges.slice(0, -1).map((lo, i) => {
      const bins: number[] = [];
      for (let k = 0; k < size; k++) if (freq(k) >= lo && freq(k) < bandEdges[i + 1]!) bins.push(k);
      return bins;
    });
    const fractionsOf = (psd: ArrayLike<number>): number[] => {
      let total = 0;
      for (let k = 0; k < size; k++) total += psd[k]!;
      const bands = bandBins.map((bins) => bins.reduce((a, k) => a + psd[k]!, 0) / total);
      let outside = 0;
      for (let k = 0; k < size; k++) if (Math.abs(freq(k)) >= fD + 5 * df) outside += psd[k]!;
      return [...bands, outside / total];
    };
    const perPath = Array.from({ length: R }, (_, l) => fractionsOf(welch(g, R, l, N, size, fs)));
    const want = fractionsOf(expected);
    // Clarke: power in [f1, f2) = (asin(f2/fD) - asin(f1/fD)) / pi (Jakes 1974 (V)). The Hann
    // window moves the expectation away from it by at most 2.2e-3 (computed with scipy for this
    // size, largest at the outer bands); 3e-3 allows that.
    const asin = (f: number): number => Math.asin(Math.max(-1, Math.min(1, f / fD)));
    bandBins.forEach((bins, i) => {
      const clarke = (asin(freq(bins[bins.length - 1]!) + df / 2) - asin(freq(bins[0]!) - df / 2)) / Math.PI;
      expect(Math.abs(want[i]! - clarke), `band ${i} expectation ${want[i]} vs Clarke ${clarke}`).toBeLessThan(3e-3);
      const values = perPath.map((p) => p[i]!);
      const tol = (FIVE_SIGMA * sd(values)) / Math.sqrt(R);
      expect(Math.abs(mean(values) - want[i]!), `band ${i}: ${mean(values)} vs ${want[i]} (tol ${tol})`).toBeLessThan(tol);
    });
    // U shape: the outer bands hold more than twice the power of the central ones (Clarke: 0.205 vs 0.064).
    const m = (i: number): number => mean(perPath.map((p) => p[i]!));
    expect(m(0)).toBeGreaterThan(2 * m(4));
    expect(m(9)).toBeGreaterThan(2 * m(5));
    // Nothing beyond f_D + 5 bins: the expectation there is window leakage only (2e-7, computed).
    expect(want[10]!).toBeLessThan(1e-6);
    expect(Math.max(...perPath.map((p) => p[10]!))).toBeLessThan(1e-3);
  });
});

describe.skipIf(!HAVE)('AR(p) spectral floor set by the loading (Welch, fft.js)', () => {
  it('the out-of-band density equals sigma^2 T / |A(f)|^2 ~ epsilon T, and scales with epsilon', () => {
    const fD = 50,
      fs = 1000,
      T = 1 / fs,
      R = 20,
      N = 16384,
      size = 1024;
    const floors: number[] = [];
    for (const loading of [1e-6, 1e-4]) {
      const process = new AutoregressiveGains(makePaths(R, [fD], `floor${loading}`), 3, { order: 30, stepS: T, loading });
      const g = run(process, N);
      const fit = process.fits[0]!;
      const bins: number[] = [];
      for (let k = 0; k < size; k++) if (Math.abs((k - size / 2) * (fs / size)) >= 3 * fD) bins.push(k);
      const measured = Array.from({ length: R }, (_, l) => {
        const psd = welch(g, R, l, N, size, fs);
        return mean(bins.map((k) => psd[k]!));
      });
      const analytic = mean(bins.map((k) => arPowerSpectralDensity(fit, (k - size / 2) * (fs / size), T)));
      const tol = (FIVE_SIGMA * sd(measured)) / Math.sqrt(R);
      expect(Math.abs(mean(measured) - analytic), `loading ${loading}: ${mean(measured)} vs ${analytic}`).toBeLessThan(tol);
      // White loading noise of power epsilon / (1 + epsilon) spreads over fs: density epsilon T (derived).
      expect(analytic / (loading * T)).toBeGreaterThan(0.9);
      expect(analytic / (loading * T)).toBeLessThan(1.1);
      floors.push(mean(measured));
    }
    expect(floors[1]! / floors[0]!).toBeGreaterThan(70); // 100x the loading, 100x the floor (within the 5-sigma bounds)
    expect(floors[1]! / floors[0]!).toBeLessThan(140);
  });
});

/** KS statistic and p-value of samples against a scipy.stats distribution. */
function kolmogorovSmirnov(samples: number[], dist: 'rayleigh' | 'rice', args: number[]): { D: number; p: number } {
  return pythonJson<{ D: number; p: number }>(
    'import sys, json; from scipy import stats\n' +
      'd = json.load(sys.stdin); r = stats.kstest(d["x"], d["dist"], args=tuple(d["args"]))\n' +
      'print(json.dumps({"D": float(r.statistic), "p": float(r.pvalue)}))',
    [],
    JSON.stringify({ x: samples, dist, args }),
  );
}

function envelopes(g: GainProcess, step: number): number[] {
  const out = new Float64Array(2 * g.pathCount);
  g.fill(out, step, 1);
  return Array.from({ length: g.pathCount }, (_, l) => Math.hypot(out[2 * l]!, out[2 * l + 1]!));
}

describe.skipIf(!HAVE)('envelopes (Kolmogorov-Smirnov against scipy.stats.rayleigh / rice (C))', () => {
  const n = 2000;
  const gamma = 2; // E|rho|^2: Rayleigh scale sqrt(gamma / 2)
  const critical = KS_CRITICAL_0_001 / Math.sqrt(n);

  it('AR(p) is Rayleigh at its start and later', () => {
    const g = new AutoregressiveGains(makePaths(n, [50], 'ks-ar', { power: gamma }), 21, { order: 30, stepS: 1e-3 });
    for (const step of [0, 300]) {
      const r = kolmogorovSmirnov(envelopes(g, step), 'rayleigh', [0, Math.sqrt(gamma / 2)]);
      expect(r.D, `step ${step} p = ${r.p}`).toBeLessThan(critical);
    }
  });

  it('sum-of-sinusoids is Rayleigh (single and double ring)', () => {
    for (const dopplers of [[50], [30, 20]]) {
      const g = new SumOfSinusoidsGains(makePaths(n, dopplers, `ks-sos${dopplers.length}`, { power: gamma }), 22, { sinusoids: 16, clock: uniformClock(1e-3) });
      const r = kolmogorovSmirnov(envelopes(g, 377), 'rayleigh', [0, Math.sqrt(gamma / 2)]);
      expect(r.D, `dopplers ${dopplers} p = ${r.p}`).toBeLessThan(critical);
    }
  });

  it('geometric with K = 6 dB is Rician (b = nu / sigma), and is not Rayleigh', () => {
    const kDb = 6;
    const K = 10 ** (kDb / 10);
    const paths = makePaths(n, [50], 'ks-geo', { power: gamma }).map((p, i) => ({ ...p, dopplerHz: 40 * Math.cos(i), phaseRad: i }));
    const g = new GeometricGains(paths, 23, { clock: uniformClock(1e-3), ricianKDb: kDb, sinusoids: 16 });
    const nu = Math.sqrt((gamma * K) / (K + 1));
    const sigma = Math.sqrt(gamma / (2 * (K + 1)));
    const samples = envelopes(g, 123);
    const rice = kolmogorovSmirnov(samples, 'rice', [nu / sigma, 0, sigma]);
    expect(rice.D, `p = ${rice.p}`).toBeLessThan(critical);
    const rayleigh = kolmogorovSmirnov(samples, 'rayleigh', [0, Math.sqrt(gamma / 2)]); // negative control
    expect(rayleigh.D).toBeGreaterThan(critical);
  });
});
