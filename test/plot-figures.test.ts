/**
 * The figures of packages/io/src/plot and `pathweave plot`: well-formed SVG (our own XML check
 * and Python's xml.etree as an outside parser), the expected elements (one path line per traced
 * path, axis labels with units), rendering to PNG through resvg with non-blank content, a colour
 * ramp that keeps its order in grey, and the correlation estimator against numpy.
 */
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { Resvg } from '@resvg/resvg-js';
import { describe, expect, it } from 'vitest';
import { parseScenarioText } from '@pathweave/io';
import {
  correlationOf,
  gainCorrelation,
  openPlotSource,
  pathsAt,
  plotSource,
  rampColour,
  relativeLuminance,
  scenarioPlotSource,
  closePlotSource,
  PLOT_KINDS,
} from '../packages/io/src/plot/index.js';
import { hasPython, pythonJson } from './support/python.js';
import { ROOT, runCli, tempDir } from './support/run.js';

const DEMOS = ['street-corner-28ghz', 'factory-floor-60ghz', 'highway-39ghz'];

/** A small XML well-formedness check: tags nest and close, attributes are quoted, entities known. */
function xmlProblems(text: string): string[] {
  const problems: string[] = [];
  const stack: string[] = [];
  let body = text.replace(/^<\?xml[^?]*\?>\s*/, '');
  const token = /<(\/?)([A-Za-z][\w:.-]*)((?:\s+[\w:.-]+="[^"<]*")*)\s*(\/?)>|<!--[\s\S]*?-->|&(#\d+|#x[0-9a-fA-F]+|lt|gt|amp|quot|apos);|[<&]/g;
  let m: RegExpExecArray | null;
  let roots = 0;
  while ((m = token.exec(body)) !== null) {
    if (m[0] === '<' || m[0] === '&') {
      problems.push(`stray ${m[0]} at ${m.index}: ${body.slice(m.index, m.index + 40)}`);
      continue;
    }
    if (m[2] === undefined) continue; // comment or entity
    const [, close, name, , selfClose] = m;
    if (close === '/') {
      const open = stack.pop();
      if (open !== name) problems.push(`</${name}> closes <${open ?? 'nothing'}> at ${m.index}`);
    } else if (selfClose !== '/') {
      if (stack.length === 0) roots++;
      stack.push(name!);
    } else if (stack.length === 0) roots++;
  }
  if (stack.length > 0) problems.push(`unclosed: ${stack.join(' > ')}`);
  if (roots !== 1) problems.push(`expected one root element, got ${roots}`);
  body = '';
  return problems;
}

/** Render with resvg and count pixels that differ from the white background. */
function renderCount(svg: string): { width: number; height: number; inked: number; dark: number } {
  const image = new Resvg(svg, { fitTo: { mode: 'original' }, font: { loadSystemFonts: true, defaultFontFamily: 'DejaVu Sans' } }).render();
  const px = image.pixels;
  let inked = 0,
    dark = 0;
  for (let i = 0; i < px.length; i += 4) {
    const lum = 0.2126 * px[i]! + 0.7152 * px[i + 1]! + 0.0722 * px[i + 2]!;
    if (lum < 245) inked++;
    if (lum < 80) dark++;
  }
  return { width: image.width, height: image.height, inked, dark };
}

describe('figures of the demo scenarios', () => {
  for (const name of DEMOS) {
    it(`${name}: every kind is well-formed SVG with units on its axes and renders with ink`, async () => {
      const source = await openPlotSource(join(ROOT, 'examples', `${name}.json`));
      const expectedLabels: Record<string, string[]> = {
        scene: ['x (m)', 'y (m)', 'z (m)', 'path power (dB)'],
        'delay-profile': ['delay (ns)', 'path power (dB)'],
        angles: ['azimuth (deg)', 'elevation (deg)', 'path power (dB)'],
        'time-frequency': ['frequency offset (MHz)', 'time (ms)', '|H| (dB)'],
        correlation: ['lag (ms)', 'correlation (1)'],
        power: ['time (s)', 'power (dB)'],
      };
      for (const kind of PLOT_KINDS) {
        const svg = await plotSource(source, kind);
        expect(xmlProblems(svg), `${name} ${kind}`).toEqual([]);
        const labels = [...svg.matchAll(/class="axis-label[^"]*"[^>]*>([^<]*)</g)].map((m) => m[1]!.replace(/&amp;/g, '&'));
        for (const l of expectedLabels[kind]!) expect(labels, `${name} ${kind}`).toContain(l);
        const r = renderCount(svg);
        // A figure is mostly white paper; below 3 % inked pixels it would have lost its data or text.
        expect(r.inked / (r.width * r.height), `${name} ${kind} inked fraction`).toBeGreaterThan(0.03);
        expect(r.dark, `${name} ${kind} dark pixels (text, strong paths)`).toBeGreaterThan(500);
      }
    });

    it(`${name}: the scene shows one path line per path that \`pathweave paths --json\` lists`, async () => {
      const source = await openPlotSource(join(ROOT, 'examples', `${name}.json`));
      const svg = await plotSource(source, 'scene');
      const cli = runCli(['paths', join('examples', `${name}.json`), '--json']);
      expect(cli.status).toBe(0);
      const listed = JSON.parse(cli.stdout) as { id?: string; powerDb: number }[];
      const lines = [...svg.matchAll(/<polyline class="path" data-id="([^"]*)"/g)].map((m) => m[1]!.replace(/&gt;/g, '>'));
      const views = 2; // from above and from the side, each with every path
      expect(lines.length).toBe(views * listed.filter((p) => Number.isFinite(p.powerDb)).length);
      const topView = svg.slice(svg.indexOf('class="view view-top"'), svg.indexOf('class="view view-side"'));
      const topLines = [...topView.matchAll(/<polyline class="path" data-id="([^"]*)"/g)].map((m) => m[1]!.replace(/&gt;/g, '>'));
      expect(topLines.sort()).toEqual(
        pathsAt(source)
          .map((p) => p.id)
          .sort(),
      );
      // Walls, blockers and the two terminals with their boresight arrows are drawn.
      const scene = JSON.parse(readFileSync(join(ROOT, 'examples', `${name}.json`), 'utf8')) as { scene: { walls: unknown[]; blockers?: unknown[] } };
      expect(svg.match(/class="wall"/g)?.length).toBe(views * scene.scene.walls.length);
      expect(svg.match(/class="blocker"/g)?.length ?? 0).toBe(views * (scene.scene.blockers?.length ?? 0));
      expect(svg.match(/class="terminal transmitter"/g)?.length).toBe(views);
      expect(svg.match(/class="boresight"/g)?.length).toBeGreaterThanOrEqual(views);
      await closePlotSource(source);
    });
  }
});

describe('outside parsers and renderers', () => {
  it.skipIf(!hasPython())('Python xml.etree parses every figure as an svg root in the SVG namespace', async () => {
    // Python xml.etree.ElementTree, a conforming XML 1.0 parser (C)
    const dir = tempDir('pathweave-plot-');
    const source = await openPlotSource(join(ROOT, 'examples', 'street-corner-28ghz.json'));
    const files: string[] = [];
    for (const kind of PLOT_KINDS) {
      const f = join(dir, `${kind}.svg`);
      writeFileSync(f, await plotSource(source, kind));
      files.push(f);
    }
    const roots = pythonJson<string[]>(
      'import sys, json, xml.etree.ElementTree as ET\nprint(json.dumps([ET.parse(f).getroot().tag for f in sys.argv[1:]]))',
      files,
    );
    expect(roots).toEqual(files.map(() => '{http://www.w3.org/2000/svg}svg'));
  });

  it('the committed PNGs of docs/images are the renderings of their SVGs (same size, inked)', () => {
    const names = [
      'street-corner-28ghz-scene',
      'factory-floor-60ghz-scene',
      'highway-39ghz-scene',
      'corner-walk-28ghz-power',
      'corner-walk-28ghz-scene-around-corner',
      'correlation-models',
      'frames-and-angles',
    ];
    for (const n of names) {
      const svg = join(ROOT, 'docs', 'images', `${n}.svg`),
        png = join(ROOT, 'docs', 'images', `${n}.png`);
      expect(existsSync(svg) && existsSync(png), n).toBe(true);
      const bytes = readFileSync(png);
      expect(bytes.subarray(1, 4).toString('latin1')).toBe('PNG'); // PNG signature, ISO/IEC 15948 (V)
      const r = renderCount(readFileSync(svg, 'utf8'));
      expect([bytes.readUInt32BE(16), bytes.readUInt32BE(20)]).toEqual([r.width, r.height]); // IHDR width, height
      expect(r.inked / (r.width * r.height)).toBeGreaterThan(0.02);
    }
  });
});

describe('colour scale', () => {
  it('the ramp darkens monotonically, so it keeps its order printed in grey', () => {
    // Relative luminance with the ITU-R BT.709 primaries' weights 0.2126, 0.7152, 0.0722 and the sRGB
    // transfer function of IEC 61966-2-1 (M)
    expect(relativeLuminance('#ffffff')).toBeCloseTo(1, 12);
    expect(relativeLuminance('#000000')).toBe(0);
    expect(relativeLuminance('#808080')).toBeCloseTo(0.2158605, 6); // ((0.50196 + 0.055) / 1.055)^2.4 (C)
    let last = -1;
    for (let i = 0; i <= 256; i++) {
      const y = relativeLuminance(rampColour(i / 256));
      expect(y, `t = ${i / 256}`).toBeGreaterThanOrEqual(last);
      last = y;
    }
    // Enough contrast between the ends to read as distinct greys (WCAG contrast ratio > 4.5, common practice).
    expect((relativeLuminance(rampColour(0.82)) + 0.05) / (relativeLuminance(rampColour(0)) + 0.05)).toBeGreaterThan(4.5);
  });
});

describe('gain correlation', () => {
  it.skipIf(!hasPython('numpy'))('gainCorrelation agrees with numpy on random complex gains', () => {
    const S = 500,
      L = 3,
      lags = 40;
    let seed = 7;
    const rnd = (): number => (seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31 - 0.5;
    const g = Float64Array.from({ length: 2 * S * L }, rnd);
    const ours = gainCorrelation(g, S, L, lags);
    // numpy: mean over s of g[s+k] conj(g[s]) over mean |g|^2, real part, averaged over paths (C)
    const ref = pythonJson<number[]>(
      'import sys, json, numpy as np\n' +
        'a = np.array(json.loads(sys.stdin.read())).reshape(-1, 2); g = (a[:, 0] + 1j * a[:, 1]).reshape(' +
        S +
        ', ' +
        L +
        ')\n' +
        'S, L = g.shape; K = ' +
        lags +
        '\n' +
        'r = [np.mean([np.real(np.mean(g[k:, l] * np.conj(g[:S - k, l]))) / np.mean(np.abs(g[:, l]) ** 2) for l in range(L)]) for k in range(K)]\n' +
        'print(json.dumps(r))',
      [],
      JSON.stringify(Array.from(g)),
    );
    for (let k = 0; k < lags; k++) expect(ours[k]).toBeCloseTo(ref[k]!, 12);
  });

  it('a Gauss-Markov run follows alpha^k within the Bartlett bound, and J0 is the reference curve', async () => {
    const scenario = {
      carrierHz: 28e9,
      timing: { subframeS: 0.000125, subframes: 4000 },
      band: { subcarriers: 1, spacingHz: 120e3 },
      transmitter: { position: [0, 0, 0], array: { kind: 'ula', elements: 1 } },
      receiver: { position: [100, 0, 0], array: { kind: 'ula', elements: 1 } },
      paths: Array.from({ length: 8 }, (_, l) => ({ id: `p${l}`, aodDeg: [0, 0], aoaDeg: [180, 0], delayS: 1e-7 * (1 + l), powerDb: -80 })),
      fading: { model: 'gauss-markov', speedMps: 3 },
      seed: 11,
    };
    const { scenario: parsed } = parseScenarioText(JSON.stringify(scenario), 'test');
    const r = await correlationOf(scenarioPlotSource(parsed, 'test'), { lags: 30 });
    const [estimate, j0, ak] = r.series;
    expect(ak!.label).toContain('alpha^k');
    const alpha = 0.98792958; // J0(2 pi 280.194 Hz 0.125 ms), check-values.md (C)
    expect(ak!.values[1]).toBeCloseTo(alpha, 8);
    expect(ak!.values[10]).toBeCloseTo(alpha ** 10, 6); // alpha is given to 8 digits above
    if (hasPython('scipy')) {
      // scipy.special.j0 at 2 pi fD k T, fD = f_c v / c (C)
      const ref = pythonJson<number[]>(
        'import json, math\nfrom scipy.special import j0\nfd = 28e9 * 3 / 299792458\nprint(json.dumps([float(j0(2 * math.pi * fd * k * 0.125e-3)) for k in range(30)]))',
      );
      for (let k = 0; k < 30; k++) expect(j0!.values[k], `J0 at lag ${k}`).toBeCloseTo(ref[k]!, 9);
    }
    // Bartlett's variance of an AR(1) sample autocorrelation (Box & Jenkins, Time Series Analysis, (M)):
    // var r_k ~ [(1 + a^2)(1 - a^(2k)) / (1 - a^2) - 2 k a^(2k)] / N, here N = S per path and 8 paths averaged:
    // 4 standard deviations bound a false failure below 1e-4.
    const N = 4000,
      paths = 8;
    for (const k of [1, 5, 10, 20, 29]) {
      const a2 = alpha * alpha;
      const variance = (((1 + a2) * (1 - a2 ** k)) / (1 - a2) - 2 * k * a2 ** k) / N / paths;
      expect(Math.abs(estimate!.values[k]! - alpha ** k), `lag ${k}`).toBeLessThan(4 * Math.sqrt(variance));
    }
  });
});

describe('pathweave plot', () => {
  it('writes each kind for a scenario and for a generated file, and refuses bad requests with exit 2', () => {
    const dir = tempDir('pathweave-plot-cli-');
    const h5 = join(dir, 'corner.h5');
    expect(runCli(['generate', 'examples/street-corner-28ghz.json', '--out', h5, '--quiet']).status).toBe(0);
    for (const kind of PLOT_KINDS) {
      const out = join(dir, `${kind}.svg`);
      const r = runCli(['plot', h5, '--kind', kind, '--out', out]);
      expect(r.status, r.stderr).toBe(0);
      expect(xmlProblems(readFileSync(out, 'utf8'))).toEqual([]);
    }
    // A file's delay profile comes from its own truth tables.
    expect(readFileSync(join(dir, 'delay-profile.svg'), 'utf8')).toContain('truth tables at subframe 0');
    const bad = runCli(['plot', 'examples/street-corner-28ghz.json', '--kind', 'spectrum', '--out', join(dir, 'x.svg')]);
    expect(bad.status).toBe(2);
    expect(bad.stderr).toContain('--kind must be one of scene, delay-profile, angles, time-frequency, correlation, power, coverage, got "spectrum"');
    expect(runCli(['plot', 'examples/street-corner-28ghz.json', '--kind', 'scene', '--out', join(dir, 'x.png')]).status).toBe(2);
    const missing = runCli(['plot', join(dir, 'nope.json'), '--kind', 'scene', '--out', join(dir, 'x.svg')]);
    expect(missing.status).toBe(2);
    expect(missing.stderr).toContain('cannot read');
    expect(existsSync(join(dir, 'x.svg'))).toBe(false);
  });
});
