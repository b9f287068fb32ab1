/**
 * The scene figure: the scene seen from above (x, y) and, for 3-D scenes, from the side (x, z),
 * with walls, blockers, scatterers, the arrays with their boresight, the receiver's track and the
 * traced paths (transmitter, interaction points, receiver) shaded by power, strongest darkest.
 */
import { rotationFromOrientation, applyRotation, type Orientation, type Scene, type Vec3 } from '@pathweave/geometry';
import { Panel, colourBar, shade } from './axes.js';
import { LabelPlacer, SvgDocument, THEME, escapeXml, fmt } from './svg.js';

/**
 * A terminal in the figure.
 * @example const tx: FigureTerminal = { position: [0, 0, 6], orientation: { yawDeg: 30 }, label: 'Tx' }; // boresight arrow at azimuth 30 deg
 */
export interface FigureTerminal {
  position: Readonly<Vec3>;
  orientation?: Orientation | undefined;
  /** Shown beside the marker ("Tx", "Rx 0"). */
  label: string;
  /** Positions over the run (drawn as a dashed track), optional. */
  track?: readonly Readonly<Vec3>[];
}

/**
 * A path in the figure: its polyline from the transmitter through its interactions to the receiver.
 * @example const p: FigurePath = { id: 'R:walls[0]', kind: 'reflection', powerDb: -95.6, interactions: [{ point: [16, 14, 3] }] }; // drawn Tx -> (16, 14, 3) -> Rx
 */
export interface FigurePath {
  id: string;
  kind: string;
  powerDb: number;
  interactions?: readonly { point: readonly number[] }[] | undefined;
}

/**
 * Everything the scene figure draws.
 * @example sceneFigure({ title: 't', scene: { walls: [] }, transmitter: { position: [0, 0, 2], label: 'Tx' }, receivers: [{ position: [10, 0, 1.5], label: 'Rx' }], paths: [] }).includes('from the side') // true
 */
export interface SceneFigureInput {
  title: string;
  scene: Scene;
  transmitter: FigureTerminal;
  /** The receiver the paths end at comes first. */
  receivers: readonly FigureTerminal[];
  paths: readonly FigurePath[];
  /** Default: both views for a 3-D scene, the top view for a 2-D one. */
  views?: readonly ('top' | 'side')[];
}

type Axis = 0 | 1 | 2;

const point3 = (p: readonly number[]): Vec3 => [p[0] ?? 0, p[1] ?? 0, p[2] ?? 0];

/** Boresight (local +x) of an orientation in the global frame. */
function boresight(o: Orientation | undefined): Vec3 {
  return applyRotation([0, 0, 0], rotationFromOrientation(o ?? {}), [1, 0, 0]);
}

/** Points of interest: terminals, tracks and interaction points (the figure is cropped to them). */
function extent(input: SceneFigureInput, a: Axis, b: Axis): [number, number, number, number] {
  const pts: Vec3[] = [point3(input.transmitter.position)];
  for (const r of input.receivers) {
    pts.push(point3(r.position));
    for (const t of r.track ?? []) pts.push(point3(t));
  }
  for (const p of input.paths) for (const i of p.interactions ?? []) pts.push(point3(i.point));
  for (const s of input.scene.scatterers ?? []) pts.push(point3(s.position));
  for (const bl of input.scene.blockers ?? []) pts.push(...(bl.shape === 'box' ? [point3(bl.min), point3(bl.max)] : [point3(bl.base)]));
  let x0 = Infinity,
    x1 = -Infinity,
    y0 = Infinity,
    y1 = -Infinity;
  for (const p of pts) {
    x0 = Math.min(x0, p[a]);
    x1 = Math.max(x1, p[a]);
    y0 = Math.min(y0, p[b]);
    y1 = Math.max(y1, p[b]);
  }
  const pad = 0.08 * Math.max(x1 - x0, y1 - y0, 1);
  return [x0 - pad, x1 + pad, y0 - pad, y1 + pad];
}

function drawView(svg: SvgDocument, input: SceneFigureInput, panel: Panel, a: Axis, b: Axis, id: string, lo: number, hi: number): void {
  const is2D = (input.scene.walls ?? []).every((w) => w.vertices.every((v) => v.length === 2));
  panel.drawAxes(svg);
  const clip = panel.clip(svg, `clip-${id}`);
  svg.group({ 'clip-path': clip, class: `view view-${id}` });
  const P = (p: readonly number[]): [number, number] => {
    const q = point3(p);
    return [panel.px(q[a]), panel.py(q[b])];
  };
  // Walls: surfaces facing the viewer are shaded areas, edge-on ones thick lines.
  const wallLabels: { x: number; y: number; text: string }[] = [];
  (input.scene.walls ?? []).forEach((w, i) => {
    const vs = w.vertices;
    const pts = vs.flatMap((v) => P(v));
    const c = b === 2 ? 1 : 2; // the axis the view looks along
    let facing = false;
    if (vs.length >= 3 && !is2D) {
      const p0 = point3(vs[0]!),
        p1 = point3(vs[1]!),
        p2 = point3(vs[2]!);
      const e1 = [p1[0] - p0[0], p1[1] - p0[1], p1[2] - p0[2]],
        e2 = [p2[0] - p0[0], p2[1] - p0[1], p2[2] - p0[2]];
      const n = [e1[1]! * e2[2]! - e1[2]! * e2[1]!, e1[2]! * e2[0]! - e1[0]! * e2[2]!, e1[0]! * e2[1]! - e1[1]! * e2[0]!];
      const len = Math.hypot(n[0]!, n[1]!, n[2]!) || 1;
      facing = Math.abs(n[c]! / len) > 0.5;
    }
    const material = typeof w.material === 'string' ? w.material : w.material !== undefined ? 'custom' : 'concrete';
    if (facing)
      svg.polygon(pts, {
        fill: THEME.wallFill,
        'fill-opacity': 0.6,
        stroke: THEME.wall,
        'stroke-width': 0.8,
        'stroke-dasharray': '4 3',
        class: 'wall',
        'data-wall': `walls[${i}]`,
      });
    else if (pts.length === 4)
      svg.polyline(pts, { stroke: THEME.wall, 'stroke-width': 4, 'stroke-linecap': 'round', class: 'wall', 'data-wall': `walls[${i}]` });
    else svg.polygon(pts, { fill: 'none', stroke: THEME.wall, 'stroke-width': 4, 'stroke-linejoin': 'round', class: 'wall', 'data-wall': `walls[${i}]` });
    if (!facing) {
      const xs = pts.filter((_, k) => k % 2 === 0),
        ys = pts.filter((_, k) => k % 2 === 1);
      const cx = (Math.min(...xs) + Math.max(...xs)) / 2,
        cy = (Math.min(...ys) + Math.max(...ys)) / 2;
      wallLabels.push({ x: cx + 6, y: cy - 6, text: `walls[${i}] ${material}` });
    }
  });
  for (const bl of input.scene.blockers ?? []) {
    if (bl.shape === 'box') {
      const [xa, ya] = P(bl.min),
        [xb, yb] = P(bl.max);
      svg.rect(Math.min(xa, xb), Math.min(ya, yb), Math.abs(xb - xa), Math.abs(yb - ya), { fill: THEME.blockerFill, stroke: THEME.blocker, class: 'blocker' });
    } else {
      const base = point3(bl.base);
      const r = bl.radiusM;
      if (b === 2) {
        const top = [...base] as Vec3;
        top[2] += bl.heightM;
        const [xa, ya] = P([base[0] - r, base[1], base[2]]),
          [xb, yb] = P([base[0] + r, base[1], top[2]]);
        svg.rect(Math.min(xa, xb), Math.min(ya, yb), Math.abs(xb - xa), Math.abs(yb - ya), {
          fill: THEME.blockerFill,
          stroke: THEME.blocker,
          class: 'blocker',
        });
      } else {
        const [cx, cy] = P(base);
        svg.circle(cx, cy, Math.max(2, Math.abs(panel.px(base[0] + r) - panel.px(base[0]))), {
          fill: THEME.blockerFill,
          stroke: THEME.blocker,
          class: 'blocker',
        });
      }
    }
  }
  for (const s of input.scene.scatterers ?? []) {
    const [cx, cy] = P(s.position);
    svg.polygon([cx, cy - 5, cx + 5, cy, cx, cy + 5, cx - 5, cy], { fill: '#ffffff', stroke: THEME.ink, class: 'scatterer' });
  }
  // Paths, weakest first so the strongest lie on top.
  const order = [...input.paths].filter((p) => Number.isFinite(p.powerDb)).sort((p, q) => p.powerDb - q.powerDb);
  const rx0 = input.receivers[0]!;
  for (const p of order) {
    const pts = [P(input.transmitter.position), ...(p.interactions ?? []).map((i) => P(i.point)), P(rx0.position)].flat();
    svg.raw(
      `<polyline class="path" data-id="${escapeXml(p.id)}" points="${pointText(pts)}" fill="none" stroke="${shade(p.powerDb, lo, hi)}" stroke-width="1.8" stroke-linejoin="round">` +
        `<title>${escapeXml(`${p.id}: ${p.powerDb.toFixed(1)} dB`)}</title></polyline>`,
    );
  }
  // Tracks, then terminals with their boresight.
  for (const r of input.receivers) {
    if (r.track !== undefined && r.track.length > 1)
      svg.polyline(
        r.track.flatMap((t) => P(t)),
        { stroke: THEME.ink, 'stroke-width': 1.2, 'stroke-dasharray': '2 3', class: 'track' },
      );
  }
  const span = Math.max(panel.x1 - panel.x0, panel.y1 - panel.y0);
  const terminal = (t: FigureTerminal, kind: 'transmitter' | 'receiver'): void => {
    const [cx, cy] = P(t.position);
    const d = boresight(t.orientation);
    const tip = point3(t.position);
    tip[0] += d[0] * span * 0.1;
    tip[1] += d[1] * span * 0.1;
    tip[2] += d[2] * span * 0.1;
    const [tx, ty] = P(tip);
    const ang = Math.atan2(ty - cy, tx - cx);
    const lenPx = Math.hypot(tx - cx, ty - cy);
    svg.group({ class: `terminal ${kind}` });
    if (lenPx > 3) {
      svg.line(cx, cy, tx, ty, { stroke: THEME.ink, 'stroke-width': 1.6, class: 'boresight' });
      const h = 7;
      svg.polygon([tx, ty, tx - h * Math.cos(ang - 0.4), ty - h * Math.sin(ang - 0.4), tx - h * Math.cos(ang + 0.4), ty - h * Math.sin(ang + 0.4)], {
        fill: THEME.ink,
        class: 'boresight-head',
      });
    }
    if (kind === 'transmitter')
      svg.polygon([cx, cy - 7, cx + 6.5, cy + 5, cx - 6.5, cy + 5], { fill: THEME.transmitter, stroke: '#ffffff', 'stroke-width': 1 });
    else svg.circle(cx, cy, 5.5, { fill: '#ffffff', stroke: THEME.receiver, 'stroke-width': 2 });
    svg.text(cx + 9, cy + 15, t.label, { 'font-size': THEME.smallSize, 'font-weight': 'bold', class: 'terminal-label' });
    svg.end();
  };
  terminal(input.transmitter, 'transmitter');
  for (const r of input.receivers) terminal(r, 'receiver');
  svg.end();
  // Wall labels outside the clip, kept inside the panel and apart from each other.
  const placer = new LabelPlacer(panel.left, panel.left + panel.width);
  for (const l of wallLabels) {
    const x = Math.min(Math.max(l.x, panel.left + 4), panel.left + panel.width - 4),
      y = Math.min(Math.max(l.y, panel.top + 14), panel.top + panel.height - 4);
    const at = placer.place(x, y, l.text, THEME.smallSize - 1);
    svg.text(at.x, at.y, l.text, { 'font-size': THEME.smallSize - 1, fill: THEME.wall, 'text-anchor': at.anchor, class: 'wall-label' });
  }
  panel.frame(svg);
}

function pointText(pts: readonly number[]): string {
  const out: string[] = [];
  for (let i = 0; i < pts.length; i += 2) out.push(`${fmt(pts[i]!)},${fmt(pts[i + 1]!)}`);
  return out.join(' ');
}

/**
 * The scene figure as SVG text: one `<polyline class="path">` per path with a finite power.
 * @example
 * const svg = sceneFigure({ title: 'free space', scene: { walls: [] }, transmitter: { position: [0, 0, 2], label: 'Tx' },
 *   receivers: [{ position: [10, 0, 1.5], label: 'Rx' }], paths: [{ id: 'los', kind: 'los', powerDb: -81.4 }] });
 * svg.match(/class="path"/g).length // 2: the path in the top and the side view (a 3-D scene)
 */
export function sceneFigure(input: SceneFigureInput): string {
  if (input.receivers.length === 0) throw new RangeError('sceneFigure(): needs at least one receiver, got none');
  const is2D = (input.scene.walls ?? []).length > 0 && (input.scene.walls ?? []).every((w) => w.vertices.every((v) => v.length === 2));
  const views = input.views ?? (is2D ? ['top'] : ['top', 'side']);
  for (const v of views) if (v !== 'top' && v !== 'side') throw new RangeError(`sceneFigure(): views must be "top" or "side", got ${JSON.stringify(v)}`);
  if (is2D && views.includes('side')) throw new RangeError('sceneFigure(): a 2-D scene has no side view (its walls are of unbounded height)');
  const finite = input.paths.map((p) => p.powerDb).filter(Number.isFinite);
  const hi = finite.length > 0 ? Math.max(...finite) : 0;
  const lo = finite.length > 1 ? Math.min(...finite) : hi - 10;
  const panelH = 380;
  const widths = views.map((v) => (v === 'top' ? 520 : 420));
  const W = 80 + widths.reduce((s, w) => s + w + 90, 0) + 70;
  const H = 60 + panelH + 110;
  const svg = new SvgDocument(W, H, input.title);
  svg.text(20, 26, input.title, { 'font-size': THEME.titleSize + 1, 'font-weight': 'bold', class: 'figure-title' });
  let x = 80;
  views.forEach((v, i) => {
    const [a, b]: [Axis, Axis] = v === 'top' ? [0, 1] : [0, 2];
    const [x0, x1, y0, y1] = extent(input, a, b);
    const panel = new Panel({
      x,
      y: 60,
      width: widths[i]!,
      height: panelH,
      xRange: [x0, x1],
      yRange: v === 'side' ? [Math.min(y0, 0), y1] : [y0, y1],
      xLabel: 'x (m)',
      yLabel: v === 'top' ? 'y (m)' : 'z (m)',
      title: v === 'top' ? 'from above' : 'from the side (looking along +y)',
      equalAspect: true,
    });
    drawView(svg, input, panel, a, b, v, lo, hi);
    x += widths[i]! + 90;
  });
  colourBar(svg, x - 40, 60, panelH, lo, hi, 'path power (dB)');
  // Legend under the panels.
  const ly = 60 + panelH + 62;
  svg.group({ class: 'legend' });
  svg.polygon([90, ly - 7, 96.5, ly + 5, 83.5, ly + 5], { fill: THEME.transmitter });
  svg.text(104, ly + 4, 'transmitter', { 'font-size': THEME.smallSize });
  svg.circle(200, ly, 5.5, { fill: '#ffffff', stroke: THEME.receiver, 'stroke-width': 2 });
  svg.text(210, ly + 4, 'receiver', { 'font-size': THEME.smallSize });
  svg.line(280, ly, 310, ly, { stroke: THEME.ink, 'stroke-width': 1.6 });
  svg.text(316, ly + 4, 'boresight (local +x)', { 'font-size': THEME.smallSize });
  svg.line(440, ly, 470, ly, { stroke: THEME.ink, 'stroke-width': 1.2, 'stroke-dasharray': '2 3' });
  svg.text(476, ly + 4, 'receiver track', { 'font-size': THEME.smallSize });
  svg.line(570, ly, 600, ly, { stroke: THEME.wall, 'stroke-width': 4 });
  svg.text(606, ly + 4, 'wall (edge-on)', { 'font-size': THEME.smallSize });
  svg.rect(700, ly - 6, 22, 12, { fill: THEME.blockerFill, stroke: THEME.blocker });
  svg.text(728, ly + 4, 'blocker', { 'font-size': THEME.smallSize });
  svg.text(800, ly + 4, `${finite.length} path${finite.length === 1 ? '' : 's'}, darker = stronger`, { 'font-size': THEME.smallSize });
  svg.end();
  return svg.toString();
}
