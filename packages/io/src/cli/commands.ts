/**
 * The commands of the `pathweave` CLI, by name. Each command's module is imported only when it
 * runs (or for `pathweave help`), so a run loads what its own command needs and no more.
 */
import type { Command } from './common.js';

/** Command name to a loader of its implementation; `pathweave help` lists them in this order. */
export const COMMANDS: Record<string, () => Promise<Command>> = {
  generate: async () => (await import('./generate.js')).generateCommand,
  paths: async () => (await import('./paths.js')).pathsCommand,
  validate: async () => (await import('./validate.js')).validateCommand,
  inspect: async () => (await import('./inspect.js')).inspectCommand,
  merge: async () => (await import('./merge.js')).mergeCommand,
  plot: async () => (await import('./plot.js')).plotCommand,
};
