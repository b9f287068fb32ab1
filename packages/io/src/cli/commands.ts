/**
 * The commands of the `pathweave` CLI, by name. Each command's module is imported only when it
 * runs (or for `pathweave help`), so a run loads what its own command needs and no more.
 */
import type { Command, Io } from './common.js';

/** What each option does, printed by `pathweave <command> --help` under the usage line. */
const DETAILS: Record<string, string> = {
  generate: `Write the channel tensor of a scenario to a file (H [S, K, Nr, Nt] or h [S, count, Nr, Nt]).
  --out FILE          the file written (.npy, .npz or .h5); {index} and {count} are replaced by a shard's I and N
  --format F          npy, npz or h5; default from the extension of --out
  --seed N            replace the scenario's seed (integer in [0, 2^53))
  --subframes A:B     subframes A to B-1 only (half-open, like a Python slice)
  --shard I/N         shard I of N (I from 0): subframes floor(I S / N) to floor((I+1) S / N) - 1; auto or auto/N read a job array's variables
  --workers N         worker threads (1 to 256); the bytes are the same for any N
  --checksum          record the SHA-256 of the tensor bytes (always on with --shard)
  --quiet             print nothing on stdout and no progress; errors and warnings still go to stderr
  --domain D          frequency or taps, when the scenario has both band and taps
  --max-bytes SIZE    refuse an output larger than SIZE (such as 500MB or 2GiB)`,
  paths: `Print the paths between the transmitter and a receiver at one instant.
  --json              the paths as a JSON array in the scenario's explicit "paths" form
  --at SECONDS        the instant (default 0)
  --user ID|N         the receiver of a scenario with "receivers": its id, or its index from 0`,
  coverage: `Write coverage maps of a scenario: the receiver moved to every point of a grid (the scenario's "coverage" section), at t = 0.
  --out FILE          the file written (.npz, .h5, or .npy: pathGainDb only); {index} and {count} are replaced by a shard's I and N
  --format F          npy, npz or h5; default from the extension of --out
  --shard I/N         shard I of N (I from 0): grid rows floor(I R / N) to floor((I+1) R / N) - 1; auto or auto/N read a job array's variables
  --origin X,Y,Z      grid point (row 0, column 0), metres (replaces coverage.origin)
  --step M            spacing of the points along both axes, metres (replaces coverage.stepM, uStepM and vStepM)
  --columns N         points along the grid's u axis (replaces coverage.columns)
  --rows N            points along the grid's v axis (replaces coverage.rows)
  --workers N         worker threads tracing the rows (1 to 256, default 1); the bytes are the same for any N
  --plot FILE.svg     also draw the path-gain map (not with --shard)
  --quiet             print nothing on stdout and no progress; errors and warnings still go to stderr`,
  validate: `Check a scenario file: every problem with its dotted path (exit 2), or a summary (exit 0).
  --max-bytes SIZE    the output size limit checked (such as 500MB or 2GiB)`,
  inspect: `Summarise a file pathweave wrote: arrays, scenario, paths, power and the conditioning of H.
  --json              the summary as JSON`,
  merge: `Join shard part files (each with its manifest) into one file equal to the whole run.
  --out FILE          the merged file
  --quiet             print nothing on stdout and no progress`,
  plot: `Draw an SVG figure of a scenario (run in memory) or of an output file.
  --kind K            scene, delay-profile, angles, time-frequency, correlation or power; coverage for a file pathweave coverage wrote
  --out FILE.svg      the figure written
  --at SECONDS        the instant of the path snapshot (scene, delay-profile, angles)
  --user ID|N         the receiver of a scenario with "receivers": its id, or its index from 0
  --element R,T       the receive and transmit element of the time-frequency figure
  --lags N            the largest lag of the correlation figure, in subframes`,
};

/** The arguments before a `--` (after it everything is a positional). */
function options(argv: readonly string[]): readonly string[] {
  const end = argv.indexOf('--');
  return end < 0 ? argv : argv.slice(0, end);
}

/**
 * A command with the behaviour every command shares: `--help` (or `-h`) prints its usage and
 * options and exits 0; `--quiet` silences stdout (stderr still carries errors and warnings).
 */
function shared(name: string, command: Command): Command {
  return {
    usage: command.usage,
    async run(argv: string[], io: Io): Promise<number> {
      const opts = options(argv);
      if (opts.includes('--help') || opts.includes('-h')) {
        io.out(`usage: ${command.usage}\n\n${DETAILS[name] ?? ''}`.trimEnd());
        return 0;
      }
      const quiet: Io = opts.includes('--quiet') ? { out: () => undefined, err: io.err } : io;
      return command.run(argv, quiet);
    },
  };
}

/** Command name to a loader of its implementation; `pathweave help` lists them in this order. */
export const COMMANDS: Record<string, () => Promise<Command>> = {
  generate: async () => shared('generate', (await import('./generate.js')).generateCommand),
  coverage: async () => shared('coverage', (await import('./coverage.js')).coverageCommand),
  paths: async () => shared('paths', (await import('./paths.js')).pathsCommand),
  validate: async () => shared('validate', (await import('./validate.js')).validateCommand),
  inspect: async () => shared('inspect', (await import('./inspect.js')).inspectCommand),
  merge: async () => shared('merge', (await import('./merge.js')).mergeCommand),
  plot: async () => shared('plot', (await import('./plot.js')).plotCommand),
};
