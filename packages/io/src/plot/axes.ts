/**
 * Axes of the figures: "nice" tick positions, a rectangular panel that maps data to pixels and
 * draws its frame, grid, tick labels and axis labels with units, and the colour scale: a ramp
 * whose lightness rises monotonically, so a figure printed in grey keeps its order.
 */
import { SvgDocument, THEME, fmt } from './svg.js';

/**
 * Tick positions at 1, 2 or 5 times a power of ten covering [lo, hi], about `target` of them.
 * @example niceTicks(0, 97, 5) // [0, 20, 40, 60, 80, 100]
 */
export function niceTicks(lo: number, hi: number, target = 6): number[] {
  if (!(Number.isFinite(lo) && Number.isFinite(hi))) throw new RangeError(`niceTicks(): limits must be finite, got ${lo}, ${hi}`);
  if (hi < lo) [lo, hi] = [hi, lo];
  if (hi === lo) {
    const pad = lo === 0 ? 1 : Math.abs(lo) * 0.1;
    lo -= pad;
    hi += pad;
  }
  const raw = (hi - lo) / Math.max(1, target);
  const mag = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 2.5, 5, 10].map((m) => m * mag).find((s) => s >= raw * 0.999) ?? 10 * mag;
  const first = Math.floor(lo / step + 1e-9) * step;
  const out: number[] = [];
  for (let v = first; v <= hi + step * 1e-9 || out.length < 2; v += step) out.push(Math.round(v / step) * step);
  if (out[out.length - 1]! < hi - step * 1e-9) out.push(out[out.length - 1]! + step);
  return out.map((v) => Number(v.toPrecision(12)));
}

/**
 * A tick label: no more digits than the tick step needs.
 * @example tickLabel(2.5, 0.5) // "2.5"
 * @example tickLabel(7.5, 2.5) // "7.5" (not "8")
 */
export function tickLabel(value: number, step: number): string {
  // As many decimals as the step itself needs (2.5 needs one, 20 none), at most 6.
  let decimals = 0;
  while (decimals < 6 && Math.abs(Math.round(step * 10 ** decimals) - step * 10 ** decimals) > 1e-6 * 10 ** decimals * Math.abs(step)) decimals++;
  const t = value.toFixed(decimals);
  return t === '-0' || /^-0\.0*$/.test(t) ? t.slice(1) : t;
}

/**
 * Where a panel sits in the figure and what its axes show.
 * @example const spec: PanelSpec = { x: 90, y: 70, width: 600, height: 300, xRange: [0, 200], yRange: [-120, -80], xLabel: 'delay (ns)', yLabel: 'path power (dB)' }; // ticks every 50 ns and 10 dB
 */
export interface PanelSpec {
  /** Left, top, width and height of the plotting area, pixels. */
  x: number;
  y: number;
  width: number;
  height: number;
  /** Data limits; ticks extend them to round values unless `exact` is set. */
  xRange: [number, number];
  yRange: [number, number];
  /** Axis labels with their units, e.g. "delay (ns)". */
  xLabel: string;
  yLabel: string;
  title?: string;
  /** Keep the limits as given (no rounding out to ticks). */
  exact?: boolean;
  /** Same scale on both axes (maps, scenes). */
  equalAspect?: boolean;
  /** Draw the grid (default true). */
  grid?: boolean;
  /** Tick positions to use instead of the automatic ones. */
  xTicks?: readonly number[];
  yTicks?: readonly number[];
}

/**
 * A panel: data-to-pixel mapping plus its decoration.
 * @example
 * const p = new Panel({ x: 60, y: 20, width: 400, height: 300, xRange: [0, 10], yRange: [0, 1], xLabel: 't (s)', yLabel: 'r' });
 * p.px(10) // 460
 */
export class Panel {
  readonly xTicks: number[];
  readonly yTicks: number[];
  readonly x0: number;
  readonly x1: number;
  readonly y0: number;
  readonly y1: number;
  readonly left: number;
  readonly top: number;
  readonly width: number;
  readonly height: number;

  constructor(readonly spec: PanelSpec) {
    let [x0, x1] = spec.xRange;
    let [y0, y1] = spec.yRange;
    if (!(x1 > x0)) [x0, x1] = x0 === x1 ? [x0 - 1, x1 + 1] : [x1, x0];
    if (!(y1 > y0)) [y0, y1] = y0 === y1 ? [y0 - 1, y1 + 1] : [y1, y0];
    this.left = spec.x;
    this.top = spec.y;
    this.width = spec.width;
    this.height = spec.height;
    if (spec.equalAspect === true) {
      // Widen the narrower range so one metre is the same length on both axes.
      const scale = Math.max((x1 - x0) / spec.width, (y1 - y0) / spec.height);
      const cx = (x0 + x1) / 2,
        cy = (y0 + y1) / 2;
      x0 = cx - (scale * spec.width) / 2;
      x1 = cx + (scale * spec.width) / 2;
      y0 = cy - (scale * spec.height) / 2;
      y1 = cy + (scale * spec.height) / 2;
    }
    const xt = spec.xTicks !== undefined ? [...spec.xTicks] : niceTicks(x0, x1, Math.max(3, Math.round(spec.width / 90)));
    const yt = spec.yTicks !== undefined ? [...spec.yTicks] : niceTicks(y0, y1, Math.max(3, Math.round(spec.height / 60)));
    if (spec.exact === true || spec.equalAspect === true) {
      this.x0 = x0;
      this.x1 = x1;
      this.y0 = y0;
      this.y1 = y1;
      this.xTicks = xt.filter((t) => t >= x0 - 1e-9 * (x1 - x0) && t <= x1 + 1e-9 * (x1 - x0));
      this.yTicks = yt.filter((t) => t >= y0 - 1e-9 * (y1 - y0) && t <= y1 + 1e-9 * (y1 - y0));
    } else {
      this.x0 = xt[0]!;
      this.x1 = xt[xt.length - 1]!;
      this.y0 = yt[0]!;
      this.y1 = yt[yt.length - 1]!;
      this.xTicks = xt;
      this.yTicks = yt;
    }
  }

  /** Pixel column of data x. */
  px(x: number): number {
    return this.left + ((x - this.x0) / (this.x1 - this.x0)) * this.width;
  }

  /** Pixel row of data y (up on the page). */
  py(y: number): number {
    return this.top + this.height - ((y - this.y0) / (this.y1 - this.y0)) * this.height;
  }

  /** Draw grid, frame, ticks, tick labels, axis labels and the title. Call before the data (grid) and `frame()` after. */
  drawAxes(svg: SvgDocument): void {
    const { left, top, width, height } = this;
    const s = this.spec;
    svg.group({ class: 'axes' });
    if (s.grid !== false) {
      for (const t of this.xTicks) svg.line(this.px(t), top, this.px(t), top + height, { stroke: THEME.grid, 'stroke-width': 1 });
      for (const t of this.yTicks) svg.line(left, this.py(t), left + width, this.py(t), { stroke: THEME.grid, 'stroke-width': 1 });
    }
    const xStep = this.xTicks.length > 1 ? this.xTicks[1]! - this.xTicks[0]! : 1;
    const yStep = this.yTicks.length > 1 ? this.yTicks[1]! - this.yTicks[0]! : 1;
    for (const t of this.xTicks) {
      svg.line(this.px(t), top + height, this.px(t), top + height + 5, { stroke: THEME.frame });
      svg.text(this.px(t), top + height + 19, tickLabel(t, xStep), { 'text-anchor': 'middle', 'font-size': THEME.smallSize, class: 'tick' });
    }
    for (const t of this.yTicks) {
      svg.line(left - 5, this.py(t), left, this.py(t), { stroke: THEME.frame });
      svg.text(left - 8, this.py(t) + 4, tickLabel(t, yStep), { 'text-anchor': 'end', 'font-size': THEME.smallSize, class: 'tick' });
    }
    svg.text(left + width / 2, top + height + 40, s.xLabel, { 'text-anchor': 'middle', class: 'axis-label x-label' });
    const yl = left - 48,
      ym = top + height / 2;
    svg.text(yl, ym, s.yLabel, { 'text-anchor': 'middle', transform: `rotate(-90 ${fmt(yl)} ${fmt(ym)})`, class: 'axis-label y-label' });
    if (s.title !== undefined) svg.text(left, top - 10, s.title, { 'font-size': THEME.titleSize, 'font-weight': 'bold', class: 'panel-title' });
    svg.end();
  }

  /** The frame around the plotting area (drawn last, over the data). */
  frame(svg: SvgDocument): void {
    svg.rect(this.left, this.top, this.width, this.height, { fill: 'none', stroke: THEME.frame, 'stroke-width': 1 });
  }

  /** A clip path id for this panel, declared in the document. */
  clip(svg: SvgDocument, id: string): string {
    svg.raw(`<clipPath id="${id}"><rect x="${fmt(this.left)}" y="${fmt(this.top)}" width="${fmt(this.width)}" height="${fmt(this.height)}"/></clipPath>`);
    return `url(#${id})`;
  }
}

/** Control points of the colour ramp, dark (t = 0) to light (t = 1); relative luminance rises along it. */
const RAMP: readonly [number, number, number][] = [
  [0x1b, 0x10, 0x30],
  [0x4a, 0x1f, 0x6e],
  [0xa3, 0x30, 0x5e],
  [0xe2, 0x7b, 0x3a],
  [0xf6, 0xe6, 0xa6],
];

/**
 * The colour at t in [0, 1] of the ramp (dark to light), as #rrggbb. Values outside [0, 1] are refused.
 * @example rampColour(0) // "#1b1030"
 */
export function rampColour(t: number): string {
  if (!(t >= 0 && t <= 1)) throw new RangeError(`rampColour(): t must be in [0, 1], got ${t}`);
  const x = t * (RAMP.length - 1);
  const i = Math.min(RAMP.length - 2, Math.floor(x));
  const f = x - i;
  const a = RAMP[i]!,
    b = RAMP[i + 1]!;
  const hex = (k: number): string =>
    Math.round(a[k]! + f * (b[k]! - a[k]!))
      .toString(16)
      .padStart(2, '0');
  return `#${hex(0)}${hex(1)}${hex(2)}`;
}

/**
 * Relative luminance of an sRGB colour #rrggbb (ITU-R BT.709 weights on linearised components).
 * @example relativeLuminance('#ffffff') // 1
 */
export function relativeLuminance(hex: string): number {
  const m = /^#([0-9a-f]{2})([0-9a-f]{2})([0-9a-f]{2})$/i.exec(hex);
  if (m === null) throw new TypeError(`relativeLuminance(): expected #rrggbb, got ${JSON.stringify(hex)}`);
  const lin = (h: string): number => {
    const c = parseInt(h, 16) / 255;
    return c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4;
  };
  return 0.2126 * lin(m[1]!) + 0.7152 * lin(m[2]!) + 0.0722 * lin(m[3]!);
}

/**
 * A vertical colour bar: `steps` bands from `lo` (bottom, light) to `hi` (top, dark) with a labelled scale.
 * Strong values are dark so they stand out on white paper.
 * @example
 * const svg = new SvgDocument(200, 300, 'bar');
 * colourBar(svg, 20, 20, 200, -110, -90, 'path power (dB)');
 * svg.toString().match(/<rect/g).length // 34: background, 32 bands, frame
 */
export function colourBar(svg: SvgDocument, x: number, y: number, height: number, lo: number, hi: number, label: string, steps = 32): void {
  const w = 14;
  svg.group({ class: 'colour-bar' });
  for (let i = 0; i < steps; i++) {
    const t = (i + 0.5) / steps; // 0 at the bottom
    svg.rect(x, y + height - ((i + 1) * height) / steps, w, height / steps + 0.5, { fill: rampColour(SHADE_LIGHTEST * (1 - t)), stroke: 'none' });
  }
  svg.rect(x, y, w, height, { fill: 'none', stroke: THEME.frame });
  const ticks = niceTicks(lo, hi, 5).filter((t) => t >= lo - 1e-9 && t <= hi + 1e-9);
  const step = ticks.length > 1 ? ticks[1]! - ticks[0]! : 1;
  for (const t of ticks) {
    const ty = y + height - ((t - lo) / (hi - lo || 1)) * height;
    svg.line(x + w, ty, x + w + 4, ty, { stroke: THEME.frame });
    svg.text(x + w + 7, ty + 4, tickLabel(t, step), { 'font-size': THEME.smallSize, class: 'tick' });
  }
  const lx = x + w + 48,
    ly = y + height / 2;
  svg.text(lx, ly, label, { 'text-anchor': 'middle', transform: `rotate(-90 ${fmt(lx)} ${fmt(ly)})`, class: 'axis-label colour-label' });
  svg.end();
}

/**
 * Ramp position of the weakest shown value: the ramp's last, palest part is left out so weak lines stay visible on white.
 * @example rampColour(SHADE_LIGHTEST) // "#e89958", the colour of the weakest path
 */
export const SHADE_LIGHTEST = 0.82;

/**
 * The colour of a value in [lo, hi]: hi darkest, lo at ramp position SHADE_LIGHTEST; values outside are refused.
 * @example shade(-60, -100, -60) // "#1b1030"
 */
export function shade(value: number, lo: number, hi: number): string {
  if (!(value >= lo - 1e-9 * Math.abs(hi - lo) && value <= hi + 1e-9 * Math.abs(hi - lo)))
    throw new RangeError(`shade(): value must be in [${lo}, ${hi}], got ${value}`);
  const t = hi > lo ? Math.min(1, Math.max(0, (value - lo) / (hi - lo))) : 1;
  return rampColour(SHADE_LIGHTEST * (1 - t));
}
