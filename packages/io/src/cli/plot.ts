/** `pathweave plot`: a figure of a scenario (run in memory) or of an output file, as SVG. */
import { access } from 'node:fs/promises';
import { RequestError } from '../dataset/generate.js';
import { PLOT_KINDS, plotCoverageFile, plotFile, type PlotKind, type PlotOptions } from '../plot/index.js';
import { parseArgs, parseInteger, UsageError } from './args.js';
import { onePositional, type Command, type Io } from './common.js';

async function run(argv: string[], io: Io): Promise<number> {
  const args = parseArgs('plot', argv, { kind: 'value', out: 'value', at: 'value', user: 'value', element: 'value', lags: 'value' });
  const file = onePositional('plot', args.positionals, 'scenario or output file');
  const kind = args.values.kind;
  if (kind === undefined) throw new UsageError(`plot: --kind is required; kinds are ${PLOT_KINDS.join(', ')}, coverage`);
  if (!(PLOT_KINDS as readonly string[]).includes(kind) && kind !== 'coverage')
    throw new UsageError(`plot: --kind must be one of ${PLOT_KINDS.join(', ')}, coverage, got ${JSON.stringify(kind)}`);
  const out = args.values.out;
  if (out === undefined) throw new UsageError('plot: --out <file.svg> is required');
  if (!/\.svg$/i.test(out)) throw new UsageError(`plot: --out must name an .svg file, got ${JSON.stringify(out)}`);
  const options: PlotOptions = {};
  if (args.values.at !== undefined) {
    const at = Number(args.values.at);
    if (args.values.at.trim() === '' || !Number.isFinite(at) || at < 0)
      throw new UsageError(`plot: --at must be a time in seconds >= 0, got ${JSON.stringify(args.values.at)}`);
    options.atS = at;
  }
  if (args.values.user !== undefined) options.user = args.values.user; // an id or an index, resolved against the scenario
  if (args.values.lags !== undefined) options.lags = parseInteger('--lags', args.values.lags, 2);
  if (args.values.element !== undefined) {
    const m = /^(\d+),(\d+)$/.exec(args.values.element);
    if (m === null) throw new UsageError(`plot: --element must be r,t (receive and transmit element indices), got ${JSON.stringify(args.values.element)}`);
    options.element = [Number(m[1]), Number(m[2])];
  }
  await access(file).catch((e: NodeJS.ErrnoException) => {
    throw new RequestError(`plot: cannot read ${file}: ${e.code ?? e.message}`);
  });
  if (kind === 'coverage') {
    // A map of a file `pathweave coverage` wrote (its own reader: no channel tensor in it).
    await plotCoverageFile(file, out);
    io.out(`wrote ${out}: coverage map of ${file}`);
    return 0;
  }
  await plotFile(file, kind as PlotKind, out, options).catch((e: unknown) => {
    // The library names options.user; on the command line it is --user.
    if (e instanceof RequestError && e.message.startsWith('user must be')) throw new UsageError(`plot: --${e.message}`);
    throw e;
  });
  io.out(`wrote ${out}: ${kind} figure of ${file}`);
  return 0;
}

/** The plot command. */
export const plotCommand: Command = {
  usage:
    'pathweave plot     <scenario-or-file> --kind <scene|delay-profile|angles|time-frequency|correlation|power|coverage> --out <file.svg> [--at <seconds>] [--user ID|N] [--element r,t] [--lags N]',
  run,
};
