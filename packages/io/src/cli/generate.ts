/**
 * `pathweave generate`: a scenario to a dataset file, streamed, with progress and signal handling.
 * With `--shard I/N` (or `auto`) the run writes the part file `partPath(out, I, N)` and its
 * manifest (manifest.ts); a rerun keeps a part whose manifest verifies.
 */
import { stat, unlink } from 'node:fs/promises';
import { KERNEL_NAME } from '@pathweave/core';
import { removeLiveTemporaryFiles } from '../atomic.js';
import { formatFromPath, OUTPUT_FORMATS, type OutputFormat } from '../formats/index.js';
import { DEFAULT_MAX_OUTPUT_BYTES, formatBytes, generate } from '../generate.js';
import { manifestOf, manifestPathOf, partPath, reusablePart, writeManifest } from '../manifest.js';
import { loadScenario } from '../validate.js';
import { PATHWEAVE_VERSION } from '../version.js';
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
  const workers = args.values.workers === undefined ? undefined : parseInteger('--workers', args.values.workers, 1, 256);
  const maxBytes = args.values['max-bytes'] === undefined ? DEFAULT_MAX_OUTPUT_BYTES : parseBytes('--max-bytes', args.values['max-bytes']);
  const domain = parseDomain(args.values.domain);
  if (args.values.subframes !== undefined && args.values.shard !== undefined) throw new UsageError('generate: give --subframes or --shard, not both');

  const outStat = await stat(out).catch(() => undefined);
  if (outStat?.isDirectory()) throw new UsageError(`--out ${out} is a directory; give a file name`);

  const { scenario, warnings, text } = await loadScenario(file);
  const S = scenario.timing.subframes;
  let range: [number, number] = [0, S];
  if (args.values.subframes !== undefined) range = parseRange('--subframes', args.values.subframes, S);
  let shard: { index: number; count: number; source: string } | undefined;
  if (args.values.shard !== undefined) {
    shard = parseShard(args.values.shard, process.env);
    range = shardRange(shard.index, shard.count, S);
    if (range[0] === range[1]) throw new UsageError(`--shard ${shard.index}/${shard.count} holds no subframe of ${S}`);
  }
  // A shard writes its own part file (and manifest) beside --out: see docs/datasets.md.
  const target = shard === undefined ? out : partPath(out, shard.index, shard.count);
  const effectiveSeed = seed ?? scenario.seed;
  if (shard !== undefined) {
    const earlier = await reusablePart(target, { scenarioText: text, seed: effectiveSeed, range, format });
    if (earlier.reusable) {
      io.out(`skipped ${target}: part ${shard.index} of ${shard.count} (subframes ${range[0]}:${range[1]}) is already complete; its manifest verified (${earlier.manifest.fileBytes} bytes, tensor sha256 ${earlier.manifest.tensor.sha256})`);
      return 0;
    }
    if (earlier.reason !== 'no manifest yet') {
      io.err(`regenerating ${target}: ${earlier.reason}`);
      // Never leave a manifest beside a file it does not describe.
      await unlink(manifestPathOf(target)).catch(() => undefined);
    }
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
  let done = 0;
  const total = range[1] - range[0];
  const onSignal = (signal: NodeJS.Signals): void => {
    if (interrupted !== undefined) return;
    interrupted = signal;
    controller.abort(new Error(`interrupted by ${signal}`));
    // The run stops at the next block boundary; should that take too long, leave regardless.
    setTimeout(() => {
      const removed = removeLiveTemporaryFiles();
      io.err(`error: interrupted by ${signal} after ${done} of ${total} subframes; removed ${removed.length} temporary file(s); nothing was written to ${target}`);
      process.exit(1);
    }, 900).unref();
  };
  process.on('SIGINT', onSignal);
  process.on('SIGTERM', onSignal);
  try {
    const progress = new Progress(`generate ${target}`, total, process.stderr, quiet);
    const report = await generate(scenario, text, {
      out: target,
      format,
      range,
      maxBytes,
      signal: controller.signal,
      onProgress: (n) => {
        done = n;
        progress.update(n);
      },
      ...(seed !== undefined ? { seed } : {}),
      ...(workers !== undefined ? { workers } : {}),
      ...(domain !== undefined ? { domain } : {}),
    });
    for (const w of report.warnings) warn(w);
    io.out(
      `wrote ${report.out}: ${report.tensorName} ${report.dtype} [${report.shape.join(', ')}] (subframes ${report.range[0]}:${report.range[1]}), ` +
        `${formatBytes(report.fileBytes)} (${report.fileBytes} bytes) in ${report.seconds.toFixed(2)} s`,
    );
    if (shard !== undefined) {
      // Written last: a manifest exists only beside a complete part file.
      const manifestPath = await writeManifest(
        target,
        manifestOf({
          index: shard.index,
          count: shard.count,
          range,
          subframesTotal: S,
          partFile: target,
          fileBytes: (await stat(target)).size,
          format,
          tensorName: report.tensorName,
          dtype: report.dtype,
          shape: report.shape,
          sha256: report.sha256,
          scenarioText: text,
          seed: effectiveSeed,
          pathweaveVersion: PATHWEAVE_VERSION,
          kernel: KERNEL_NAME,
        }),
      );
      if (!quiet) io.err(`manifest ${manifestPath} (part ${shard.index} of ${shard.count}, from the ${shard.source})`);
    }
    return 0;
  } catch (e) {
    if (interrupted !== undefined) {
      io.err(`error: interrupted by ${interrupted} after ${done} of ${total} subframes; the temporary file was removed and nothing was written to ${target}`);
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
