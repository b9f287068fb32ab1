/**
 * `pathweave generate`: a scenario to a dataset file, streamed, with progress and signal handling.
 * With `--shard I/N` (or `auto`) the run writes the part file `partPath(out, I, N)` and its
 * manifest (manifest.ts); a rerun keeps a part whose manifest verifies.
 *
 * The run itself goes in a worker thread, so this thread stays free to answer SIGINT/SIGTERM at
 * once whatever the run is doing (a long synchronous block, an HDF5 write): it stops the worker,
 * removes the hidden temporary files of the output and exits with 1. (This module is also the
 * worker's entry point; see the end of the file.)
 */
import { readdirSync, unlinkSync } from 'node:fs';
import { totalmem } from 'node:os';
import { OutputFileError } from '../atomic.js';
import { stat, unlink } from 'node:fs/promises';
import { basename, dirname, join } from 'node:path';
import { isMainThread, parentPort, Worker, workerData } from 'node:worker_threads';
import { KERNEL_NAME } from '@pathweave/core';
import { formatFromPath, OUTPUT_FORMATS, type OutputFormat } from '../formats/index.js';
import { checkRequest, DEFAULT_MAX_OUTPUT_BYTES, formatBytes, generate, RequestError, type GenerateOptions, type GenerateReport } from '../generate.js';
import type { Scenario } from '../schema.js';
import { chooseDomain, sideArrayBytes } from '../build.js';
import { manifestOf, manifestPathOf, partPath, reusablePart, writeManifest } from '../manifest.js';
import { loadScenario, ScenarioError, type Problem } from '../validate.js';
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
  // A fault of the destination, like a full disk or a read-only folder: exit 1 (issue 10), found before any work.
  if (outStat?.isDirectory()) throw new OutputFileError(out, 'create', Object.assign(new Error('is a directory'), { code: 'EISDIR' }));

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
  // The output-size and memory refusals first (they name the size), then the side arrays
  // (gains, ground truth), which stay in memory until the commit.
  checkRequest(scenario, chooseDomain(scenario, domain), range, maxBytes, scenario.paths?.length ?? 1);
  const side = sideArrayBytes(scenario, range[1] - range[0], scenario.paths?.length ?? 1);
  if (side > totalmem() / 4) {
    throw new RequestError(`the per-subframe side arrays (gains and ground truth) would need at least ${formatBytes(side)} of memory for ${range[1] - range[0]} subframes; generate fewer subframes per file (--subframes or --shard)`);
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

  let interrupted: string | undefined;
  let done = 0;
  const total = range[1] - range[0];
  const progress = new Progress(`generate ${target}`, total, process.stderr, quiet);
  const job = startGenerate(scenario, text, {
    out: target,
    format,
    range,
    maxBytes,
    ...(seed !== undefined ? { seed } : {}),
    ...(workers !== undefined ? { workers } : {}),
    ...(domain !== undefined ? { domain } : {}),
  }, (n) => {
    done = n;
    progress.update(n);
  });
  let onInterrupted: (signal: string) => void = () => undefined;
  const interruption = new Promise<string>((resolve) => (onInterrupted = resolve));
  const onSignal = (signal: NodeJS.Signals): void => {
    if (interrupted !== undefined) return;
    interrupted = signal;
    // Remove the temporaries at once, stop the run, and remove any it made meanwhile.
    let removed = removeTemporariesOf(target);
    void job.stop().then(() => {
      removed += removeTemporariesOf(target);
      io.err(`error: interrupted by ${signal} after ${done} of ${total} subframes; removed ${removed} temporary file(s); nothing was written to ${target}`);
      onInterrupted(signal);
    });
  };
  process.on('SIGINT', onSignal);
  process.on('SIGTERM', onSignal);
  try {
    const report = await Promise.race([job.result, interruption]);
    if (typeof report === 'string') return 1;
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
    if (interrupted !== undefined) return interruption.then(() => 1);
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

/** What the worker sends back: the report without the built scenario (not cloneable). */
type WorkerReport = Omit<GenerateReport, 'built'>;
type WorkerMessage =
  | { type: 'progress'; done: number }
  | { type: 'done'; report: WorkerReport }
  | { type: 'error'; name: string; message: string; stack?: string; problems?: Problem[]; source?: string };

/**
 * The hidden temporary files this process made for `target` (atomic.ts naming: the data file,
 * the .npy side file, the manifest), removed synchronously. Returns how many were removed.
 */
function removeTemporariesOf(target: string): number {
  const base = basename(target).replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
  const ours = new RegExp(`^\\.${base}\\.(?:json\\.|manifest\\.json\\.)?${process.pid}-[0-9a-f]+\\.part$`);
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

/**
 * Run generate in a worker thread (in this thread when running from the TypeScript sources,
 * which a worker cannot load). `stop()` ends the run at once.
 */
function startGenerate(
  scenario: Scenario,
  text: string,
  options: Omit<GenerateOptions, 'onProgress' | 'signal'>,
  onProgress: (done: number) => void,
): { result: Promise<WorkerReport>; stop: () => Promise<void> } {
  if (import.meta.url.endsWith('.ts')) {
    const controller = new AbortController();
    const result = generate(scenario, text, { ...options, signal: controller.signal, onProgress });
    return { result, stop: async () => controller.abort(new Error('stopped')) };
  }
  const worker = new Worker(new URL(import.meta.url), { workerData: { pathweaveGenerate: true, scenario, text, options } });
  const result = new Promise<WorkerReport>((resolve, reject) => {
    worker.on('message', (m: WorkerMessage) => {
      if (m.type === 'progress') onProgress(m.done);
      else if (m.type === 'done') resolve(m.report);
      else {
        // Refusals keep their class, so the exit code stays 2.
        const e =
          m.name === 'RequestError'
            ? new RequestError(m.message)
            : m.name === 'ScenarioError' && m.problems !== undefined
              ? new ScenarioError(m.problems, m.source)
              : new Error(m.message);
        if (m.stack !== undefined) e.stack = m.stack;
        reject(e);
      }
    });
    worker.on('error', reject);
    worker.on('exit', (code) => reject(new Error(`the generate worker stopped (exit code ${code}) before it finished`)));
  });
  result.catch(() => undefined);
  return { result, stop: async () => void (await worker.terminate()) };
}

// Worker side: run the request and post progress and the outcome.
if (!isMainThread && (workerData as { pathweaveGenerate?: boolean } | null)?.pathweaveGenerate === true) {
  const { scenario, text, options } = workerData as { scenario: Scenario; text: string; options: GenerateOptions };
  const port = parentPort!;
  generate(scenario, text, { ...options, onProgress: (done) => port.postMessage({ type: 'progress', done } satisfies WorkerMessage) }).then(
    ({ built: _built, ...report }) => port.postMessage({ type: 'done', report } satisfies WorkerMessage),
    (e: unknown) => {
      const err = e instanceof Error ? e : new Error(String(e));
      const scenarioProblems = err instanceof ScenarioError ? { problems: err.problems, source: err.source } : {};
      port.postMessage({ type: 'error', name: err.name, message: err.message, ...(err.stack !== undefined ? { stack: err.stack } : {}), ...scenarioProblems } satisfies WorkerMessage);
    },
  );
}
