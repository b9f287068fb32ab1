/** Helpers for tests that run the built command line or the generate pipeline. */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

export const ROOT = fileURLToPath(new URL('../..', import.meta.url));
export const CLI = join(ROOT, 'packages', 'io', 'bin', 'pathweave.js');

/** A fresh temporary folder. */
export function tempDir(prefix = 'pathweave-test-'): string {
  return mkdtempSync(join(tmpdir(), prefix));
}

/** Run the built `pathweave` binary. */
export function runCli(
  args: string[],
  opts: { cwd?: string; env?: NodeJS.ProcessEnv; input?: string } = {},
): { status: number; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, [CLI, ...args], {
    cwd: opts.cwd ?? ROOT,
    env: { ...process.env, ...opts.env },
    encoding: 'utf8',
    input: opts.input ?? '',
    timeout: 120_000,
  });
  return { status: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
}

/** Write a scenario object to a temporary .json file and return its path. */
export function writeScenario(dir: string, name: string, scenario: unknown): string {
  const p = join(dir, name);
  writeFileSync(p, typeof scenario === 'string' ? scenario : JSON.stringify(scenario, null, 2));
  return p;
}
