/** `pathweave generate`: a scenario to a dataset file, streamed, with progress and signal handling. */
import { stat } from 'node:fs/promises';
import { removeLiveTemporaryFiles } from '../atomic.js';
import { formatFromPath, OUTPUT_FORMATS, type OutputFormat } from '../formats/index.js';
import { DEFAULT_MAX_OUTPUT_BYTES, formatBytes, generate } from '../generate.js';
import { loadScenario } from '../validate.js';
import { parseArgs, parseBytes, parseInteger, parseRange, parseShard, shardRange, UsageError } from './args.js';
import { onePositional, parseDomain, type Command, type Io } from './common.js';
import { Progress } from './progress.js';

async function run(argv: string[], io: Io): Promise<number> {
  const args = parseArgs('generate', argv, {
    out: 'value',
    format: 'value',
    seed: 'value',
    subframes: 'value',
    shard: 'value',
    workers: 'value',
    quiet: 'flag',
    domain: 'value',
    'max-bytes': 'value',
  });
  const file = onePositional('generate', args.positionals, 'scenario file');
  const out = args.values.out;
  if (out === undefined) throw new UsageError('generate: --out <file> is required');
  const format = (args.values.format ?? formatFromPath(out) ?? 'npy') as OutputFormat;
  if (!OUTPUT_FORMATS.includes(format)) throw new UsageError(`--format must be one of ${OUTPUT_FORMATS.join(', ')}, got ${JSON.stringify(args.values.format)}`);
  const seed = args.values.seed === undefined ? undefined : parseInteger('--seed', args.values.seed, 0, 2 ** 53 - 1);
  if (args.values.workers !== undefined) parseInteger('--workers', args.values.workers, 1, 256);
  const maxBytes = args.values['max-bytes'] === undefined ? DEFAULT_MAX_OUTPUT_BYTES : parseBytes('--max-bytes', args.values['max-bytes']);
  const domain = parseDomain(args.values.domain);
  if (args.values.subframes !== undefined && args.values.shard !== undefined) throw new UsageError('generate: give --subframes or --shard, not both');

  const outStat = await stat(out).catch(() => undefined);
  if (outStat?.isDirectory()) throw new UsageError(`--out ${out} is a directory; give a file name`);

  const { scenario, warnings, text } = await loadScenario(file);
  const S = scenario.timing.subframes;
  let range: [number, number] = [0, S];
  if (args.values.subframes !== undefined) range = parseRange('--subframes', args.values.subframes, S);
  if (args.values.shard !== undefined) {
    const shard = parseShard(args.values.shard, process.env);
    range = shardRange(shard.index, shard.count, S);
    if (range[0] === range[1]) throw new UsageError(`--shard ${shard.index}/${shard.count} holds no subframe of ${S}`);
  }
  const quiet = args.flags.has('quiet');
  const warned = new Set<string>();
  const warn = (w: string): void => {
    if (!warned.has(w)) io.err(`warning: ${w}`);
    warned.add(w);
  };
  for (const w of warnings) warn(w);

  const controller = new AbortController();
  let interrupted: string | undefined;
  const onSignal = (signal: NodeJS.Signals): void => {
    if (interrupted !== undefined) return;
    interrupted = signal;
    controller.abort(new Error(`interrupted by ${signal}`));
    // A block in progress finishes quickly; if not, leave within a second regardless.
    setTimeout(() => {
      const removed = removeLiveTemporaryFiles();
      io.err(`error: interrupted by ${signal}; removed ${removed.length} temporary file(s); nothing was written to ${out}`);
      process.exit(1);
    }, 900).unref();
  };
  process.on('SIGINT', onSignal);
  process.on('SIGTERM', onSignal);
  try {
    const progress = new Progress(`generate ${out}`, range[1] - range[0], process.stderr, quiet);
    const report = await generate(scenario, text, {
      out,
      format,
      range,
      maxBytes,
      signal: controller.signal,
      onProgress: (done) => progress.update(done),
      ...(seed !== undefined ? { seed } : {}),
      ...(domain !== undefined ? { domain } : {}),
    });
    for (const w of report.warnings) warn(w);
    io.out(
      `wrote ${report.out}: ${report.tensorName} ${report.dtype} [${report.shape.join(', ')}] (subframes ${report.range[0]}:${report.range[1]}), ` +
        `${formatBytes(report.fileBytes)} (${report.fileBytes} bytes) in ${report.seconds.toFixed(2)} s`,
    );
    return 0;
  } catch (e) {
    if (interrupted !== undefined) {
      io.err(`error: interrupted by ${interrupted}; the temporary file was removed and nothing was written to ${out}`);
      return 1;
    }
    throw e;
  } finally {
    process.off('SIGINT', onSignal);
    process.off('SIGTERM', onSignal);
  }
}


/** The generate command. */
export const generateCommand: Command = {
  usage: `pathweave generate <scenario.json> --out <file> [--format npy|npz|h5] [--seed N]
                   [--subframes A:B] [--shard I/N|auto|auto/N] [--workers N] [--quiet]
                   [--domain frequency|taps] [--max-bytes SIZE]`,
  run,
};
