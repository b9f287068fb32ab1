/** The commands of the `pathweave` CLI, by name (each lives in its own module). */
import type { Command } from './common.js';
import { generateCommand } from './generate.js';
import { inspectCommand } from './inspect.js';
import { pathsCommand } from './paths.js';
import { validateCommand } from './validate.js';

/** Command name to implementation; `pathweave help` lists them in this order. */
export const COMMANDS: Record<string, Command> = {
  generate: generateCommand,
  paths: pathsCommand,
  validate: validateCommand,
  inspect: inspectCommand,
  merge: (await import('./merge.js')).mergeCommand,
  plot: (await import('./plot.js')).plotCommand,
};
