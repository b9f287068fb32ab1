/**
 * Crash safety of `generate` (docs/conventions.md, "Command line"; atomic.ts): a run interrupted mid-way
 * never leaves a file under the output name that looks complete. SIGINT and SIGTERM: the hidden
 * temporary file is removed within about a second, the exit code is 1 and stderr says what was
 * (not) written; an earlier file of that name survives untouched. kill -9 (no handler can run):
 * only a hidden `.name.*.part` temporary remains, never the final name. Each case kills a real
 * child process once it has written its first block.
 */
import { spawn } from 'node:child_process';
import { existsSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { CLI, ROOT, tempDir, writeScenario } from './support/run.js';

/** The 60 GHz factory floor with 3000 subframes: 375 MiB, several seconds on this machine. */
function bigScenario(): Record<string, any> {
  const s = JSON.parse(readFileSync(join(ROOT, 'examples', 'factory-floor-60ghz.json'), 'utf8')) as Record<string, any>;
  s.timing.subframes = 3000;
  return s;
}

const sleep = (ms: number): Promise<void> => new Promise((r) => setTimeout(r, ms));

interface Outcome {
  code: number | null;
  signal: NodeJS.Signals | null;
  stderr: string;
  /** Milliseconds from the kill to the exit. */
  exitAfterMs: number;
  /** Milliseconds from the kill until no temporary file was left (polled every 10 ms). */
  temporaryGoneAfterMs: number;
  /** Files of the folder when the kill was sent. */
  atKill: string[];
}

/** Start generate, wait until its temporary file exists and a block was written, then send `signal`. */
async function interrupt(dir: string, out: string, signal: NodeJS.Signals): Promise<Outcome> {
  const scenario = writeScenario(dir, 'big.json', bigScenario());
  const child = spawn(process.execPath, [CLI, 'generate', scenario, '--out', out, '--max-bytes', '1GiB'], { cwd: dir, stdio: ['ignore', 'pipe', 'pipe'] });
  let stderr = '';
  child.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
  const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) =>
    child.on('exit', (code, sig) => resolve({ code, signal: sig })),
  );
  const base = out.split('/').pop()!;
  const deadline = Date.now() + 60_000;
  // Poll for the hidden temporary and the first progress line (a block is on disk).
  while (!(readdirSync(dir).some((f) => f.startsWith(`.${base}.`) && f.endsWith('.part')) && /\d+\/3000 subframes/.test(stderr))) {
    if (Date.now() > deadline || child.exitCode !== null) throw new Error(`the run did not start writing in time: ${stderr}`);
    await sleep(20);
  }
  const atKill = readdirSync(dir);
  const killedAt = Date.now();
  child.kill(signal);
  let temporaryGoneAfterMs = Infinity;
  let finished = false;
  const result = exited.then((x) => {
    finished = true;
    return x;
  });
  while (!finished) {
    if (temporaryGoneAfterMs === Infinity && !readdirSync(dir).some((f) => f.endsWith('.part'))) temporaryGoneAfterMs = Date.now() - killedAt;
    await sleep(10);
  }
  const exitAfterMs = Date.now() - killedAt;
  if (temporaryGoneAfterMs === Infinity && !readdirSync(dir).some((f) => f.endsWith('.part'))) temporaryGoneAfterMs = exitAfterMs;
  return { ...(await result), stderr, exitAfterMs, temporaryGoneAfterMs, atKill };
}

describe('interrupted generate leaves nothing that looks complete', () => {
  it.each([
    ['SIGINT', 'h5'],
    ['SIGINT', 'npy'],
    ['SIGTERM', 'npz'],
    ['SIGTERM', 'h5'],
  ] as const)('%s on a .%s run: temporary removed, exit 1, earlier file untouched', async (signal, ext) => {
    const dir = tempDir();
    const out = join(dir, `run.${ext}`);
    writeFileSync(out, 'an earlier file that must survive');
    const r = await interrupt(dir, out, signal);
    expect(r.atKill.some((f) => f.startsWith(`.run.${ext}.`) && f.endsWith('.part'))).toBe(true);
    expect(r.code, r.stderr).toBe(1);
    expect(r.stderr).toMatch(new RegExp(`error: interrupted by ${signal} after \\d+ of 3000 subframes; .*nothing was written to .*run\\.${ext}`));
    // The handler removes the temporary as soon as it runs: within a second. The process
    // leaves after the block in progress or at the handler's 0.9 s deadline, plus teardown of
    // worker threads on a shared 2-core machine: 3 s.
    expect(r.temporaryGoneAfterMs).toBeLessThan(1000);
    expect(r.exitAfterMs).toBeLessThan(3000);
    expect(readdirSync(dir).sort()).toEqual(['big.json', `run.${ext}`]);
    expect(readFileSync(out, 'utf8')).toBe('an earlier file that must survive');
    expect(existsSync(`${out}.json`)).toBe(false);
  });

  it.each(['npy', 'npz', 'h5'] as const)('kill -9 on a .%s run: only the hidden .part temporary remains', async (ext) => {
    const dir = tempDir();
    const out = join(dir, `run.${ext}`);
    const r = await interrupt(dir, out, 'SIGKILL');
    expect(r.signal).toBe('SIGKILL');
    const left = readdirSync(dir).filter((f) => f !== 'big.json');
    expect(left).toHaveLength(1);
    expect(left[0]).toMatch(new RegExp(`^\\.run\\.${ext}\\.\\d+-[0-9a-f]+\\.part$`));
    expect(existsSync(out)).toBe(false);
  });
});
