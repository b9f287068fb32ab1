/**
 * @module @pathweave/io/plot
 * Figures as SVG text, written by the library and by `pathweave plot`: the scene from above and
 * from the side with the traced paths, the power-delay profile, the angular power spectra, |H|
 * over subcarriers and time, the gain correlation against J0, and the power over time. One plain look for all kinds
 * (svg.ts), axes with units and a colour ramp whose lightness is monotone (axes.ts).
 */
import { writeFileAtomic } from '../formats/atomic.js';
import { closePlotSource, correlationOf, openPlotSource, profilePathsOf, sceneInputOf, timeFrequencyOf, userIndexOf, type PlotSource } from './data.js';
import { correlationFigure, timeFrequencyFigure } from './fields.js';
import { anglesFigure, delayProfileFigure } from './profiles.js';
import { powerOverTimeFigure, powerOverTimeOf } from './power.js';
import { sceneFigure } from './scene.js';
import { applyRotation, degFromVector, rotationFromOrientation } from '@pathweave/geometry';

export * from './svg.js';
export * from './axes.js';
export * from './scene.js';
export * from './profiles.js';
export * from './fields.js';
export * from './data.js';
export * from './coverage.js';
export * from './power.js';

/**
 * The kinds of figure `pathweave plot --kind` draws.
 * @example PLOT_KINDS.length // 6
 */
export const PLOT_KINDS = ['scene', 'delay-profile', 'angles', 'time-frequency', 'correlation', 'power'] as const;

/**
 * One of PLOT_KINDS.
 * @example const kind: PlotKind = 'delay-profile'; // accepted by plotSource and `pathweave plot --kind`
 */
export type PlotKind = (typeof PLOT_KINDS)[number];

/**
 * Options of `plotSource` / `plotFile`.
 * @example const o: PlotOptions = { atS: 0.1, user: 0 }; // paths traced again at t = 0.1 s
 */
export interface PlotOptions {
  /** Time of the path snapshot, seconds (scene, delay-profile, angles); default 0. */
  atS?: number;
  /** Receiver of a scenario with `receivers`: its id, or its index; default 0. */
  user?: number | string;
  /** Element pair [rx, tx] of the time-frequency figure; default [0, 0]. */
  element?: [number, number];
  /** Largest lag of the correlation figure, in subframes. */
  lags?: number;
}

/**
 * Draw one kind of figure from an open source.
 * @example (await plotSource(await openPlotSource('examples/street-corner-28ghz.json'), 'scene')).match(/class="path"/g).length // 16: the 8 paths, in the top and the side view
 */
export async function plotSource(source: PlotSource, kind: PlotKind, options: PlotOptions = {}): Promise<string> {
  const name = source.scenario.name ?? source.file;
  const at = options.atS ?? 0;
  const user = userIndexOf(source, options.user ?? 0);
  switch (kind) {
    case 'scene':
      return sceneFigure(sceneInputOf(source, at, user));
    case 'delay-profile': {
      const { paths, origin } = await profilePathsOf(source, at, user);
      return delayProfileFigure({ title: `${name}: power-delay profile`, subtitle: origin, paths });
    }
    case 'angles': {
      const { paths, origin } = await profilePathsOf(source, at, user);
      const bore = (o: Parameters<typeof rotationFromOrientation>[0]): number =>
        degFromVector(applyRotation([0, 0, 0], rotationFromOrientation(o), [1, 0, 0]))[0];
      const u = source.built.users[user]!;
      return anglesFigure({
        title: `${name}: angular power spectra`,
        subtitle: origin,
        paths,
        boresightAzimuthDeg: { transmitter: bore(source.scenario.transmitter.array.orientation), receiver: bore(u.receiver.array.orientation) },
      });
    }
    case 'time-frequency': {
      const data = await timeFrequencyOf(source, { user, ...(options.element !== undefined ? { element: options.element } : {}) });
      return timeFrequencyFigure({
        title: `${name}: ${source.built.domain === 'frequency' ? '|H| over subcarriers and time' : '|h| over taps and time'}`,
        ...data,
      });
    }
    case 'correlation': {
      const data = await correlationOf(source, { user, ...(options.lags !== undefined ? { lags: options.lags } : {}) });
      return correlationFigure({ title: `${name}: gain correlation against lag`, ...data });
    }
    case 'power': {
      const data = await powerOverTimeOf(source, { user });
      return powerOverTimeFigure({ title: `${name}: power over time`, ...data });
    }
  }
}

/**
 * Draw a figure of a scenario or output file and write it atomically to `out` (SVG text).
 * @example
 * await plotFile('examples/highway-39ghz.json', 'correlation', 'highway-correlation.svg'); // undefined, once the file is in place
 * statSync('highway-correlation.svg').size // 6735
 */
export async function plotFile(file: string, kind: PlotKind, out: string, options: PlotOptions = {}): Promise<void> {
  if (!(PLOT_KINDS as readonly string[]).includes(kind))
    throw new RangeError(`plotFile(): kind must be one of ${PLOT_KINDS.join(', ')}, got ${JSON.stringify(kind)}`);
  const source = await openPlotSource(file);
  try {
    await writeFileAtomic(out, await plotSource(source, kind, options));
  } finally {
    await closePlotSource(source);
  }
}
