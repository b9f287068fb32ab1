/**
 * Path-table figures: the power-delay profile (power against delay, one stem per path) and the
 * angular power spectra at the transmitter (departure) and the receiver (arrival): power against
 * azimuth, and where the paths sit in azimuth and elevation, shaded by power.
 */
import { Panel, colourBar, shade } from './axes.js';
import { LabelPlacer, SvgDocument, THEME, escapeXml, fmt } from './svg.js';

/**
 * A path as the profile figures need it (angles in degrees, docs/conventions.md directions).
 * @example const los: ProfilePath = { id: 'los', kind: 'los', delayS: 80.7e-9, powerDb: -89.1, aodDeg: [22.3, -10.7], aoaDeg: [-157.7, 10.7] }; // one stem at 80.7 ns
 */
export interface ProfilePath {
  id: string;
  kind: string;
  delayS: number;
  powerDb: number;
  aodDeg: readonly [number, number];
  aoaDeg: readonly [number, number];
}

/** Azimuth ticks every 90 degrees. */
const AZIMUTH_TICKS = [-180, -90, 0, 90, 180];

function marker(svg: SvgDocument, kind: string, x: number, y: number, fill: string, cls: string): void {
  if (kind === 'los') svg.circle(x, y, 5, { fill, stroke: THEME.ink, 'stroke-width': 1.2, class: cls });
  else if (kind === 'scatter') svg.rect(x - 4.5, y - 4.5, 9, 9, { fill, stroke: THEME.ink, 'stroke-width': 1.2, class: cls });
  else if (kind === 'diffuse')
    svg.circle(x, y, 2.5, { fill, stroke: THEME.ink, 'stroke-width': 0.8, class: cls }); // many weak tile paths: small dots
  else if (kind === 'diffraction') svg.polygon([x, y - 5.5, x + 5.5, y, x, y + 5.5, x - 5.5, y], { fill, stroke: THEME.ink, 'stroke-width': 1.2, class: cls });
  else svg.polygon([x, y - 5.5, x + 5, y + 4, x - 5, y + 4], { fill, stroke: THEME.ink, 'stroke-width': 1.2, class: cls });
}

function kindLegend(svg: SvgDocument, x: number, y: number, kinds: readonly string[]): void {
  svg.group({ class: 'legend' });
  let cx = x;
  for (const k of ['los', 'reflection', 'diffraction', 'scatter', 'diffuse', 'explicit']) {
    if (!kinds.includes(k)) continue;
    marker(svg, k, cx, y, '#ffffff', 'legend-marker');
    const label = k === 'los' ? 'line of sight' : k;
    svg.text(cx + 10, y + 4, label, { 'font-size': THEME.smallSize });
    cx += 24 + 7 * label.length;
  }
  svg.end();
}

function finitePaths(paths: readonly ProfilePath[], fn: string): ProfilePath[] {
  const out = paths.filter((p) => Number.isFinite(p.powerDb) && Number.isFinite(p.delayS));
  if (out.length === 0) throw new RangeError(`${fn}(): needs at least one path with a finite power, got ${paths.length} path(s) and none finite`);
  return out;
}

/**
 * The power-delay profile as SVG text: one `<line class="stem">` per path, delay in ns, power in dB.
 * @example
 * const svg = delayProfileFigure({ title: 'two paths', paths: [
 *   { id: 'los', kind: 'los', delayS: 80e-9, powerDb: -89, aodDeg: [0, 0], aoaDeg: [180, 0] },
 *   { id: 'R:walls[0]', kind: 'reflection', delayS: 120e-9, powerDb: -100, aodDeg: [30, 0], aoaDeg: [150, 0] }] });
 * svg.match(/class="stem"/g).length // 2
 */
export function delayProfileFigure(input: { title: string; paths: readonly ProfilePath[]; subtitle?: string }): string {
  const paths = finitePaths(input.paths, 'delayProfileFigure');
  const W = 820,
    H = 460;
  const svg = new SvgDocument(W, H, input.title);
  svg.text(20, 26, input.title, { 'font-size': THEME.titleSize + 1, 'font-weight': 'bold', class: 'figure-title' });
  if (input.subtitle !== undefined) svg.text(20, 46, input.subtitle, { 'font-size': THEME.smallSize, class: 'subtitle' });
  const delays = paths.map((p) => p.delayS * 1e9),
    powers = paths.map((p) => p.powerDb);
  const dMin = Math.min(...delays),
    dMax = Math.max(...delays);
  const pMax = Math.max(...powers),
    pMin = Math.min(...powers);
  const pad = Math.max(2, 0.06 * (dMax - dMin));
  const floor = Math.floor((pMin - 5) / 10) * 10;
  const panel = new Panel({
    x: 90,
    y: 70,
    width: W - 130,
    height: H - 160,
    xRange: [Math.max(0, dMin - pad), dMax + pad],
    yRange: [floor, pMax + 3],
    xLabel: 'delay (ns)',
    yLabel: 'path power (dB)',
  });
  panel.drawAxes(svg);
  const base = panel.py(panel.y0);
  const order = paths.map((p, i) => ({ p, i })).sort((a, b) => a.p.powerDb - b.p.powerDb);
  for (const { p } of order) {
    const x = panel.px(p.delayS * 1e9),
      y = panel.py(p.powerDb);
    const colour = shade(p.powerDb, pMin === pMax ? pMax - 10 : pMin, pMax);
    svg.raw(
      `<line class="stem" data-id="${escapeXml(p.id)}" x1="${fmt(x)}" y1="${fmt(base)}" x2="${fmt(x)}" y2="${fmt(y)}" stroke="${colour}" stroke-width="2"><title>${escapeXml(`${p.id}: ${(p.delayS * 1e9).toFixed(2)} ns, ${p.powerDb.toFixed(1)} dB`)}</title></line>`,
    );
    marker(svg, p.kind, x, y, colour, 'stem-head');
  }
  if (paths.length <= 16) {
    const labels = new LabelPlacer(panel.left, panel.left + panel.width);
    for (const p of [...paths].sort((a, b) => b.powerDb - a.powerDb)) {
      const at = labels.place(panel.px(p.delayS * 1e9) + 7, panel.py(p.powerDb) - 7, p.id, THEME.smallSize - 1);
      svg.text(at.x, at.y, p.id, { 'font-size': THEME.smallSize - 1, 'text-anchor': at.anchor, class: 'stem-label' });
    }
  }
  panel.frame(svg);
  kindLegend(svg, 100, H - 28, [...new Set(paths.map((p) => p.kind))]);
  const excess = (dMax - dMin).toFixed(1);
  svg.text(W - 40, H - 24, `${paths.length} paths, excess delay ${excess} ns`, { 'text-anchor': 'end', 'font-size': THEME.smallSize, class: 'note' });
  return svg.toString();
}

/**
 * The angular power spectra as SVG text: for the transmitter (departure) and the receiver
 * (arrival), power against azimuth (one `<line class="stem">` per path and end) above the paths'
 * azimuth and elevation (one marker per path and end), shaded by power.
 * @example
 * const svg = anglesFigure({ title: 'one path', paths: [{ id: 'los', kind: 'los', delayS: 80e-9, powerDb: -89, aodDeg: [22, -10], aoaDeg: [-158, 10] }] });
 * svg.match(/class="stem"/g).length // 2
 */
export function anglesFigure(input: {
  title: string;
  paths: readonly ProfilePath[];
  subtitle?: string;
  boresightAzimuthDeg?: { transmitter?: number; receiver?: number };
}): string {
  const paths = finitePaths(input.paths, 'anglesFigure');
  const W = 1100,
    H = 700;
  const svg = new SvgDocument(W, H, input.title);
  svg.text(20, 26, input.title, { 'font-size': THEME.titleSize + 1, 'font-weight': 'bold', class: 'figure-title' });
  if (input.subtitle !== undefined) svg.text(20, 46, input.subtitle, { 'font-size': THEME.smallSize, class: 'subtitle' });
  const powers = paths.map((p) => p.powerDb);
  const pMax = Math.max(...powers),
    pMin = paths.length > 1 ? Math.min(...powers) : pMax - 10;
  const floor = Math.floor((pMin - 5) / 10) * 10;
  const ends: { key: 'aodDeg' | 'aoaDeg'; title: string; who: 'transmitter' | 'receiver' }[] = [
    { key: 'aodDeg', title: 'at the transmitter (departure)', who: 'transmitter' },
    { key: 'aoaDeg', title: 'at the receiver (arrival)', who: 'receiver' },
  ];
  const pw = 380;
  ends.forEach((end, col) => {
    const x = 90 + col * (pw + 110);
    const top = new Panel({
      x,
      y: 80,
      width: pw,
      height: 220,
      xRange: [-180, 180],
      yRange: [floor, pMax + 3],
      xLabel: 'azimuth (deg)',
      yLabel: 'path power (dB)',
      title: `power ${end.title}`,
      exact: true,
      xTicks: AZIMUTH_TICKS,
    });
    top.drawAxes(svg);
    const bore = input.boresightAzimuthDeg?.[end.who];
    if (bore !== undefined)
      svg.line(top.px(bore), top.top, top.px(bore), top.top + top.height, { stroke: THEME.frame, 'stroke-dasharray': '6 4', class: 'boresight' });
    const base = top.py(top.y0);
    const order = [...paths].sort((a, b) => a.powerDb - b.powerDb);
    for (const p of order) {
      const az = p[end.key][0];
      const colour = shade(p.powerDb, pMin, pMax);
      svg.raw(
        `<line class="stem" data-id="${escapeXml(p.id)}" x1="${fmt(top.px(az))}" y1="${fmt(base)}" x2="${fmt(top.px(az))}" y2="${fmt(top.py(p.powerDb))}" stroke="${colour}" stroke-width="2"/>`,
      );
      marker(svg, p.kind, top.px(az), top.py(p.powerDb), colour, 'stem-head');
    }
    top.frame(svg);
    const map = new Panel({
      x,
      y: 390,
      width: pw,
      height: 200,
      xRange: [-180, 180],
      yRange: [-90, 90],
      xLabel: 'azimuth (deg)',
      yLabel: 'elevation (deg)',
      title: `directions ${end.title}`,
      exact: true,
      xTicks: AZIMUTH_TICKS,
      yTicks: [-90, -45, 0, 45, 90],
    });
    map.drawAxes(svg);
    if (bore !== undefined)
      svg.line(map.px(bore), map.top, map.px(bore), map.top + map.height, { stroke: THEME.frame, 'stroke-dasharray': '6 4', class: 'boresight' });
    for (const p of order) marker(svg, p.kind, map.px(p[end.key][0]), map.py(p[end.key][1]), shade(p.powerDb, pMin, pMax), 'direction');
    map.frame(svg);
  });
  colourBar(svg, W - 100, 390, 200, pMin, pMax, 'path power (dB)');
  kindLegend(svg, 100, H - 30, [...new Set(paths.map((p) => p.kind))]);
  if (input.boresightAzimuthDeg !== undefined) {
    svg.line(520, H - 30, 550, H - 30, { stroke: THEME.frame, 'stroke-dasharray': '6 4' });
    svg.text(556, H - 26, 'boresight azimuth', { 'font-size': THEME.smallSize });
  }
  svg.text(W - 40, 46, 'global frame: azimuth from +x towards +y, elevation up from the horizontal', {
    'text-anchor': 'end',
    'font-size': THEME.smallSize,
    class: 'note',
  });
  return svg.toString();
}
