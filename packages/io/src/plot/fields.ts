/**
 * Figures of generated data: |H| in dB over subcarriers (or |h| over tap delays) and time, as a
 * raster of cells, and the correlation of the gains against lag beside the Clarke/Jakes J0 and
 * other references.
 *
 * Layout of `magnitudeDb`: row-major [rows = subframes, columns = subcarriers or taps].
 */
import { Panel, colourBar, rampColour, SHADE_LIGHTEST } from './axes.js';
import { SvgDocument, THEME } from './svg.js';

/**
 * Input of the time-frequency figure.
 * @example timeFrequencyFigure({ title: 't', magnitudeDb: Float64Array.of(-90, -91), timesS: Float64Array.of(0), bins: Float64Array.of(0, 1e-8), domain: 'taps' }).includes('delay (ns)') // true
 */
export interface TimeFrequencyInput {
  title: string;
  subtitle?: string;
  /** 20 log10 |H| (or |h|), row-major [times.length, bins.length]; -Infinity allowed for exact zeros. */
  magnitudeDb: Float64Array;
  /** Row times, seconds (increasing). */
  timesS: Float64Array;
  /** Column positions: subcarrier offsets in Hz (domain "frequency") or tap delays in s ("taps"). */
  bins: Float64Array;
  domain: 'frequency' | 'taps';
  /** Shown range below the maximum, dB (default 30); lower values take the palest colour. */
  dynamicRangeDb?: number;
}

/**
 * Most cells drawn along each axis: finer data are averaged in power into this many bins.
 * @example MAX_RASTER_CELLS // 200: a run of 800 subframes is drawn as 200 rows of 4 subframes each
 */
export const MAX_RASTER_CELLS = 200;

/**
 * Colour levels of the raster (equal neighbours merge into one rectangle).
 * @example RASTER_LEVELS // 48: 30 dB of range in steps of 0.625 dB
 */
export const RASTER_LEVELS = 48;

/**
 * |H| over subcarriers and time as SVG text: a raster of `<rect class="cell">` runs, time up,
 * frequency (MHz) or delay (ns) across, the colour bar in dB.
 * @example
 * const svg = timeFrequencyFigure({ title: 'flat', magnitudeDb: new Float64Array(6).fill(-90), timesS: Float64Array.of(0, 1e-3),
 *   bins: Float64Array.of(-1e5, 0, 1e5), domain: 'frequency' });
 * svg.includes('frequency offset (MHz)') // true
 */
export function timeFrequencyFigure(input: TimeFrequencyInput): string {
  const rows = input.timesS.length,
    cols = input.bins.length;
  if (rows < 1 || cols < 1) throw new RangeError(`timeFrequencyFigure(): needs at least one time and one bin, got ${rows} x ${cols}`);
  if (input.magnitudeDb.length !== rows * cols)
    throw new RangeError(`timeFrequencyFigure(): magnitudeDb must hold ${rows} x ${cols} = ${rows * cols} values, got ${input.magnitudeDb.length}`);
  const range = input.dynamicRangeDb ?? 30;
  if (!(range > 0)) throw new RangeError(`timeFrequencyFigure(): dynamicRangeDb must be > 0, got ${range}`);
  // Average power into at most MAX_RASTER_CELLS bins per axis.
  const R = Math.min(rows, MAX_RASTER_CELLS),
    C = Math.min(cols, MAX_RASTER_CELLS);
  const grid = new Float64Array(R * C);
  const counts = new Float64Array(R * C);
  for (let r = 0; r < rows; r++) {
    const gr = Math.floor((r * R) / rows);
    for (let c = 0; c < cols; c++) {
      const gc = Math.floor((c * C) / cols);
      const v = input.magnitudeDb[r * cols + c]!;
      grid[gr * C + gc]! += v === -Infinity ? 0 : 10 ** (v / 10);
      counts[gr * C + gc]! += 1;
    }
  }
  let max = -Infinity;
  for (let i = 0; i < grid.length; i++) {
    grid[i] = 10 * Math.log10(grid[i]! / counts[i]!);
    if (grid[i]! > max) max = grid[i]!;
  }
  if (!Number.isFinite(max)) throw new RangeError('timeFrequencyFigure(): every value is zero (-Infinity dB); nothing to show');
  const hi = Math.ceil(max),
    lo = hi - range;
  const W = 820,
    H = 560;
  const svg = new SvgDocument(W, H, input.title);
  svg.text(20, 26, input.title, { 'font-size': THEME.titleSize + 1, 'font-weight': 'bold', class: 'figure-title' });
  if (input.subtitle !== undefined) svg.text(20, 46, input.subtitle, { 'font-size': THEME.smallSize, class: 'subtitle' });
  const scale = input.domain === 'frequency' ? 1e-6 : 1e9;
  const bx = Array.from(input.bins, (b) => b * scale);
  const half = cols > 1 ? (bx[cols - 1]! - bx[0]!) / (cols - 1) / 2 : 0.5;
  const t = Array.from(input.timesS, (v) => v * 1e3);
  const dt = rows > 1 ? (t[rows - 1]! - t[0]!) / (rows - 1) : 1;
  const panel = new Panel({
    x: 90,
    y: 70,
    width: W - 230,
    height: H - 170,
    xRange: [bx[0]! - half, bx[cols - 1]! + half],
    yRange: [t[0]!, t[rows - 1]! + dt],
    xLabel: input.domain === 'frequency' ? 'frequency offset (MHz)' : 'delay (ns)',
    yLabel: 'time (ms)',
    exact: true,
    grid: false,
  });
  panel.drawAxes(svg);
  svg.group({ class: 'raster', 'shape-rendering': 'crispEdges' });
  const x0 = panel.left,
    y0 = panel.top;
  const cw = panel.width / C,
    ch = panel.height / R;
  const level = (db: number): number => Math.max(0, Math.min(RASTER_LEVELS - 1, Math.floor(((db - lo) / range) * RASTER_LEVELS)));
  for (let r = 0; r < R; r++) {
    let c = 0;
    while (c < C) {
      const lv = level(grid[r * C + c]!);
      let e = c + 1;
      while (e < C && level(grid[r * C + e]!) === lv) e++;
      const colour = rampColour(SHADE_LIGHTEST * (1 - (lv + 0.5) / RASTER_LEVELS));
      svg.rect(x0 + c * cw, y0 + (R - 1 - r) * ch, (e - c) * cw + 0.3, ch + 0.3, { fill: colour, class: 'cell' });
      c = e;
    }
  }
  svg.end();
  panel.frame(svg);
  colourBar(svg, W - 120, 70, H - 170, lo, hi, input.domain === 'frequency' ? '|H| (dB)' : '|h| (dB)');
  svg.text(90, H - 36, `${rows} x ${cols} values${rows > R || cols > C ? `, averaged in power to ${R} x ${C} cells` : ''}; below ${lo} dB shown palest`, {
    'font-size': THEME.smallSize,
    class: 'note',
  });
  return svg.toString();
}

/**
 * One curve of the correlation figure.
 * @example const j0: CorrelationSeries = { label: 'J0', values: [1, 0.99, 0.96], style: 'line' }; // a reference drawn as a solid line
 */
export interface CorrelationSeries {
  label: string;
  /** Correlation at lags[k]. */
  values: Float64Array | readonly number[];
  /** "line" (reference curves) or "markers" (estimates from runs). */
  style: 'line' | 'dashed' | 'markers';
}

/**
 * Correlation against lag as SVG text, lag in ms, one `<polyline class="series">` or marker group per series, with a legend.
 * @example
 * const svg = correlationFigure({ title: 'J0', lagsS: Float64Array.of(0, 1e-3, 2e-3), series: [{ label: 'J0', values: [1, 0.9, 0.7], style: 'line' }] });
 * svg.includes('lag (ms)') // true
 */
export function correlationFigure(input: {
  title: string;
  subtitle?: string;
  lagsS: Float64Array | readonly number[];
  series: readonly CorrelationSeries[];
}): string {
  const n = input.lagsS.length;
  if (n < 2) throw new RangeError(`correlationFigure(): needs at least 2 lags, got ${n}`);
  for (const s of input.series)
    if (s.values.length !== n) throw new RangeError(`correlationFigure(): series "${s.label}" has ${s.values.length} values for ${n} lags`);
  const W = 880,
    H = 500;
  const svg = new SvgDocument(W, H, input.title);
  svg.text(20, 26, input.title, { 'font-size': THEME.titleSize + 1, 'font-weight': 'bold', class: 'figure-title' });
  if (input.subtitle !== undefined) svg.text(20, 46, input.subtitle, { 'font-size': THEME.smallSize, class: 'subtitle' });
  const lags = Array.from(input.lagsS, (v) => v * 1e3);
  let yMin = -0.5;
  for (const s of input.series) for (const v of s.values) if (Number.isFinite(v)) yMin = Math.min(yMin, v);
  const panel = new Panel({
    x: 90,
    y: 70,
    width: W - 390,
    height: H - 160,
    xRange: [lags[0]!, lags[n - 1]!],
    yRange: [yMin, 1],
    xLabel: 'lag (ms)',
    yLabel: 'correlation (1)',
  });
  panel.drawAxes(svg);
  svg.line(panel.left, panel.py(0), panel.left + panel.width, panel.py(0), { stroke: THEME.frame, 'stroke-width': 0.8 });
  const inks = ['#1a1a1a', '#6b2a70', '#b8522e', '#7a7a7a'];
  const shapes = ['circle', 'square', 'triangle', 'diamond'] as const;
  let markerIndex = 0,
    lineIndex = 0;
  const legend: { label: string; draw: (x: number, y: number) => void }[] = [];
  for (const s of input.series) {
    const pts: number[] = [];
    for (let k = 0; k < n; k++) if (Number.isFinite(s.values[k]!)) pts.push(panel.px(lags[k]!), panel.py(s.values[k]!));
    if (s.style === 'markers') {
      const shape = shapes[markerIndex % shapes.length]!,
        ink = inks[(markerIndex + 1) % inks.length]!;
      markerIndex++;
      const every = Math.max(1, Math.ceil(pts.length / 2 / 60));
      const mark = (x: number, y: number): void => {
        if (shape === 'circle') svg.circle(x, y, 3.5, { fill: 'none', stroke: ink, 'stroke-width': 1.4 });
        else if (shape === 'square') svg.rect(x - 3.2, y - 3.2, 6.4, 6.4, { fill: 'none', stroke: ink, 'stroke-width': 1.4 });
        else if (shape === 'triangle') svg.polygon([x, y - 4.2, x + 4, y + 3, x - 4, y + 3], { fill: 'none', stroke: ink, 'stroke-width': 1.4 });
        else svg.polygon([x, y - 4.5, x + 4.5, y, x, y + 4.5, x - 4.5, y], { fill: 'none', stroke: ink, 'stroke-width': 1.4 });
      };
      svg.group({ class: 'series markers', 'data-label': s.label });
      for (let i = 0; i < pts.length / 2; i += every) mark(pts[2 * i]!, pts[2 * i + 1]!);
      svg.end();
      legend.push({ label: s.label, draw: mark });
    } else {
      const ink = inks[lineIndex % 2 === 0 ? 0 : 3]!;
      const dash = s.style === 'dashed' ? '7 5' : undefined;
      lineIndex++;
      svg.polyline(pts, { stroke: ink, 'stroke-width': 2, 'stroke-dasharray': dash, class: 'series line', 'data-label': s.label });
      legend.push({ label: s.label, draw: (x, y) => svg.line(x - 12, y, x + 12, y, { stroke: ink, 'stroke-width': 2, 'stroke-dasharray': dash }) });
    }
  }
  panel.frame(svg);
  svg.group({ class: 'legend' });
  legend.forEach((l, i) => {
    const y = 90 + i * 24,
      x = W - 270;
    l.draw(x, y);
    svg.text(x + 20, y + 4, l.label, { 'font-size': THEME.smallSize });
  });
  svg.end();
  return svg.toString();
}

/**
 * Normalised autocorrelation of complex gains, averaged over paths: for each path l,
 * R_l(k) = Re(mean_s g[s+k, l] conj(g[s, l])) / mean_s |g[s, l]|^2, then the mean over paths with
 * non-zero power. `gains` is interleaved complex, row-major [S, L].
 * @example gainCorrelation(Float64Array.of(1, 0, 1, 0, 1, 0), 3, 1, 2) // Float64Array [1, 1]
 */
export function gainCorrelation(gains: Float64Array, subframes: number, paths: number, lags: number): Float64Array {
  if (gains.length !== 2 * subframes * paths)
    throw new RangeError(`gainCorrelation(): gains must hold 2 x ${subframes} x ${paths} values, got ${gains.length}`);
  if (!(Number.isInteger(lags) && lags >= 1 && lags <= subframes))
    throw new RangeError(`gainCorrelation(): lags must be an integer in [1, ${subframes}], got ${lags}`);
  const out = new Float64Array(lags);
  let used = 0;
  for (let l = 0; l < paths; l++) {
    let p0 = 0;
    for (let s = 0; s < subframes; s++) {
      const re = gains[2 * (s * paths + l)]!,
        im = gains[2 * (s * paths + l) + 1]!;
      p0 += re * re + im * im;
    }
    if (!(p0 > 0) || !Number.isFinite(p0)) continue;
    p0 /= subframes;
    used++;
    for (let k = 0; k < lags; k++) {
      let acc = 0;
      for (let s = 0; s + k < subframes; s++) {
        const a = 2 * ((s + k) * paths + l),
          b = 2 * (s * paths + l);
        acc += gains[a]! * gains[b]! + gains[a + 1]! * gains[b + 1]!;
      }
      out[k]! += acc / (subframes - k) / p0;
    }
  }
  if (used === 0) throw new RangeError('gainCorrelation(): every path has zero power');
  for (let k = 0; k < lags; k++) out[k]! /= used;
  return out;
}
