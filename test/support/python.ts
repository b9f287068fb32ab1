/**
 * The reference interpreter for interop tests: Debian's /usr/bin/python3 with numpy, scipy and
 * h5py (installed by .ci/run when missing). PATHWEAVE_PYTHON overrides the path.
 * In CI a missing interpreter or module fails the tests; elsewhere those tests are skipped with
 * a message, so a contributor without the packages still gets a useful run.
 *
 * Use the answer to skip, never to return early: `it.runIf(hasPython('numpy'))(...)` or
 * `describe.skipIf(!hasPython('numpy'))(...)`, so the run reports a skip instead of a pass that
 * asserted nothing. A skipped suite is still collected: call python in `beforeAll` or in the
 * test, not in the describe body.
 */
import { execFileSync, spawnSync } from 'node:child_process';

const PYTHON = process.env.PATHWEAVE_PYTHON ?? '/usr/bin/python3';

const cache = new Map<string, boolean>();

/** True when PYTHON imports every module named. */
export function hasPython(...modules: string[]): boolean {
  const key = modules.join(',');
  let ok = cache.get(key);
  if (ok === undefined) {
    const r = spawnSync(PYTHON, ['-c', modules.map((m) => `import ${m}`).join('; ') || 'pass'], { stdio: 'ignore' });
    ok = r.status === 0;
    cache.set(key, ok);
    if (!ok && process.env.CI) throw new Error(`${PYTHON} cannot import ${key}; .ci/run should have installed it`);
    if (!ok) console.warn(`skipping interop tests: ${PYTHON} cannot import ${key} (see DEVELOPERS.md)`);
  }
  return ok;
}

/** Run a Python snippet (argv after it in sys.argv[1:]) and return its stdout. */
export function python(code: string, args: string[] = [], input?: string): string {
  return execFileSync(PYTHON, ['-c', code, ...args], { encoding: 'utf8', input, maxBuffer: 1 << 28 });
}

/** Run a Python snippet that prints one JSON document, and parse it. */
export function pythonJson<T = unknown>(code: string, args: string[] = [], input?: string): T {
  return JSON.parse(python(code, args, input)) as T;
}

/** Other command-line tools used as references (h5dump). */
export function hasCommand(cmd: string): boolean {
  const r = spawnSync('sh', ['-c', `command -v ${cmd}`], { stdio: 'ignore' });
  const ok = r.status === 0;
  if (!ok && process.env.CI) throw new Error(`${cmd} is missing; .ci/run should have installed it`);
  return ok;
}
