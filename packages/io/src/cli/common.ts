/**
 * Shared pieces of the command implementations: the output channel and argument helpers.
 */
import { UsageError } from './args.js';
import type { Domain } from '../scenario/plan.js';

/** Where a command writes: stdout lines and stderr lines. */
export interface Io {
  out: (s: string) => void;
  err: (s: string) => void;
}

/** A command of the `pathweave` CLI. */
export interface Command {
  /** One usage line (or several), shown by `pathweave help`. */
  usage: string;
  /** Run with the arguments after the command name; resolves to the exit code. */
  run(argv: string[], io: Io): Promise<number>;
}

/** The single positional argument of a command. */
export function onePositional(command: string, positionals: string[], what: string): string {
  if (positionals.length !== 1)
    throw new UsageError(`${command}: expected one ${what}, got ${positionals.length === 0 ? 'none' : positionals.map((p) => JSON.stringify(p)).join(' ')}`);
  return positionals[0]!;
}

/** `--domain frequency|taps`. */
export function parseDomain(text: string | undefined): Domain | undefined {
  if (text === undefined) return undefined;
  if (text !== 'frequency' && text !== 'taps') throw new UsageError(`--domain must be frequency or taps, got ${JSON.stringify(text)}`);
  return text;
}
