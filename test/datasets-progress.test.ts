/**
 * Progress of generate (cli/progress.ts): plain periodic lines when stderr is not a terminal
 * (every 10 % or 5 s, and at the end), a bar redrawn in place with rate and time left on a
 * terminal (run under `script`, which gives the child a pseudo-terminal, and with an injected
 * stream whose isTTY is true), nothing at all with --quiet (stdout included); otherwise the final
 * line on stdout states the path, shape, bytes and seconds. Common practice for command-line tools (no outside standard).
 */
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { Progress } from '../packages/io/src/cli/progress.js';
import { hasCommand } from './support/python.js';
import { CLI, ROOT, runCli, tempDir, writeScenario } from './support/run.js';

/** The factory floor example: 400 subframes of 128 KiB, streamed as 7 blocks of 64 (8 MiB blocks). */
const factory = join(ROOT, 'examples', 'factory-floor-60ghz.json');
const LINE = /^generate (\S+): (\d+)\/(\d+) subframes \((\d+)%\), [\d.]+ subframes\/s, \S+ left$/;
const FINAL = /^wrote (\S+): H complex64 \[400, 128, 8, 16\] \(subframes 0:400\), [\d.]+ MiB \((\d+) bytes\) in [\d.]+ s$/;

describe('generate progress', () => {
  it('not a terminal: one plain line per block here (each is 16 %), ending at 100 %', () => {
    const dir = tempDir();
    const out = join(dir, 'run.npy');
    const r = runCli(['generate', factory, '--out', out]);
    expect(r.status, r.stderr).toBe(0);
    const lines = r.stderr.split('\n').filter((l) => l.startsWith('generate '));
    expect(lines.map((l) => LINE.exec(l)?.[2])).toEqual(['64', '128', '192', '256', '320', '384', '400']);
    expect(lines.at(-1)).toMatch(/400\/400 subframes \(100%\)/);
    expect(r.stderr).not.toContain('\r');
    const final = FINAL.exec(r.stdout.trim());
    expect(final?.[1]).toBe(out);
    expect(Number(final?.[2])).toBe(readFileSync(out).length);
  });

  it('--quiet: no progress at all and nothing on stdout; the file is written', () => {
    const dir = tempDir();
    const r = runCli(['generate', factory, '--out', join(dir, 'run.h5'), '--quiet']);
    expect(r.status).toBe(0);
    expect(r.stderr.split('\n').filter((l) => l !== '' && !l.startsWith('warning: '))).toEqual([]);
    expect(r.stdout).toBe('');
    expect(readFileSync(join(dir, 'run.h5')).length).toBeGreaterThan(0);
  });

  it.runIf(hasCommand('script'))('a terminal (pseudo-terminal from script): a bar redrawn with \\r, rate and time left', () => {
    const dir = tempDir();
    const scenario = writeScenario(dir, 's.json', readFileSync(factory, 'utf8'));
    const cmd = `${process.execPath} ${CLI} generate ${scenario} --out ${join(dir, 'run.npz')}`;
    const r = spawnSync('script', ['-qec', cmd, '/dev/null'], { encoding: 'utf8', timeout: 120_000 });
    expect(r.status, r.stdout).toBe(0);
    const bars = r.stdout.split('\r').filter((s) => s.startsWith('generate '));
    expect(bars.length).toBeGreaterThanOrEqual(2);
    for (const b of bars) expect(b).toMatch(/^generate \S+ \[[#.]{28}\] [\d.]+%  [\d.]+ subframes\/s  \S+ left/);
    expect(bars.at(-1)).toMatch(/\[#{28}\] 100\.0%/);
    expect(r.stdout).toMatch(/wrote \S+run\.npz: H complex64 \[400, 128, 8, 16\]/);
  });

  it('an injected TTY stream: redraws at most every 100 ms, always the last, then a newline', () => {
    const written: string[] = [];
    const p = new Progress('job', 10, { isTTY: true, write: (s: string) => written.push(s) });
    for (let i = 1; i <= 10; i++) p.update(i); // all within 100 ms: the first and the last only
    expect(written).toHaveLength(3);
    expect(written[0]).toMatch(/^\rjob \[###\.{25}\] 10\.0%/);
    expect(written[1]).toMatch(/^\rjob \[#{28}\] 100\.0%  [\d.]+ subframes\/s  0\.0s left $/);
    expect(written[2]).toBe('\n');
    const quiet: string[] = [];
    new Progress('job', 10, { isTTY: true, write: (s: string) => quiet.push(s) }, true).update(10);
    expect(quiet).toEqual([]);
  });
});
