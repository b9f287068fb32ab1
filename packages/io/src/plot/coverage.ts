/**
 * The coverage map figure: path gain over the grid as a raster of cells (one per grid point,
 * `<rect class="cell">` runs of equal colour level), the scene's walls and blockers projected on
 * the grid's plane (seen from above for a horizontal grid: the footprint), the transmitter, a
 * colour bar in dB, and points without a path in light grey. Plot coordinates are the grid's own:
 * (dot(p, u), dot(p, v)), so a horizontal grid with the default axes is drawn in x and y.
 */
import type { Vec3 } from '@pathweave/geometry';
import { readCoverage } from '../dataset/coverage-merge.js';
import type { CoverageGrid, CoverageMaps } from '../dataset/coverage.js';
import { writeFileAtomic } from '../formats/atomic.js';
import type { Scenario } from '../scenario/schema.js';
import { colourBar, Panel, rampColour, SHADE_LIGHTEST } from './axes.js';
import { SvgDocument, THEME } from './svg.js';

/** Colour levels of the raster. */
const LEVELS = 48;
/** The fill of points without a path (inside a blocker, or nothing reaches them). */
const NO_PATH = '#d9d9d9';

/**
 * What the coverage figure draws.
 * @example const input: CoverageFigureInput = { maps: emptyCoverageMaps([0, 2], 3), grid: coverageGridOf({ origin: [0, 0, 1.5], columns: 3, rows: 2, stepM: 1 }), scenario };
 */
export interface CoverageFigureInput {
  maps: CoverageMaps;
  grid: CoverageGrid;
  /** For the walls, blockers and the transmitter (scene.imports are not drawn). */
  scenario: Pick<Scenario, 'transmitter' | 'scene' | 'name'>;
  /** Colours span this many dB below the strongest point; default 80. */
  dynamicRangeDb?: number;
}

const dot = (p: readonly number[], a: Vec3): number => p[0]! * a[0] + p[1]! * a[1] + (p[2] ?? 0) * a[2];

/**
 * The coverage map as SVG text (module comment).
 * @example
 * const { paths, ...traced } = scenario; // transmitter at [0, 0, 10], 28 GHz
 * const grid = coverageGridOf({ origin: [5, -5, 10], columns: 11, rows: 11, stepM: 1 });
 * const svg = coverageSvg({ maps: computeCoverage({ ...traced, scene: {} }, grid, [0, 11]), grid, scenario: traced });
 * [svg.includes('path gain (dB)'), svg.includes('class="cell"')] // [true, true]
 */
export function coverageSvg(input: CoverageFigureInput): string {
  const { maps, grid } = input;
  const range = input.dynamicRangeDb ?? 80;
  if (!(range > 0)) throw new RangeError(`coverageSvg(): dynamicRangeDb must be > 0, got ${range}`);
  const rows = maps.rowRange[1] - maps.rowRange[0],
    cols = maps.columns;
  let max = -Infinity,
    min = Infinity;
  for (let i = 0; i < maps.pathGainDb.length; i++) {
    const g = maps.pathGainDb[i]!;
    if (maps.valid[i] === 1 && Number.isFinite(g)) {
      max = Math.max(max, g);
      min = Math.min(min, g);
    }
  }
  const hi = Number.isFinite(max) ? Math.ceil(max) : 0;
  const lo = Number.isFinite(min) ? Math.max(Math.floor(min), hi - range) : hi - range;
  const span = Math.max(hi - lo, 1);
  // Extent: the grid's cells, the transmitter and the walls, in the grid's own coordinates.
  const a0 = dot(grid.origin, grid.u),
    b0 = dot(grid.origin, grid.v);
  const cell = (r: number, c: number): [number, number] => [a0 + c * grid.uStepM, b0 + (maps.rowRange[0] + r) * grid.vStepM];
  const [xa, ya] = cell(0, 0),
    [xb, yb] = cell(rows - 1, cols - 1);
  const xs = [xa - grid.uStepM / 2, xb + grid.uStepM / 2],
    ys = [ya - grid.vStepM / 2, yb + grid.vStepM / 2];
  const tx = input.scenario.transmitter.position;
  xs.push(dot(tx, grid.u));
  ys.push(dot(tx, grid.v));
  const walls = (input.scenario.scene?.walls ?? []).map((w) => w.vertices.map((v) => [dot(v, grid.u), dot(v, grid.v)] as [number, number]));
  const extentX = [Math.min(...xs), Math.max(...xs)],
    extentY = [Math.min(...ys), Math.max(...ys)];
  const W = 820,
    H = 640;
  const name = input.scenario.name ?? 'coverage';
  const title = `${name}: path gain`;
  const svg = new SvgDocument(W, H, title);
  svg.text(20, 26, title, { 'font-size': THEME.titleSize + 1, 'font-weight': 'bold', class: 'figure-title' });
  svg.text(20, 46, `${rows} x ${cols} points, ${grid.uStepM} m x ${grid.vStepM} m; isotropic elements, sum of the path powers`, {
    'font-size': THEME.smallSize,
    class: 'subtitle',
  });
  const horizontal = grid.u[0] === 1 && grid.v[1] === 1;
  const panel = new Panel({
    x: 90,
    y: 70,
    width: W - 240,
    height: H - 170,
    xRange: [extentX[0]! - 1, extentX[1]! + 1],
    yRange: [extentY[0]! - 1, extentY[1]! + 1],
    xLabel: horizontal ? 'x (m)' : 'along u (m)',
    yLabel: horizontal ? 'y (m)' : 'along v (m)',
    equalAspect: true,
    grid: false,
  });
  panel.drawAxes(svg);
  const clip = panel.clip(svg, 'coverage-clip');
  svg.group({ class: 'raster', 'shape-rendering': 'crispEdges', 'clip-path': clip });
  const level = (i: number): number => {
    if (maps.valid[i] !== 1) return -1;
    return Math.max(0, Math.min(LEVELS - 1, Math.floor(((maps.pathGainDb[i]! - lo) / span) * LEVELS)));
  };
  const cw = Math.abs(panel.px(grid.uStepM) - panel.px(0)),
    ch = Math.abs(panel.py(grid.vStepM) - panel.py(0));
  for (let r = 0; r < rows; r++) {
    let c = 0;
    while (c < cols) {
      const lv = level(r * cols + c);
      let e = c + 1;
      while (e < cols && level(r * cols + e) === lv) e++;
      const [x, y] = cell(r, c);
      const fill = lv < 0 ? NO_PATH : rampColour(SHADE_LIGHTEST * (1 - (lv + 0.5) / LEVELS));
      svg.rect(panel.px(x - grid.uStepM / 2), panel.py(y + grid.vStepM / 2), (e - c) * cw + 0.3, ch + 0.3, { fill, class: lv < 0 ? 'cell no-path' : 'cell' });
      c = e;
    }
  }
  svg.end();
  svg.group({ class: 'scene', 'clip-path': clip });
  for (const [i, w] of walls.entries()) {
    const pts = w.flatMap(([x, y]) => [panel.px(x), panel.py(y)]);
    if (w.length === 2)
      svg.polyline(pts, { stroke: THEME.wall, 'stroke-width': 3, 'stroke-linecap': 'round', fill: 'none', class: 'wall', 'data-wall': `walls[${i}]` });
    else svg.polygon(pts, { fill: 'none', stroke: THEME.wall, 'stroke-width': 2, 'stroke-linejoin': 'round', class: 'wall', 'data-wall': `walls[${i}]` });
  }
  for (const b of input.scenario.scene?.blockers ?? []) {
    if (b.shape === 'box') {
      const corners: number[][] = [];
      for (const x of [b.min[0], b.max[0]]) for (const y of [b.min[1], b.max[1]]) for (const z of [b.min[2] ?? 0, b.max[2] ?? 0]) corners.push([x, y, z]);
      const pa = corners.map((p) => dot(p, grid.u)),
        pb = corners.map((p) => dot(p, grid.v));
      const x0 = Math.min(...pa),
        x1 = Math.max(...pa),
        y0 = Math.min(...pb),
        y1 = Math.max(...pb);
      svg.rect(panel.px(x0), panel.py(y1), panel.px(x1) - panel.px(x0), panel.py(y0) - panel.py(y1), {
        fill: THEME.blockerFill,
        stroke: THEME.blocker,
        class: 'blocker',
      });
    } else {
      const cx = dot(b.base, grid.u),
        cy = dot(b.base, grid.v);
      svg.circle(panel.px(cx), panel.py(cy), Math.abs(panel.px(b.radiusM) - panel.px(0)), { fill: THEME.blockerFill, stroke: THEME.blocker, class: 'blocker' });
    }
  }
  const px = panel.px(dot(tx, grid.u)),
    py = panel.py(dot(tx, grid.v));
  svg.polygon([px, py - 8, px + 7, py + 6, px - 7, py + 6], { fill: THEME.transmitter, stroke: '#ffffff', 'stroke-width': 1.2, class: 'transmitter' });
  svg.end();
  panel.frame(svg);
  colourBar(svg, W - 130, 70, H - 170, lo, hi, 'path gain (dB)');
  const ly = H - 50;
  svg.polygon([90, ly - 7, 96.5, ly + 5, 83.5, ly + 5], { fill: THEME.transmitter });
  svg.text(104, ly + 4, 'transmitter', { 'font-size': THEME.smallSize });
  svg.line(190, ly, 214, ly, { stroke: THEME.wall, 'stroke-width': 3 });
  svg.text(220, ly + 4, 'walls', { 'font-size': THEME.smallSize });
  svg.rect(270, ly - 6, 12, 12, { fill: NO_PATH, stroke: THEME.frame });
  svg.text(288, ly + 4, `no path (inside a blocker, or nothing reaches it); below ${lo} dB palest`, { 'font-size': THEME.smallSize, class: 'note' });
  return svg.toString();
}

/**
 * Draw the coverage map of a file `pathweave coverage` wrote (any format) to `out`, atomically.
 * @example
 * const { paths, ...traced } = scenario;
 * const grid = coverageGridOf({ origin: [5, -5, 10], columns: 4, rows: 4, stepM: 1 });
 * const facts = { scenarioText: JSON.stringify({ ...traced, scene: {} }), grid, rowsTotal: 4 };
 * await writeCoverage('map.npz', 'npz', computeCoverage({ ...traced, scene: {} }, grid, [0, 4]), facts);
 * await plotCoverageFile('map.npz', 'map.svg');
 * readFileSync('map.svg', 'utf8').includes('path gain (dB)') // true
 */
export async function plotCoverageFile(file: string, out: string): Promise<void> {
  const { maps, facts } = await readCoverage(file);
  const scenario = JSON.parse(facts.scenarioText) as Scenario;
  await writeFileAtomic(out, coverageSvg({ maps, grid: facts.grid, scenario }));
}
