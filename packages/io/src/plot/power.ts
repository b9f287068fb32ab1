/**
 * Power over time: the paths' total power sum_l |rho_l|^2 (each path's gain on its own, no
 * interference between them: with fading `static` or `geometric` this is the geometry's power),
 * the same split by path kind, and the channel's power, the mean of |H|^2 over subcarriers (or
 * taps) and element pairs (the coherent sum, with the small-scale fading of the paths'
 * interference). Read from a file's `gains` and tensor, or from a run of the scenario in memory.
 *
 * Layouts read: gains [S, (U,) (symbols,) Lmax] complex; tensor [S, (U,) (symbols,) K, Nr, Nt];
 * symbol 0 of each subframe is used.
 */
import { fillBlock, maxPathCount, RequestError } from '../dataset/generate.js';
import { tensorOf } from '../formats/reader.js';
import { Panel } from './axes.js';
import { userIndexOf, type PlotSource } from './data.js';
import { SvgDocument, THEME } from './svg.js';

/**
 * One curve of the power figure: power in dB at each time (-Infinity where it is zero).
 * @example const los: PowerSeries = { label: 'los', powerDb: Float64Array.of(-90, -91), style: 'line' }; // drawn solid
 */
export interface PowerSeries {
  label: string;
  powerDb: Float64Array;
  /** "line" (the total), "dashed" (a path kind), "thin" (the channel's coherent power). */
  style: 'line' | 'dashed' | 'thin';
}

/**
 * The power series of a source over time (see the module comment): the total path power first,
 * then one series per path kind present, then the channel's mean |H|^2.
 * @example
 * const p = await powerOverTimeOf(await openPlotSource('examples/corner-walk-28ghz.json'));
 * [p.timesS.length, p.series.map((s) => s.label)] // [1001, ['all paths, sum of |rho|^2', 'los', 'reflection', 'diffraction', 'channel, mean |H|^2']]
 */
export async function powerOverTimeOf(
  source: PlotSource,
  options: { user?: number | string; subframes?: number } = {},
): Promise<{ timesS: Float64Array; series: PowerSeries[]; subtitle: string }> {
  const b = source.built;
  const ui = userIndexOf(source, options.user ?? 0);
  const U = b.users.length;
  const gen = b.users[ui]!.generator;
  const L = gen.pathCount,
    Lmax = maxPathCount(b);
  const N = gen.stepsPerSubframe;
  const r = source.reader;
  const shape = r !== undefined ? tensorOf(r).shape : b.shape;
  const n = shape.length;
  const bins = shape[n - 3]!,
    pairs = shape[n - 2]! * shape[n - 1]!;
  const perUser = N * bins * pairs;
  const S = r !== undefined ? shape[0]! : Math.min(options.subframes ?? b.plan.timing.subframes, b.plan.timing.subframes);
  if (S < 1) throw new RequestError('the power figure needs at least one subframe');
  const pathPower = new Float64Array(S * L); // |rho|^2, [S, L]
  const channel = new Float64Array(S);
  const takeGains = (g: Float64Array, count: number, first: number): void => {
    const perRow = (b.multiUser ? U : 1) * N * Lmax;
    for (let s = 0; s < count; s++)
      for (let l = 0; l < L; l++) {
        const i = 2 * (s * perRow + (b.multiUser ? ui * N * Lmax : 0) + l);
        pathPower[(first + s) * L + l] = g[i]! * g[i]! + g[i + 1]! * g[i + 1]!;
      }
  };
  const takeTensor = (t: Float32Array | Float64Array, count: number, first: number): void => {
    const stride = (b.multiUser ? U : 1) * perUser;
    const m = bins * pairs; // symbol 0 only
    for (let s = 0; s < count; s++) {
      let sum = 0;
      const base = 2 * (s * stride + (b.multiUser ? ui * perUser : 0));
      for (let i = 0; i < m; i++) sum += t[base + 2 * i]! ** 2 + t[base + 2 * i + 1]! ** 2;
      channel[first + s] = sum / m;
    }
  };
  let kinds: readonly string[];
  let timesS: Float64Array;
  const blockRows = Math.max(1, Math.min(S, Math.floor(4e6 / (b.valuesPerSubframe || 1))));
  if (r !== undefined) {
    if (!r.arrays.some((a) => a.name === 'gains'))
      throw new RequestError(`${source.file} holds no gains array (an .npy holds the tensor only); plot the scenario or an .h5/.npz file`);
    takeGains((await r.readArray('gains')).data as Float64Array, S, 0);
    const name = tensorOf(r).name;
    for (let s = 0; s < S; s += blockRows) {
      const c = Math.min(blockRows, S - s);
      takeTensor((await r.readRows(name, s, s + c)) as Float32Array | Float64Array, c, s);
    }
    const stored = r.arrays.some((a) => a.name === 'paths/kind') ? ((await r.readArray('paths/kind')).strings ?? []) : [];
    kinds = Array.from({ length: L }, (_, l) => stored[(b.multiUser ? ui * Lmax : 0) + l] ?? b.users[ui]!.timeline.kinds[l]!);
    timesS = r.arrays.some((a) => a.name === 'subframeTimesS')
      ? ((await r.readArray('subframeTimesS')).data as Float64Array)
      : Float64Array.from({ length: S }, (_, s) => s * b.plan.timing.subframeS);
  } else {
    const tensor =
      gen.precision === 'complex128' ? new Float64Array(2 * blockRows * b.valuesPerSubframe) : new Float32Array(2 * blockRows * b.valuesPerSubframe);
    const gains = new Float64Array(2 * blockRows * (b.multiUser ? U : 1) * N * Lmax);
    for (let s = 0; s < S; s += blockRows) {
      const c = Math.min(blockRows, S - s);
      const view = tensor.subarray(0, 2 * c * b.valuesPerSubframe);
      fillBlock(b, view, s, c, gains);
      takeGains(gains, c, s);
      takeTensor(view, c, s);
    }
    kinds = b.users[ui]!.timeline.kinds;
    timesS = Float64Array.from({ length: S }, (_, s) => s * b.plan.timing.subframeS);
  }
  const dB = (v: number): number => 10 * Math.log10(v);
  const total = new Float64Array(S);
  for (let s = 0; s < S; s++) {
    let sum = 0;
    for (let l = 0; l < L; l++) sum += pathPower[s * L + l]!;
    total[s] = dB(sum);
  }
  const series: PowerSeries[] = [{ label: 'all paths, sum of |rho|^2', powerDb: total, style: 'line' }];
  for (const kind of [...new Set(kinds)]) {
    const v = new Float64Array(S);
    for (let s = 0; s < S; s++) {
      let sum = 0;
      for (let l = 0; l < L; l++) if (kinds[l] === kind) sum += pathPower[s * L + l]!;
      v[s] = dB(sum);
    }
    series.push({ label: kind, powerDb: v, style: 'dashed' });
  }
  series.push({ label: `channel, mean |H|^2`, powerDb: channel.map(dB), style: 'thin' });
  const T = b.plan.timing.subframeS;
  return {
    timesS,
    series,
    subtitle: `${r !== undefined ? source.file : `${source.file}, run in memory`}: ${S} subframes of ${T * 1e3} ms, ${L} path${L === 1 ? '' : 's'}, fading ${b.plan.fading.model}${b.multiUser ? `, user ${b.users[ui]!.id}` : ''}`,
  };
}

/**
 * Power against time as SVG text: one `<polyline class="series">` per series (the total solid,
 * path kinds dashed, the channel's coherent power thin), time in s, power in dB, with a legend.
 * The power axis spans the total's range and 40 dB below its peak at most.
 * @example
 * const svg = powerOverTimeFigure({ title: 'walk', timesS: Float64Array.of(0, 1), series: [{ label: 'all', powerDb: Float64Array.of(-90, -100), style: 'line' }] });
 * svg.includes('power (dB)') // true
 */
export function powerOverTimeFigure(input: {
  title: string;
  subtitle?: string;
  timesS: Float64Array | readonly number[];
  series: readonly PowerSeries[];
}): string {
  const n = input.timesS.length;
  if (n < 2) throw new RangeError(`powerOverTimeFigure(): needs at least 2 times, got ${n}`);
  for (const s of input.series)
    if (s.powerDb.length !== n) throw new RangeError(`powerOverTimeFigure(): series "${s.label}" has ${s.powerDb.length} values for ${n} times`);
  const W = 900,
    H = 480;
  const svg = new SvgDocument(W, H, input.title);
  svg.text(20, 26, input.title, { 'font-size': THEME.titleSize + 1, 'font-weight': 'bold', class: 'figure-title' });
  if (input.subtitle !== undefined) svg.text(20, 46, input.subtitle, { 'font-size': THEME.smallSize, class: 'subtitle' });
  let hi = -Infinity,
    lo = Infinity;
  for (const s of input.series)
    for (const v of s.powerDb)
      if (Number.isFinite(v)) {
        hi = Math.max(hi, v);
        lo = Math.min(lo, v);
      }
  if (!Number.isFinite(hi)) {
    hi = 0;
    lo = -1;
  }
  lo = Math.max(lo, hi - 60);
  const t0 = input.timesS[0]!,
    t1 = input.timesS[n - 1]!;
  const panel = new Panel({ x: 90, y: 70, width: W - 380, height: H - 150, xRange: [t0, t1], yRange: [lo, hi], xLabel: 'time (s)', yLabel: 'power (dB)' });
  panel.drawAxes(svg);
  const inks = ['#1a1a1a', '#6b2a70', '#b8522e', '#2f6f8f', '#7a7a7a', '#4f7a28'];
  const legend: { label: string; ink: string; width: number; dash: string | undefined }[] = [];
  input.series.forEach((s, i) => {
    const ink = s.style === 'thin' ? '#9a9a9a' : inks[i % inks.length]!;
    const width = s.style === 'line' ? 2.4 : s.style === 'dashed' ? 1.6 : 0.8;
    const dash = s.style === 'dashed' ? '7 4' : undefined;
    // Runs of finite values inside the axis; a zero power (a path absent) breaks the curve.
    let pts: number[] = [];
    const flush = (): void => {
      if (pts.length >= 4) svg.polyline(pts, { stroke: ink, 'stroke-width': width, 'stroke-dasharray': dash, class: 'series', 'data-label': s.label });
      pts = [];
    };
    for (let k = 0; k < n; k++) {
      const v = s.powerDb[k]!;
      if (!Number.isFinite(v)) {
        flush();
        continue;
      }
      pts.push(panel.px(input.timesS[k]!), panel.py(Math.max(lo, v)));
    }
    flush();
    legend.push({ label: s.label, ink, width, dash });
  });
  panel.frame(svg);
  svg.group({ class: 'legend' });
  legend.forEach((l, i) => {
    const y = 90 + i * 24,
      x = W - 260;
    svg.line(x - 12, y, x + 12, y, { stroke: l.ink, 'stroke-width': l.width, 'stroke-dasharray': l.dash });
    svg.text(x + 20, y + 4, l.label, { 'font-size': THEME.smallSize });
  });
  svg.end();
  return svg.toString();
}
