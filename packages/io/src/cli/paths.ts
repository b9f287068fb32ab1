/** `pathweave paths`: the paths of a scenario as a table or as explicit-path JSON. */
import { buildScenario, summarizeTraced } from '../scenario/build.js';
import { pathsJson, pathsTable } from '../scenario/paths.js';
import { loadScenario } from '../scenario/validate.js';
import { parseArgs, UsageError } from './args.js';
import { onePositional, type Command, type Io } from './common.js';

async function run(argv: string[], io: Io): Promise<number> {
  const args = parseArgs('paths', argv, { json: 'flag', at: 'value', user: 'value' });
  const file = onePositional('paths', args.positionals, 'scenario file');
  const { scenario } = await loadScenario(file);
  let at = 0;
  if (args.values.at !== undefined) {
    at = Number(args.values.at);
    if (args.values.at.trim() === '' || !Number.isFinite(at) || at < 0)
      throw new UsageError(`--at must be a time in seconds >= 0, got ${JSON.stringify(args.values.at)}`);
  }
  const built = buildScenario(scenario);
  let userIndex = 0;
  if (args.values.user !== undefined) {
    const ids = built.users.map((u) => u.id);
    userIndex = ids.indexOf(args.values.user);
    if (userIndex < 0 || args.values.user === '') {
      const index = /^\d+$/.test(args.values.user) ? Number(args.values.user) : -1;
      const named = ids.filter((id) => id !== '');
      if (!(index >= 0 && index < ids.length))
        throw new UsageError(
          `paths: --user must be ${named.length > 0 ? `a receiver id (${named.join(', ')}) or ` : ''}an index in [0, ${ids.length - 1}], got ${JSON.stringify(args.values.user)}`,
        );
      userIndex = index;
    }
  }
  const user = built.users[userIndex]!;
  // With clusters the specular paths are listed (each stands for its sub-paths `${id}#k`).
  const specular = user.specularTimeline;
  const clustered = user.timeline !== specular;
  const records = specular.pathsAt !== undefined ? specular.pathsAt(at).map(summarizeTraced) : (user.specularPaths ?? user.paths);
  if (records.length === 0) {
    io.err(`no path exists at t = ${at} s between the transmitter and ${built.multiUser ? `user ${user.id}` : 'the receiver'}`);
    return 1;
  }
  if (args.flags.has('json')) io.out(JSON.stringify(pathsJson(records), null, 2));
  else {
    const who = built.multiUser ? `, user ${user.id}` : '';
    const note = clustered ? `, each widened into a cluster of sub-paths (${user.timeline.ids.length} in all)` : '';
    io.out(`${file}: ${records.length} path${records.length === 1 ? '' : 's'} at t = ${at} s${who}${note}`);
    io.out(pathsTable(records));
  }
  return 0;
}

/** The paths command. */
export const pathsCommand: Command = {
  usage: 'pathweave paths    <scenario.json> [--json] [--at <seconds>] [--user ID|N]',
  run,
};
