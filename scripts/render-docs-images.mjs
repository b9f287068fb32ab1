#!/usr/bin/env node
/**
 * Renders the pictures of the docs into docs/images/ (SVG from the library, PNG through resvg):
 * the demo scenarios' scenes, profiles and |H|, the coverage map of the crossroads demo, the gain correlation of real runs against J0,
 * and the frames-and-angles figure of docs/conventions.md. Build first: `npx tsc -b`.
 *
 *   node scripts/render-docs-images.mjs            # writes docs/images/*.svg and *.png
 *   node scripts/render-docs-images.mjs --out DIR  # elsewhere (the tests use a temporary folder)
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { Resvg } from '@resvg/resvg-js';

const ROOT = fileURLToPath(new URL('..', import.meta.url));
const io = await import(join(ROOT, 'packages/io/dist/index.js'));
const plot = await import(join(ROOT, 'packages/io/dist/plot/index.js'));

const outArg = process.argv.indexOf('--out');
const OUT = outArg >= 0 ? process.argv[outArg + 1] : join(ROOT, 'docs/images');
mkdirSync(OUT, { recursive: true });

/** Write name.svg and name.png (rendered at 1:1 with the system's DejaVu Sans). */
async function emit(name, svg) {
  await io.writeFileAtomic(join(OUT, `${name}.svg`), svg);
  const png = new Resvg(svg, { fitTo: { mode: 'original' }, font: { loadSystemFonts: true, defaultFontFamily: 'DejaVu Sans' } }).render().asPng();
  await io.writeFileAtomic(join(OUT, `${name}.png`), png);
  console.log(`wrote ${join(OUT, name)}.svg and .png`);
}

// Demo scenarios.
const figures = {
  'street-corner-28ghz': ['scene', 'delay-profile', 'angles', 'time-frequency'],
  'factory-floor-60ghz': ['scene', 'delay-profile'],
  'highway-39ghz': ['scene', 'delay-profile'],
  'corner-walk-28ghz': ['scene', 'power'],
};
for (const [name, kinds] of Object.entries(figures)) {
  const source = await plot.openPlotSource(join(ROOT, 'examples', `${name}.json`));
  source.file = `examples/${name}.json`;
  for (const kind of kinds) await emit(`${name}-${kind}`, await plot.plotSource(source, kind));
}

// Coverage map of the crossroads demo (docs/coverage.md): the grid of its coverage section, traced
// point by point as `pathweave coverage` does.
{
  const { scenario } = await io.loadScenario(join(ROOT, 'examples', 'coverage', 'crossroads-28ghz.json'));
  const grid = io.coverageGridOf(scenario.coverage);
  const maps = io.computeCoverage(scenario, grid, [0, grid.rows]);
  await emit('crossroads-28ghz-coverage', plot.coverageSvg({ maps, grid, scenario }));
}

// The corner walk once around the corner: the paths diffracted at the block's corner and reflected.
{
  const source = await plot.openPlotSource(join(ROOT, 'examples', 'corner-walk-28ghz.json'));
  source.file = 'examples/corner-walk-28ghz.json';
  await emit('corner-walk-28ghz-scene-around-corner', await plot.plotSource(source, 'scene', { atS: 17 }));
}

// Gain correlation of real runs: 16 explicit paths of equal power, one moving end at 3 m/s,
// 28 GHz, 0.125 ms subframes (fD T = 0.035), with three fading models.
const correlationScenario = (model) => ({
  name: `correlation-${model}`,
  carrierHz: 28e9,
  timing: { subframeS: 0.000125, subframes: 4000 },
  band: { subcarriers: 1, spacingHz: 120e3 },
  transmitter: { position: [0, 0, 0], array: { kind: 'ula', elements: 1 } },
  receiver: { position: [100, 0, 0], array: { kind: 'ula', elements: 1 } },
  paths: Array.from({ length: 16 }, (_, l) => ({ id: `p${l}`, aodDeg: [0, 0], aoaDeg: [180, 0], delayS: 1e-7 * (1 + l), powerDb: -80 })),
  fading: { model, speedMps: 3 },
  seed: 2026,
});
const lags = 64;
const runs = [];
for (const model of ['gauss-markov', 'ar', 'sum-of-sinusoids']) {
  const { scenario } = io.parseScenarioText(JSON.stringify(correlationScenario(model)), model);
  runs.push({ model, ...(await plot.correlationOf(plot.scenarioPlotSource(scenario, model), { lags })) });
}
const gm = runs[0];
const byLabel = (run, prefix) => run.series.find((s) => s.label.startsWith(prefix));
await emit(
  'correlation-models',
  plot.correlationFigure({
    title: 'Gain correlation of real runs against Clarke/Jakes J0',
    subtitle: '16 paths x 4000 subframes of 0.125 ms, 28 GHz, one end moving at 3 m/s (fD = 280.2 Hz), seed 2026',
    lagsS: gm.lagsS,
    series: [
      byLabel(gm, 'Clarke'),
      { ...byLabel(gm, 'AR(1)'), label: 'AR(1) alpha^k, alpha = J0(2 pi fD T)' },
      ...runs.map((r) => ({ ...r.series[0], label: `${r.model} (run)` })),
    ],
  }),
);

// Frames and angles (docs/conventions.md): the global frame, a direction u with azimuth phi and
// elevation theta, and an array frame turned by yaw and pitched down, its boresight local +x.
{
  const svg = new plot.SvgDocument(1000, 470, 'Frames and angles of pathweave');
  const ink = plot.THEME.ink;
  // Oblique projection of 3-D points: x to the lower left, y to the right, z up.
  const proj = (o, p) => [o[0] + 150 * p[1] - 75 * p[0], o[1] - 150 * p[2] + 45 * p[0]];
  const arrow = (a, b, attrs = {}) => {
    svg.line(a[0], a[1], b[0], b[1], { stroke: ink, 'stroke-width': 1.6, ...attrs });
    const ang = Math.atan2(b[1] - a[1], b[0] - a[0]);
    svg.polygon(
      [b[0], b[1], b[0] - 9 * Math.cos(ang - 0.35), b[1] - 9 * Math.sin(ang - 0.35), b[0] - 9 * Math.cos(ang + 0.35), b[1] - 9 * Math.sin(ang + 0.35)],
      { fill: attrs.stroke ?? ink },
    );
  };
  const deg = Math.PI / 180;
  const unit = (az, el) => [Math.cos(el) * Math.cos(az), Math.cos(el) * Math.sin(az), Math.sin(el)];
  svg.text(20, 28, 'Global frame and a direction u', { 'font-size': 16, 'font-weight': 'bold' });
  const O = [230, 250];
  for (const [v, name] of [
    [[1.3, 0, 0], 'x'],
    [[0, 1.3, 0], 'y'],
    [[0, 0, 1.2], 'z (up)'],
  ]) {
    const e = proj(O, v);
    arrow(O, e);
    svg.text(e[0] + 6, e[1] + 4, name, { 'font-weight': 'bold' });
  }
  const phi = 50 * deg,
    theta = 30 * deg;
  const u = unit(phi, theta),
    foot = [u[0], u[1], 0];
  arrow(O, proj(O, u), { stroke: '#6b2a70', 'stroke-width': 2.4 });
  svg.text(proj(O, u)[0] + 8, proj(O, u)[1], 'u', { 'font-weight': 'bold', fill: '#6b2a70' });
  svg.line(...proj(O, foot), ...proj(O, u), { stroke: '#888', 'stroke-dasharray': '4 3' });
  svg.line(...O, ...proj(O, foot), { stroke: '#888', 'stroke-dasharray': '4 3' });
  const arc = (from, to, r, f) => Array.from({ length: 25 }, (_, i) => proj(O, f(from + ((to - from) * i) / 24, r))).flat();
  svg.polyline(
    arc(0, phi, 0.45, (a, r) => [r * Math.cos(a), r * Math.sin(a), 0]),
    { stroke: '#b8522e', 'stroke-width': 2 },
  );
  svg.text(...proj(O, [0.55 * Math.cos(phi / 2), 0.55 * Math.sin(phi / 2), 0]), 'phi (azimuth)', { fill: '#b8522e', 'font-size': 12 });
  svg.polyline(
    arc(0, theta, 0.7, (e, r) => unit(phi, e).map((c) => c * r)),
    { stroke: '#b8522e', 'stroke-width': 2 },
  );
  const tl = proj(
    O,
    unit(phi, theta / 2).map((c) => c * 0.78),
  );
  svg.text(tl[0] + 6, tl[1], 'theta (elevation)', { fill: '#b8522e', 'font-size': 12 });
  svg.text(20, 395, 'u = [cos(theta) cos(phi), cos(theta) sin(phi), sin(theta)]', { 'font-size': 12 });
  svg.text(20, 413, 'phi from +x towards +y, in (-180, 180] degrees', { 'font-size': 12 });
  svg.text(20, 431, 'theta from the horizontal plane, up positive, in [-90, 90] degrees', { 'font-size': 12 });

  svg.text(520, 28, 'Array frame: R = Rz(yaw) Ry(pitch) Rx(roll)', { 'font-size': 16, 'font-weight': 'bold' });
  const A = [700, 210];
  const yaw = 60 * deg,
    pitch = 20 * deg;
  const R = (v) => {
    // Rz(yaw) Ry(pitch) applied to a local vector (roll 0).
    const x1 = v[0] * Math.cos(pitch) + v[2] * Math.sin(pitch),
      z1 = -v[0] * Math.sin(pitch) + v[2] * Math.cos(pitch);
    return [x1 * Math.cos(yaw) - v[1] * Math.sin(yaw), x1 * Math.sin(yaw) + v[1] * Math.cos(yaw), z1];
  };
  for (const [v, name] of [
    [[1, 0, 0], 'x'],
    [[0, 1, 0], 'y'],
    [[0, 0, 1], 'z'],
  ]) {
    const e = proj(
      A,
      v.map((c) => c * 0.9),
    );
    arrow(A, e, { stroke: '#aaaaaa', 'stroke-width': 1, 'stroke-dasharray': '3 3' });
    svg.text(e[0] + 5, e[1] + 4, name, { fill: '#888', 'font-size': 12 });
  }
  const b = R([1.25, 0, 0]);
  arrow(A, proj(A, b), { stroke: '#6b2a70', 'stroke-width': 2.4 });
  svg.text(proj(A, b)[0] + 10, proj(A, b)[1] + 4, 'boresight = local +x', { fill: '#6b2a70', 'font-size': 12, 'font-weight': 'bold' });
  const ly = R([0, 1, 0]),
    lz = R([0, 0, 1]);
  arrow(
    A,
    proj(
      A,
      ly.map((c) => c * 0.8),
    ),
  );
  svg.text(
    ...proj(
      A,
      ly.map((c) => c * 0.86),
    ),
    'local +y (ULA, UPA columns)',
    { 'font-size': 12 },
  );
  arrow(
    A,
    proj(
      A,
      lz.map((c) => c * 0.8),
    ),
  );
  svg.text(
    proj(
      A,
      lz.map((c) => c * 0.86),
    )[0] + 6,
    proj(
      A,
      lz.map((c) => c * 0.86),
    )[1],
    'local +z (UPA rows)',
    { 'font-size': 12 },
  );
  // A 2 x 4 UPA in the local y-z plane: element n = row * columns + column, row 0 lowest.
  for (let row = 0; row < 2; row++)
    for (let col = 0; col < 4; col++) {
      const p = proj(A, R([0, (col - 1.5) * 0.12, (row - 0.5) * 0.12]));
      svg.rect(p[0] - 4, p[1] - 4, 8, 8, { fill: '#ffffff', stroke: ink });
      svg.text(p[0] - 3, p[1] + 3.5, String(row * 4 + col), { 'font-size': 7 });
    }
  svg.text(520, 377, 'example: yaw 60 deg, pitch 20 deg, roll 0:', { 'font-size': 12 });
  svg.text(520, 395, 'the boresight points 20 deg below the horizontal', { 'font-size': 12 });
  svg.text(520, 413, 'UPA element n = row x columns + column, row 0 lowest', { 'font-size': 12 });
  svg.text(520, 431, 'response r_n(u) = g(u_local) exp(+j k0 dot(u, p_n))', { 'font-size': 12 });
  svg.text(520, 449, 'channel H = sum rho exp(-j 2 pi f tau) r_rx(u_arr) r_tx(u_dep)^T', { 'font-size': 12 });
  await emit('frames-and-angles', svg.toString());
}
