/**
 * The `pathweave` command line (docs/conventions.md, "Command line"). Exit codes: 0 done, 1 failure
 * while running, 2 the input or the command line was refused.
 */
import { RequestError } from '../dataset/generate.js';
import { ScenarioError, formatProblem } from '../scenario/validate.js';
import { PATHWEAVE_VERSION } from '../version.js';
import { UsageError } from './args.js';
import { COMMANDS } from './commands.js';
import type { Io } from './common.js';

function usage(): string {
  return [
    `pathweave ${PATHWEAVE_VERSION}: time-varying geometric multipath MIMO channels`,
    '',
    'usage:',
    ...Object.values(COMMANDS).map((c) => `  ${c.usage}`),
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
export async function main(argv: readonly string[], io: Io = defaultIo): Promise<number> {
  const [command, ...rest] = argv;
  try {
    if (command === undefined || command === 'help' || command === '--help' || command === '-h') {
      io.out(usage());
      return command === undefined ? 2 : 0;
    }
    if (command === '--version') {
      io.out(PATHWEAVE_VERSION);
      return 0;
    }
    const c = COMMANDS[command];
    if (c === undefined) throw new UsageError(`unknown command ${JSON.stringify(command)}; commands are ${Object.keys(COMMANDS).join(', ')}, help`);
    return await c.run(rest, io);
  } catch (e) {
    if (e instanceof ScenarioError) {
      io.err(`error: ${e.source}: ${e.problems.length} problem${e.problems.length === 1 ? '' : 's'}`);
      for (const p of e.problems) io.err(`  ${formatProblem(p)}`);
      return 2;
    }
    if (e instanceof UsageError || e instanceof RequestError) {
      io.err(`error: ${e.message}`);
      if (e instanceof UsageError) io.err('run "pathweave help" for usage');
      return 2;
    }
    io.err(`error: ${e instanceof Error ? e.message : String(e)}`);
    if (process.env.PATHWEAVE_DEBUG && e instanceof Error) io.err(e.stack ?? '');
    return 1;
  }
}
