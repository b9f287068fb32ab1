/**
 * `pathweave coverage`: a scenario's coverage maps over a grid of receiver points
 * (dataset/coverage.ts), written as a dataset like generate's, sharded over grid rows with
 * `--shard I/N` and `{index}` / `{count}` in `--out`, each part with its manifest
 * (dataset/coverage-merge.ts, merged by `pathweave merge`). Nothing is written until every row
 * is computed: an interrupted run leaves no file.
 */
import { unlink } from 'node:fs/promises';
import { computeCoverage, computeCoverageInWorkers, coverageGridOf, writeCoverage, type CoverageFacts } from '../dataset/coverage.js';
import { coverageManifestOf, writeCoverageManifest } from '../dataset/coverage-merge.js';
import { formatBytes } from '../dataset/generate.js';
import { manifestPathOf, partPath } from '../dataset/manifest.js';
import { formatFromPath, OUTPUT_FORMATS, type OutputFormat } from '../formats/index.js';
import { checkOutputPath } from '../formats/output-path.js';
import { printable } from '../formats/read-support.js';
import { coverageSvg } from '../plot/coverage.js';
import { writeFileAtomic } from '../formats/atomic.js';
import { coverageSchema, type CoverageConfig } from '../scenario/schema.js';
import { ScenarioError, loadScenario } from '../scenario/validate.js';
import { parseArgs, parseInteger, parseShard, shardRange, UsageError } from './args.js';
import { onePositional, type Command, type Io } from './common.js';
import { Progress } from './progress.js';

/** `--origin x,y,z` (or x,y). */
function parseOrigin(text: string): number[] {
  const parts = text.split(',');
  const values = parts.map((p) => (p.trim() === '' ? NaN : Number(p)));
  if (!(parts.length === 2 || parts.length === 3) || !values.every((v) => Number.isFinite(v)))
    throw new UsageError(`--origin must be x,y,z (or x,y) in metres, got ${JSON.stringify(text)}`);
  return values;
}

function parseStep(text: string): number {
  const v = Number(text);
  if (text.trim() === '' || !Number.isFinite(v) || !(v > 0)) throw new UsageError(`--step must be a spacing in metres > 0, got ${JSON.stringify(text)}`);
  return v;
}

/** The scenario's `coverage` section with the command line's options over it, validated. */
function gridConfig(section: CoverageConfig | undefined, values: Record<string, string>): CoverageConfig {
  const merged: Record<string, unknown> = { ...(section ?? {}) };
  if (values.origin !== undefined) merged.origin = parseOrigin(values.origin);
  if (values.step !== undefined) {
    merged.stepM = parseStep(values.step);
    delete merged.uStepM;
    delete merged.vStepM;
  }
  if (values.columns !== undefined) merged.columns = parseInteger('--columns', values.columns, 1, 100_000);
  if (values.rows !== undefined) merged.rows = parseInteger('--rows', values.rows, 1, 100_000);
  if (section === undefined && Object.keys(merged).length === 0)
    throw new UsageError('coverage: the scenario has no "coverage" section; add one (docs/coverage.md) or give --origin, --step, --columns and --rows');
  const parsed = coverageSchema.safeParse(merged);
  if (!parsed.success) {
    throw new ScenarioError(
      parsed.error.issues.map((i) => ({
        path: ['coverage', ...i.path.map(String)].join('.'),
        message: i.code === 'invalid_type' && i.input === undefined ? `is required (in the scenario, or by its option on the command line)` : i.message,
      })),
      'coverage grid',
    );
  }
  return parsed.data;
}

async function run(argv: string[], io: Io): Promise<number> {
  const args = parseArgs('coverage', argv, {
    out: 'value',
    format: 'value',
    shard: 'value',
    origin: 'value',
    step: 'value',
    columns: 'value',
    rows: 'value',
    plot: 'value',
    workers: 'value',
    quiet: 'flag',
    overwrite: 'flag',
  });
  const file = onePositional('coverage', args.positionals, 'scenario file');
  const out = args.values.out;
  if (out === undefined) throw new UsageError('coverage: --out <file> is required');
  if (args.values.format !== undefined && !(OUTPUT_FORMATS as readonly string[]).includes(args.values.format))
    throw new UsageError(`--format must be one of ${OUTPUT_FORMATS.join(', ')}, got ${JSON.stringify(args.values.format)}`);
  const format = (args.values.format ?? formatFromPath(out) ?? 'npz') as OutputFormat;
  if (args.values.shard !== undefined && !out.includes('{index}'))
    throw new UsageError(
      `coverage: --shard needs {index} in --out, so each shard writes its own part file (e.g. --out map.part-{index}-of-{count}.${format}); got ${JSON.stringify(out)}`,
    );
  if (args.values.shard === undefined && /\{(index|count)\}/.test(out))
    throw new UsageError(`coverage: --out ${JSON.stringify(out)} holds {index} or {count}, which only --shard fills in; give --shard I/N or name the file`);
  const plotOut = args.values.plot;
  if (plotOut !== undefined && !/\.svg$/i.test(plotOut)) throw new UsageError(`coverage: --plot must name an .svg file, got ${JSON.stringify(plotOut)}`);
  if (plotOut !== undefined && args.values.shard !== undefined)
    throw new UsageError('coverage: --plot draws a whole map; with --shard, merge the parts and run pathweave plot --kind coverage on the merged file');
  const overwrite = args.flags.has('overwrite');
  const companions = [...(format === 'npy' ? ['.json'] : []), ...(args.values.shard !== undefined ? ['.manifest.json'] : [])];
  if (args.values.shard === undefined) await checkOutputPath(out, { format, overwrite, companions });

  const { scenario, warnings, text } = await loadScenario(file);
  for (const w of warnings) io.err(`warning: ${w}`);
  const grid = coverageGridOf(gridConfig(scenario.coverage, args.values));
  let range: [number, number] = [0, grid.rows];
  let shard: { index: number; count: number; source: string } | undefined;
  if (args.values.shard !== undefined) {
    shard = parseShard(args.values.shard, process.env);
    range = shardRange(shard.index, shard.count, grid.rows);
    if (range[0] === range[1]) throw new UsageError(`--shard ${shard.index}/${shard.count} holds no grid row of ${grid.rows}`);
  }
  const target = shard === undefined ? out : partPath(out, shard.index, shard.count);
  if (shard !== undefined) {
    await checkOutputPath(target, { format, overwrite, companions });
    // Never leave a manifest beside a file it does not describe.
    await unlink(manifestPathOf(target)).catch(() => undefined);
  }
  const workers = args.values.workers === undefined ? 1 : parseInteger('--workers', args.values.workers, 1, 256);
  const quiet = args.flags.has('quiet');
  const started = process.hrtime.bigint();
  const progress = new Progress(`coverage ${printable(target)}`, range[1] - range[0], process.stderr, quiet, 'rows');
  const onProgress = (n: number): void => progress.update(n);
  // One thread by default; with --workers N the rows are traced in N worker threads (the same bytes).
  const maps =
    workers === 1 ? computeCoverage(scenario, grid, range, { onProgress }) : await computeCoverageInWorkers(scenario, grid, range, workers, { onProgress });
  const facts: CoverageFacts = { scenarioText: text, grid, rowsTotal: grid.rows };
  const fileBytes = await writeCoverage(target, format, maps, facts);
  const seconds = Number(process.hrtime.bigint() - started) / 1e9;
  let valid = 0;
  for (const v of maps.valid) valid += v;
  const points = maps.valid.length;
  io.out(
    `wrote ${target}: coverage of grid rows ${range[0]}:${range[1]} of ${grid.rows} x ${grid.columns} points (${valid} of ${points} with a path), ` +
      `${formatBytes(fileBytes)} (${fileBytes} bytes) in ${seconds.toFixed(2)} s`,
  );
  if (shard !== undefined) {
    const manifestPath = await writeCoverageManifest(target, await coverageManifestOf(target, { index: shard.index, count: shard.count }, format, maps, facts));
    if (!quiet) io.err(`manifest ${manifestPath} (part ${shard.index} of ${shard.count}, from the ${shard.source})`);
  }
  if (plotOut !== undefined) {
    await writeFileAtomic(plotOut, coverageSvg({ maps, grid, scenario }));
    io.out(`wrote ${plotOut}: coverage map of ${file}`);
  }
  return 0;
}

/** The coverage command. */
export const coverageCommand: Command = {
  usage: `pathweave coverage <scenario.json> --out <file> [--format npy|npz|h5] [--shard I/N|auto|auto/N]
                   [--origin X,Y,Z] [--step M] [--columns N] [--rows N] [--workers N] [--plot FILE.svg] [--quiet] [--overwrite]`,
  run,
};
