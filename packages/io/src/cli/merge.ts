/** `pathweave merge`: the part files of a sharded run into one file (merge.ts). */
import { formatBytes } from '../dataset/generate.js';
import { isCoveragePart, mergeCoverage } from '../dataset/coverage-merge.js';
import { merge } from '../dataset/merge.js';
import { manifestPathOf } from '../dataset/manifest.js';
import { formatFromPath } from '../formats/index.js';
import { checkOutputPath } from '../formats/output-path.js';
import { printable } from '../formats/read-support.js';
import { parseArgs, UsageError } from './args.js';
import type { Command, Io } from './common.js';
import { Progress } from './progress.js';

async function run(argv: string[], io: Io): Promise<number> {
  const args = parseArgs('merge', argv, { out: 'value', quiet: 'flag', overwrite: 'flag', 'allow-versions': 'flag' });
  const out = args.values.out;
  if (out === undefined) throw new UsageError('merge: --out <file> is required');
  if (args.positionals.length === 0) throw new UsageError('merge: give the part files, e.g. run.part-*-of-8.h5');
  const format = formatFromPath(out);
  if (format === undefined) throw new UsageError(`merge: cannot tell the output format of ${JSON.stringify(out)}; name it .npy, .npz or .h5`);
  const inputs = args.positionals.flatMap((p) => [p, `${p}.json`, manifestPathOf(p)]);
  await checkOutputPath(out, { format, overwrite: args.flags.has('overwrite'), companions: format === 'npy' ? ['.json'] : [], inputs });
  const controller = new AbortController();
  let interrupted: string | undefined;
  const onSignal = (signal: NodeJS.Signals): void => {
    interrupted ??= signal;
    controller.abort(new Error(`interrupted by ${signal}`));
  };
  process.on('SIGINT', onSignal);
  process.on('SIGTERM', onSignal);
  let progress: Progress | undefined;
  try {
    if (await isCoveragePart(args.positionals[0]!)) {
      // Parts of `pathweave coverage --shard`: maps, not a channel tensor (coverage-merge.ts).
      const report = await mergeCoverage(args.positionals, out, { signal: controller.signal });
      io.out(
        `wrote ${report.out}: coverage ${report.rows} x ${report.columns} points from ${report.parts} parts, ${formatBytes(report.fileBytes)} (${report.fileBytes} bytes), sha256 ${report.sha256}`,
      );
      return 0;
    }
    const report = await merge(args.positionals, out, {
      signal: controller.signal,
      allowVersions: args.flags.has('allow-versions'),
      onProgress: (done, total) => {
        progress ??= new Progress(`merge ${printable(out)}`, total, process.stderr, args.flags.has('quiet')); // written to stderr directly: escaped here
        progress.update(done);
      },
    });
    for (const w of report.warnings) io.err(`warning: ${w}`);
    io.out(
      `wrote ${report.out}: ${report.tensorName} ${report.dtype} [${report.shape.join(', ')}] from ${report.parts} parts, ${formatBytes(report.fileBytes)} (${report.fileBytes} bytes), tensor sha256 ${report.sha256}, in ${report.seconds.toFixed(2)} s`,
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

/** The merge command. */
export const mergeCommand: Command = {
  usage: `pathweave merge    <part files...> --out <file> [--quiet] [--overwrite] [--allow-versions]
    --overwrite       replace an existing output even if it is read-only or another user's
    --allow-versions  merge parts written by different pathweave versions (named in a warning)`,
  run,
};
