/** `pathweave inspect`: a summary of any file pathweave wrote. */
import { inspectFile } from '../inspect/inspect.js';
import { parseArgs } from './args.js';
import { onePositional, type Command, type Io } from './common.js';

async function run(argv: string[], io: Io): Promise<number> {
  const args = parseArgs('inspect', argv, { json: 'flag' });
  const file = onePositional('inspect', args.positionals, 'file');
  const summary = await inspectFile(file);
  io.out(args.flags.has('json') ? JSON.stringify(summary.data, null, 2) : summary.text);
  return 0;
}

/** The inspect command. */
export const inspectCommand: Command = {
  usage: 'pathweave inspect  <file> [--json]',
  run,
};
