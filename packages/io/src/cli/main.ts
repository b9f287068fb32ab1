/**
 * The `pathweave` command line (design.md, "Command line"). Exit codes: 0 done, 1 failure
 * while running, 2 the input or the command line was refused.
 */
import { stat } from 'node:fs/promises';
import { removeLiveTemporaryFiles } from '../atomic.js';
import { buildScenario, chooseDomain, elementCount, outputEstimate, type Domain } from '../build.js';
import { formatFromPath, OUTPUT_FORMATS, type OutputFormat } from '../formats/index.js';
import { checkRequest, DEFAULT_MAX_OUTPUT_BYTES, formatBytes, generate, RequestError } from '../generate.js';
import { inspectFile } from '../inspect.js';
import { pathsJson, pathsTable } from '../paths.js';
import { loadScenario, ScenarioError, formatProblem } from '../validate.js';
import { PATHWEAVE_VERSION } from '../version.js';
import { parseArgs, parseBytes, parseInteger, parseRange, parseShard, shardRange, UsageError } from './args.js';
import { Progress } from './progress.js';

const USAGE = `pathweave ${PATHWEAVE_VERSION}: time-varying geometric multipath MIMO channels

usage:
  pathweave generate <scenario.json> --out <file> [--format npy|npz|h5] [--seed N]
                     [--subframes A:B] [--shard I/N|auto|auto/N] [--workers N] [--quiet]
                     [--domain frequency|taps] [--max-bytes SIZE]
  pathweave paths    <scenario.json> [--json] [--at <seconds>]
  pathweave validate <scenario.json> [--max-bytes SIZE]
  pathweave inspect  <file>
  pathweave help | --version

exit codes: 0 done, 1 failure while running, 2 input or command line refused`;

interface Io {
  out: (s: string) => void;
  err: (s: string) => void;
}

const defaultIo: Io = {
  out: (s) => process.stdout.write(s + '\n'),
  err: (s) => process.stderr.write(s + '\n'),
};

/** Run the command line; resolves to the exit code. */
export async function main(argv: readonly string[], io: Io = defaultIo): Promise<number> {
  const [command, ...rest] = argv;
  try {
    switch (command) {
      case 'generate':
        return await generateCommand(rest, io);
      case 'validate':
        return await validateCommand(rest, io);
      case 'paths':
        return await pathsCommand(rest, io);
      case 'inspect':
        return await inspectCommand(rest, io);
      case undefined:
      case 'help':
      case '--help':
      case '-h':
        io.out(USAGE);
        return command === undefined ? 2 : 0;
      case '--version':
        io.out(PATHWEAVE_VERSION);
        return 0;
      default:
        throw new UsageError(`unknown command ${JSON.stringify(command)}; commands are generate, paths, validate, inspect, help`);
    }
  } catch (e) {
    if (e instanceof ScenarioError) {
      io.err(`error: ${e.source}: ${e.problems.length} problem${e.problems.length === 1 ? '' : 's'}`);
      for (const p of e.problems) io.err(`  ${formatProblem(p)}`);
      return 2;
    }
    if (e instanceof UsageError || e instanceof RequestError) {
      io.err(`error: ${e.message}`);
      if (e instanceof UsageError) io.err(`run "pathweave help" for usage`);
      return 2;
    }
    io.err(`error: ${e instanceof Error ? e.message : String(e)}`);
    if (process.env.PATHWEAVE_DEBUG && e instanceof Error) io.err(e.stack ?? '');
    return 1;
  }
}

function onePositional(command: string, positionals: string[], what: string): string {
  if (positionals.length !== 1) throw new UsageError(`${command}: expected one ${what}, got ${positionals.length === 0 ? 'none' : positionals.map((p) => JSON.stringify(p)).join(' ')}`);
  return positionals[0]!;
}

function parseDomain(text: string | undefined): Domain | undefined {
  if (text === undefined) return undefined;
  if (text !== 'frequency' && text !== 'taps') throw new UsageError(`--domain must be frequency or taps, got ${JSON.stringify(text)}`);
  return text;
}

async function generateCommand(argv: string[], io: Io): Promise<number> {
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

async function validateCommand(argv: string[], io: Io): Promise<number> {
  const args = parseArgs('validate', argv, { domain: 'value', 'max-bytes': 'value' });
  const file = onePositional('validate', args.positionals, 'scenario file');
  const { scenario, warnings } = await loadScenario(file);
  const domain = chooseDomain(scenario, parseDomain(args.values.domain));
  const maxBytes = args.values['max-bytes'] === undefined ? DEFAULT_MAX_OUTPUT_BYTES : parseBytes('--max-bytes', args.values['max-bytes']);
  // The same up-front refusals as generate (size limit, memory), before building anything.
  checkRequest(scenario, domain, [0, scenario.timing.subframes], maxBytes, scenario.paths?.length ?? 1);
  const built = buildScenario(scenario, { domain });
  const est = outputEstimate(scenario, domain);
  const arrayLine = (name: string, a: typeof scenario.transmitter.array): string => {
    const o = a.orientation ?? {};
    const layout = a.kind === 'ula' ? `ULA of ${a.elements}` : a.kind === 'upa' ? `UPA ${a.rows} rows x ${a.columns} columns` : `custom, ${a.positions!.length} elements`;
    const spacing = a.kind === 'custom' ? '' : `, spacing ${a.spacingWavelengths ?? 0.5} wavelengths`;
    return `  ${name.padEnd(12)} ${layout}${spacing}, yaw ${o.yawDeg ?? 0} pitch ${o.pitchDeg ?? 0} roll ${o.rollDeg ?? 0} deg, ${elementCount(a)} elements`;
  };
  io.out(`${file}: valid`);
  io.out(`  carrier      ${(scenario.carrierHz / 1e9).toFixed(3)} GHz, ${scenario.timing.subframes} subframes of ${scenario.timing.subframeS * 1e3} ms, fading ${scenario.fading.model}, seed ${scenario.seed}`);
  io.out(arrayLine('transmitter', scenario.transmitter.array));
  io.out(arrayLine('receiver', (scenario.receiver ?? scenario.receivers![0]!).array));
  io.out(`  paths        ${built.paths.length} (${scenario.scene !== undefined ? 'traced from the scene' : 'explicit'})`);
  for (const [i, c] of built.generator.correlations.entries()) {
    if (scenario.fading.model !== 'gauss-markov') break;
    if (i >= 8) {
      io.out(`               ... ${built.generator.correlations.length - 8} more`);
      break;
    }
    io.out(`               ${built.paths[i]!.id}: alpha ${c.alpha.toFixed(6)} (${c.source}${c.dopplersHz.length > 0 ? `, f_D ${c.dopplersHz.map((f) => f.toFixed(1)).join(' and ')} Hz` : ''})`);
  }
  const name = domain === 'frequency' ? 'H' : 'h';
  io.out(`  output       ${name} ${scenario.precision ?? 'complex64'} [${est.shape.join(', ')}], ${formatBytes(est.bytes)} (${est.bytes} bytes) as .npy`);
  for (const w of new Set([...warnings, ...built.warnings])) io.out(`  warning: ${w}`);
  return 0;
}

async function pathsCommand(argv: string[], io: Io): Promise<number> {
  const args = parseArgs('paths', argv, { json: 'flag', at: 'value' });
  const file = onePositional('paths', args.positionals, 'scenario file');
  const { scenario } = await loadScenario(file);
  let at = 0;
  if (args.values.at !== undefined) {
    at = Number(args.values.at);
    if (!Number.isFinite(at) || at < 0) throw new UsageError(`--at must be a time in seconds >= 0, got ${JSON.stringify(args.values.at)}`);
  }
  const built = buildScenario(scenario);
  if (args.flags.has('json')) io.out(JSON.stringify(pathsJson(built.paths), null, 2));
  else io.out(pathsTable(built.paths));
  return 0;
}

async function inspectCommand(argv: string[], io: Io): Promise<number> {
  const args = parseArgs('inspect', argv, { json: 'flag' });
  const file = onePositional('inspect', args.positionals, 'file');
  const summary = await inspectFile(file);
  io.out(args.flags.has('json') ? JSON.stringify(summary.data, null, 2) : summary.text);
  return 0;
}
