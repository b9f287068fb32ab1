/**
 * `pathweave generate`: a scenario to a dataset file, streamed, with progress and signal handling.
 * With `--shard I/N` (or `auto`) the run writes the part file `partPath(out, I, N)` and its
 * manifest (manifest.ts); a rerun keeps a part whose manifest verifies. `--checksum` records the
 * tensor's SHA-256 in a plain run; shard runs always compute it (manifests and merge verify by it).
 *
 * The run goes in this thread: generate() yields to the event loop between blocks (about 8 MiB
 * each), so SIGINT/SIGTERM are answered within a block's time. The handler removes the hidden
 * temporary files of the output at once, stops the run and exits with 1.
 */
import { readdirSync, unlinkSync } from 'node:fs';
import { temporaryPrefixFor } from '../formats/atomic.js';
import { checkOutputPath } from '../formats/output-path.js';
import { printable } from '../formats/read-support.js';
import { stat, unlink } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import { formatFromPath, OUTPUT_FORMATS, type OutputFormat } from '../formats/index.js';
import { checkRequest, DEFAULT_MAX_OUTPUT_BYTES, formatBytes, generate, type GenerateReport } from '../dataset/generate.js';
import { planScenario } from '../scenario/plan.js';
import { fileSha256, manifestOf, manifestPathOf, partPath, reusablePart, writeManifest } from '../dataset/manifest.js';
import { loadScenario } from '../scenario/validate.js';
import { PATHWEAVE_VERSION } from '../version.js';
import { parseArgs, parseBytes, parseInteger, parseRange, parseShard, shardRange, UsageError } from './args.js';
import { onePositional, parseDomain, type Command, type Io } from './common.js';
import { Progress } from './progress.js';

/** After a signal, how long the run may take to stop before the command returns anyway, ms. */
const STOP_DEADLINE_MS = 900;

async function run(argv: string[], io: Io): Promise<number> {
  const args = parseArgs('generate', argv, {
    out: 'value',
    format: 'value',
    seed: 'value',
    subframes: 'value',
    shard: 'value',
    workers: 'value',
    checksum: 'flag',
    quiet: 'flag',
    domain: 'value',
    'max-bytes': 'value',
    overwrite: 'flag',
  });
  const file = onePositional('generate', args.positionals, 'scenario file');
  const out = args.values.out;
  if (out === undefined) throw new UsageError('generate: --out <file> is required');
  if (args.values.format !== undefined && !(OUTPUT_FORMATS as readonly string[]).includes(args.values.format))
    throw new UsageError(`--format must be one of ${OUTPUT_FORMATS.join(', ')}, got ${JSON.stringify(args.values.format)}`);
  const format = (args.values.format ?? formatFromPath(out) ?? 'npy') as OutputFormat;
  // One command line serves every task of a job array: without {index} each task would replace the others' part.
  if (args.values.shard !== undefined && !out.includes('{index}')) {
    throw new UsageError(
      `generate: --shard needs {index} in --out, so each shard writes its own part file (e.g. --out run.part-{index}-of-{count}.${format}); got ${JSON.stringify(out)}`,
    );
  }
  if (args.values.shard === undefined && /\{(index|count)\}/.test(out))
    throw new UsageError(`generate: --out ${JSON.stringify(out)} holds {index} or {count}, which only --shard fills in; give --shard I/N or name the file`);
  const seed = args.values.seed === undefined ? undefined : parseInteger('--seed', args.values.seed, 0, 2 ** 53 - 1);
  const workers = args.values.workers === undefined ? undefined : parseInteger('--workers', args.values.workers, 1, 256);
  const maxBytes = args.values['max-bytes'] === undefined ? DEFAULT_MAX_OUTPUT_BYTES : parseBytes('--max-bytes', args.values['max-bytes']);
  const domain = parseDomain(args.values.domain);
  if (args.values.subframes !== undefined && args.values.shard !== undefined) throw new UsageError('generate: give --subframes or --shard, not both');

  // The output name is checked before any work (a refusal, exit 2); with --shard, once the part's name is known.
  const overwrite = args.flags.has('overwrite');
  const companions = [...(format === 'npy' ? ['.json'] : []), ...(args.values.shard !== undefined ? ['.manifest.json'] : [])];
  if (args.values.shard === undefined) await checkOutputPath(out, { format, overwrite, companions });

  // The signal handlers go in before any work, so a signal during the set-up (loading and
  // tracing the scenario) is answered too; generate() yields between geometry updates.
  let interrupted: string | undefined;
  let done = 0;
  let total = 0;
  const outName: string = out;
  let target: string = out;
  let result: Promise<GenerateReport> | undefined;
  const controller = new AbortController();
  let onInterrupted: (signal: string) => void = () => undefined;
  const interruption = new Promise<string>((resolve) => (onInterrupted = resolve));
  const onSignal = (signal: NodeJS.Signals): void => {
    if (interrupted !== undefined) return;
    interrupted = signal;
    // Remove the temporaries at once, stop the run, and remove any it made meanwhile. The run
    // stops at its next block; should it take longer, the command returns at the deadline.
    let removed = removeTemporariesOf(target);
    controller.abort(new Error(`interrupted by ${signal}`));
    let deadline: NodeJS.Timeout | undefined;
    let completed = false; // the signal came too late: the file was already renamed into place
    const stopped = new Promise<void>((resolve) => {
      deadline = setTimeout(resolve, STOP_DEADLINE_MS);
      if (result === undefined) resolve();
      else
        result.then(() => {
          completed = true;
          resolve();
        }, resolve);
    });
    void stopped.then(() => {
      clearTimeout(deadline);
      removed += removeTemporariesOf(target);
      if (completed)
        io.err(`error: interrupted by ${signal} after the last subframe; ${target} is complete, but the run did not finish (no manifest or report)`);
      else
        io.err(`error: interrupted by ${signal} after ${done} of ${total} subframes; removed ${removed} temporary file(s); nothing was written to ${target}`);
      onInterrupted(signal);
    });
  };
  process.on('SIGINT', onSignal);
  process.on('SIGTERM', onSignal);
  try {
    return await runWith();
  } catch (e) {
    if (interrupted !== undefined) return interruption.then(() => 1);
    throw e;
  } finally {
    process.off('SIGINT', onSignal);
    process.off('SIGTERM', onSignal);
  }

  async function runWith(): Promise<number> {
    const { scenario, warnings, text } = await loadScenario(file);
    if (interrupted !== undefined) return interruption.then(() => 1);
    const S = scenario.timing.subframes;
    let range: [number, number] = [0, S];
    if (args.values.subframes !== undefined) range = parseRange('--subframes', args.values.subframes, S);
    let shard: { index: number; count: number; source: string } | undefined;
    if (args.values.shard !== undefined) {
      shard = parseShard(args.values.shard, process.env);
      range = shardRange(shard.index, shard.count, S);
      if (range[0] === range[1]) throw new UsageError(`--shard ${shard.index}/${shard.count} holds no subframe of ${S}`);
    }
    // The output-size and memory refusals first (they name the size), then the side arrays
    // (gains, ground truth), which stay in memory until the commit.
    const plan = planScenario(scenario, { domain, seed });
    checkRequest(plan, range, maxBytes, { sideArrays: 'per-file' });
    // A shard writes its own part file (and manifest) beside --out: see docs/datasets.md.
    target = shard === undefined ? outName : partPath(outName, shard.index, shard.count);
    if (shard !== undefined) await checkOutputPath(target, { format, overwrite, companions });
    const effectiveSeed = plan.seed;
    if (shard !== undefined) {
      const earlier = await reusablePart(target, { scenarioText: text, seed: effectiveSeed, range, format });
      if (earlier.reusable) {
        io.out(
          `skipped ${target}: part ${shard.index} of ${shard.count} (subframes ${range[0]}:${range[1]}) is already complete; its manifest verified (${earlier.manifest.fileBytes} bytes, tensor sha256 ${earlier.manifest.tensor.sha256})`,
        );
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

    total = range[1] - range[0];
    const progress = new Progress(`generate ${printable(target)}`, total, process.stderr, quiet); // written to stderr directly: escaped here
    if (interrupted !== undefined) return interruption.then(() => 1);
    result = generate(scenario, text, {
      out: target,
      format,
      range,
      maxBytes,
      // A part's manifest records the tensor's sha256, and merge verifies the parts by it.
      checksum: shard !== undefined || args.flags.has('checksum'),
      signal: controller.signal,
      ...(seed !== undefined ? { seed } : {}),
      ...(workers !== undefined ? { workers } : {}),
      ...(domain !== undefined ? { domain } : {}),
      onProgress: (n) => {
        done = n;
        progress.update(n);
      },
    });
    result.catch(() => undefined); // raced below; a rejection after an interruption is expected
    const report = await Promise.race([result, interruption]);
    if (typeof report === 'string' || interrupted !== undefined) return await interruption.then(() => 1);
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
          fileSha256: await fileSha256(target),
          ...(format === 'npy' ? { sideFileSha256: await fileSha256(`${target}.json`) } : {}),
          format,
          tensorName: report.tensorName,
          dtype: report.dtype,
          shape: report.shape,
          sha256: report.sha256!, // computed: checksum is on for every shard run
          scenarioText: text,
          seed: effectiveSeed,
          pathweaveVersion: PATHWEAVE_VERSION,
          kernel: report.kernel,
        }),
      );
      if (!quiet) io.err(`manifest ${manifestPath} (part ${shard.index} of ${shard.count}, from the ${shard.source})`);
    }
    return 0;
  }
}

/** The generate command. */
export const generateCommand: Command = {
  usage: `pathweave generate <scenario.json> --out <file> [--format npy|npz|h5] [--seed N]
                   [--subframes A:B] [--shard I/N|auto|auto/N] [--workers N] [--checksum]
                   [--quiet] [--domain frequency|taps] [--max-bytes SIZE] [--overwrite]
    --checksum   record the SHA-256 of the tensor bytes (tensorSha256; always on with --shard)
    --out        the file written; {index} and {count} in it are replaced by the shard's I and N
                 (with --shard, --out must hold {index})
    --overwrite  replace an existing output even if it is read-only or another user's`,
  run,
};

/**
 * The hidden temporary files this process made for `target` (atomic.ts naming: the data file,
 * the .npy side file, the manifest), removed synchronously. Returns how many were removed.
 */
function removeTemporariesOf(target: string): number {
  const prefixes = [target, `${target}.json`, manifestPathOf(target)].map(temporaryPrefixFor);
  const tail = new RegExp(`^${process.pid}-[0-9a-f]+\\.part$`);
  const ours = { test: (name: string): boolean => prefixes.some((p) => name.startsWith(p) && tail.test(name.slice(p.length))) };
  let removed = 0;
  let names: string[] = [];
  try {
    names = readdirSync(dirname(target));
  } catch {
    return 0;
  }
  for (const name of names) {
    if (!ours.test(name)) continue;
    try {
      unlinkSync(join(dirname(target), name));
      removed++;
    } catch {
      // already gone
    }
  }
  return removed;
}
