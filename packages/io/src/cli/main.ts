/**
 * The `pathweave` command line (docs/conventions.md, "Command line"). Exit codes: 0 done, 1 failure
 * while running, 2 the input or the command line was refused.
 */
import { InputFileError, printable } from '../formats/read-support.js';
// The scenario, dataset and output-path modules are imported when an error is classified (they
// are loaded already when one of theirs was thrown), so --version and help start without them.
import { PATHWEAVE_VERSION } from '../version.js';
import { UsageError } from './args.js';
import { COMMANDS } from './commands.js';
import type { Io } from './common.js';

async function usage(): Promise<string> {
  const commands = await Promise.all(Object.values(COMMANDS).map((load) => load()));
  return [
    `pathweave ${PATHWEAVE_VERSION}: time-varying geometric multipath MIMO channels`,
    '',
    'usage:',
    ...commands.map((c) => `  ${c.usage}`),
    '  pathweave help | --version',
    '',
    'exit codes: 0 done, 1 failure while running, 2 input or command line refused',
  ].join('\n');
}

const defaultIo: Io = {
  out: (s) => process.stdout.write(s + '\n'),
  err: (s) => process.stderr.write(s + '\n'),
};

/**
 * Run the command line; resolves to the exit code.
 * @example
 * const printed: string[] = [];
 * await main(['--version'], { out: (s) => printed.push(s), err: (s) => printed.push(s) }) // 0
 * printed // ['0.1.0']
 */
export async function main(argv: readonly string[], given: Io = defaultIo): Promise<number> {
  // Names and texts from files reach the terminal with their control characters escaped.
  const io: Io = { out: (s) => given.out(printable(s)), err: (s) => given.err(printable(s)) };
  const [command, ...rest] = argv;
  try {
    if (command === undefined || command === 'help' || command === '--help' || command === '-h') {
      io.out(await usage());
      return command === undefined ? 2 : 0;
    }
    if (command === '--version') {
      io.out(PATHWEAVE_VERSION);
      return 0;
    }
    const load = Object.hasOwn(COMMANDS, command) ? COMMANDS[command] : undefined;
    if (load === undefined) throw new UsageError(`unknown command ${JSON.stringify(command)}; commands are ${Object.keys(COMMANDS).join(', ')}, help`);
    return await (await load()).run(rest, io);
  } catch (e) {
    const { ScenarioError, formatProblem } = await import('../scenario/validate.js');
    const { RequestError } = await import('../dataset/generate.js');
    const { OutputPathError } = await import('../formats/output-path.js');
    if (e instanceof ScenarioError) {
      io.err(`error: ${e.source}: ${e.problems.length} problem${e.problems.length === 1 ? '' : 's'}`);
      for (const p of e.problems) io.err(`  ${formatProblem(p)}`);
      return 2;
    }
    if (e instanceof UsageError || e instanceof RequestError || e instanceof InputFileError || e instanceof OutputPathError) {
      io.err(`error: ${e.message}`);
      if (e instanceof UsageError)
        io.err(
          command !== undefined && COMMANDS[command] !== undefined ? `run "pathweave ${command} --help" for its options` : 'run "pathweave help" for usage',
        );
      return 2;
    }
    io.err(`error: ${e instanceof Error ? e.message : String(e)}`);
    if (process.env.PATHWEAVE_DEBUG && e instanceof Error) io.err(e.stack ?? '');
    return 1;
  }
}
