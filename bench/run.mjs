#!/usr/bin/env node
/**
 * `pnpm bench`: pathweave against the numpy a researcher would write (bench/numpy_side.py), in
 * the same run, alternating the two sides pair by pair (the machine is shared and noisy), with
 * the median and the spread (min-max) of each side and of the ratio.
 *
 * usage: node bench/run.mjs [--json] [--markdown] [--pairs N] [--only dataset,wideband,taps,tracer] [--combos memory:1,memory:default,e2e:1,e2e:default,e2e:pool,e2e-checksum:1]
 *        [--no-disk] [--no-startup] [--no-kernels] [--no-scaling] [--no-pool-scaling]
 * Numpy side: the first python3 on PATH (PATHWEAVE_BENCH_PYTHON overrides), with
 * OPENBLAS_CORETYPE and OPENBLAS_L2_SIZE unset in its command alone; one-thread runs set
 * OPENBLAS_NUM_THREADS=OMP_NUM_THREADS=1. pathweave one thread = workers 1 (no worker thread);
 * default in memory = the library's in-memory default, a SubframeFiller (one worker per core)
 * filling the whole tensor into one shared array; default end to end = generate's default
 * workers (defaultWorkers: 1 on up to 2 cores, else one per core);
 * "pool" = one worker thread per available core, whatever the default. End to end runs are
 * the command line (`packages/io/bin/pathweave.js generate --quiet`, whole process), plain runs
 * (no checksum); "e2e-checksum" adds --checksum, the tensor's SHA-256 (as a --shard run does).
 * Throughput: complex coefficients per second (and bytes, 8 per complex64 coefficient).
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync, readdirSync } from 'node:fs';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { blockSubframes, buildScenario, parseScenarioText } from '@pathweave/io';
import { defaultWorkers } from '../packages/io/dist/dataset/workers/pool.js';
import { coefficientsOf, WORKLOADS } from './workloads.mjs';

const here = dirname(fileURLToPath(import.meta.url));
const argv = process.argv.slice(2);
const flag = (name) => argv.includes(name);
const value = (name, d) => (argv.includes(name) ? argv[argv.indexOf(name) + 1] : d);
const JSON_OUT = flag('--json');
const MARKDOWN = flag('--markdown'); // also print the tables of docs/performance.md at the end
const PAIRS = Number(value('--pairs', '5'));
const ONLY = value('--only', 'dataset,wideband,taps,tracer').split(',');
const COMBOS = argv.includes('--combos') ? value('--combos').split(',') : undefined; // e.g. memory:1,e2e:default
const PYTHON = process.env.PATHWEAVE_BENCH_PYTHON ?? 'python3';
const MEMDIR = process.env.PATHWEAVE_BENCH_MEMDIR ?? '/dev/shm';
const DISKDIR = process.env.PATHWEAVE_BENCH_DISKDIR ?? tmpdir();
const log = (s) => (JSON_OUT ? process.stderr.write(s + '\n') : process.stdout.write(s + '\n'));

const numpyEnv = (threads) => {
  const env = { ...process.env };
  delete env.OPENBLAS_CORETYPE;
  delete env.OPENBLAS_L2_SIZE;
  if (threads === 1) Object.assign(env, { OPENBLAS_NUM_THREADS: '1', OMP_NUM_THREADS: '1', MKL_NUM_THREADS: '1' });
  return env;
};

function child(cmd, args, env = process.env) {
  const t0 = process.hrtime.bigint();
  const r = spawnSync(cmd, args, { env, encoding: 'utf8', maxBuffer: 1 << 24 });
  const wall = Number(process.hrtime.bigint() - t0) / 1e9;
  if (r.status !== 0) throw new Error(`${cmd} ${args.join(' ')} failed (${r.status}): ${r.stderr}`);
  const lines = r.stdout.trim().split('\n');
  return { ...JSON.parse(lines[lines.length - 1]), wallSeconds: wall };
}
const pw = (args) => child(process.execPath, [join(here, 'pathweave_side.mjs'), ...args]);
const CLI_BIN = join(here, '..', 'packages', 'io', 'bin', 'pathweave.js');
const TIME_BIN = existsSync('/usr/bin/time') ? '/usr/bin/time' : undefined;
/**
 * End to end as a user runs it: `pathweave generate` (the bin, bundled), whole process, to `out`
 * (.npy); workers '1', 'N' or 'default' (no flag: generate's default); `checksum` adds
 * --checksum. Reports the wall time, the kernel from the .npy's side file, the worker count and
 * the peak RSS (from /usr/bin/time when present).
 */
function pwCommand(scenarioFile, workers, out, { checksum = false, blocks }) {
  const args = [
    CLI_BIN,
    'generate',
    scenarioFile,
    '--out',
    out,
    '--quiet',
    ...(workers === 'default' ? [] : ['--workers', workers]),
    ...(checksum ? ['--checksum'] : []),
  ];
  const t0 = process.hrtime.bigint();
  const r = TIME_BIN
    ? spawnSync(TIME_BIN, ['-f', 'rss %M', process.execPath, ...args], { encoding: 'utf8' })
    : spawnSync(process.execPath, args, { encoding: 'utf8' });
  const wallSeconds = Number(process.hrtime.bigint() - t0) / 1e9;
  if (r.status !== 0) throw new Error(`pathweave ${args.slice(1).join(' ')} failed (${r.status}): ${r.stderr}`);
  const rss = /rss (\d+)\s*$/.exec(r.stderr);
  const side = JSON.parse(readFileSync(`${out}.json`, 'utf8'));
  return {
    wallSeconds,
    kernel: side.kernel,
    workers: workers === 'default' ? defaultWorkers(blocks) : Number(workers),
    maxRssBytes: rss ? Number(rss[1]) * 1024 : NaN,
  };
}
/** pathweave_side.mjs without blocking, so that two can run at once; resolves with its JSON line. */
const pwAsync = (args, env) =>
  new Promise((resolve, reject) => {
    const c = spawn(process.execPath, [join(here, 'pathweave_side.mjs'), ...args], { env: { ...process.env, ...env }, stdio: ['ignore', 'pipe', 'inherit'] });
    let text = '';
    c.stdout.on('data', (d) => (text += d));
    c.on('error', reject);
    c.on('close', (code) =>
      code === 0 ? resolve(JSON.parse(text.trim().split('\n').pop())) : reject(new Error(`pathweave_side.mjs ${args.join(' ')} failed (${code})`)),
    );
  });
const np = (args, threads) => child(PYTHON, [join(here, 'numpy_side.py'), ...args], numpyEnv(threads));

const median = (xs) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};
const stats = (xs) => ({ median: median(xs), min: Math.min(...xs), max: Math.max(...xs), n: xs.length });
const fmt = (x) => (x >= 1e4 || x < 1e-2 ? x.toExponential(2) : x.toFixed(2));
const spread = (s) => `${fmt(s.median)} [${fmt(s.min)}-${fmt(s.max)}]`;

function numpyInfo() {
  const env = { ...numpyEnv(0), OPENBLAS_VERBOSE: '2' };
  const r = spawnSync(
    PYTHON,
    [
      '-c',
      'import platform, numpy; print("Python " + platform.python_version() + ", numpy", numpy.__version__); c = numpy.show_config(mode="dicts"); print(c["Build Dependencies"]["blas"]["name"], c["Build Dependencies"]["blas"].get("version", ""))',
    ],
    { env, encoding: 'utf8' },
  );
  const core = /Core: (\S+)/.exec(r.stdout + r.stderr)?.[1] ?? 'unknown';
  const [exe, blas] = r.stdout.trim().split('\n');
  return { python: exe, blas, openblasCore: core };
}

/** The tables of docs/performance.md from this run's rows (figures as printed: median [min-max]). */
function markdown(rows, info, loads) {
  const lines = [];
  const load = (r) => (r.loadAverage1m ? `${r.loadAverage1m.before.toFixed(1)}-${r.loadAverage1m.after.toFixed(1)}` : '');
  const modeName = { memory: 'memory', e2e: 'e2e', 'e2e-checksum': 'e2e with checksum' };
  const threadsName = { 1: '1 vs 1', default: 'default vs default', pool: `pool (${availableParallelism()} workers) vs default` };
  lines.push(
    `Run of \`node bench/run.mjs ${argv.join(' ')}\` (${PAIRS} pairs per figure, ${availableParallelism()} cores, node ${process.version}, ` +
      `${info.python}, ${info.blas}, OpenBLAS core ${info.openblasCore}); load average (1, 5, 15 min) ${loads.start.map((x) => x.toFixed(1)).join(', ')} at the start, ` +
      `${loads.end.map((x) => x.toFixed(1)).join(', ')} at the end.`,
    '',
  );
  const ratioRows = rows.filter((r) => r.ratio !== undefined);
  if (ratioRows.length > 0) {
    lines.push('| workload | figure | pathweave coeff/s | numpy coeff/s | ratio | kernel | load |', '|---|---|---|---|---|---|---|');
    for (const r of ratioRows)
      lines.push(
        `| ${r.workload} | ${modeName[r.mode]}, ${threadsName[r.threads]} (pathweave ${r.wholeTensor ? 'SubframeFiller, whole tensor, ' : ''}workers ${r.pathweaveWorkers}) | ${spread(r.pathweave.coefficientsPerSecond)} | ${spread(r.numpy.coefficientsPerSecond)} | ${spread(r.ratio)} | ${r.kernel} | ${load(r)} |`,
      );
    const errors = [...new Map(ratioRows.map((r) => [r.workload, r.relativeFrobenius])).entries()];
    lines.push(
      '',
      `Relative Frobenius error against numpy fed pathweave's gains: ${errors.map(([w, e]) => `${w} ${e.toExponential(1)}`).join(', ')} (target 2e-5).`,
      '',
    );
  }
  for (const r of rows.filter((x) => x.mode === 'disk'))
    lines.push(
      `Disk (${r.disk}): raw write + fsync ${fmt(r.rawBytesPerSecond.median / 2 ** 20)} MiB/s [${fmt(r.rawBytesPerSecond.min / 2 ** 20)}-${fmt(r.rawBytesPerSecond.max / 2 ** 20)}], pathweave's file ${fmt(r.pathweaveFileBytesPerSecond.median / 2 ** 20)} MiB/s [${fmt(r.pathweaveFileBytesPerSecond.min / 2 ** 20)}-${fmt(r.pathweaveFileBytesPerSecond.max / 2 ** 20)}], ${spread(r.fraction)} of raw.`,
      '',
    );
  const st = rows.find((x) => x.mode === 'startup');
  if (st)
    lines.push(
      '| start-up (4 subframes of the dataset scene) | wall s | CPU s (all threads) |',
      '|---|---|---|',
      `| \`node -e 0\` | ${spread(st.nodeBareSeconds)} | ${spread(st.nodeBareCpuSeconds)} |`,
      `| \`node packages/io/bin/pathweave.js generate\`, whole process | ${spread(st.cliFourSubframesSeconds)} | ${spread(st.cliFourSubframesCpuSeconds)} |`,
      `| library: process start to \`@pathweave/io\` imported | ${spread(st.importedSeconds)} | |`,
      `| library: process start to the first block | ${spread(st.firstBlockSeconds)} | |`,
      `| library: process start to the end | ${spread(st.libraryDoneSeconds)} | ${spread(st.libraryCpuSeconds)} |`,
      '',
      `Load ${load(st)}.`,
      '',
    );
  const pool = rows.filter((x) => x.mode === 'pool-scaling');
  if (pool.length > 0) {
    lines.push('| workers | memory coeff/s | memory speed-up over 1 (pair by pair) | e2e coeff/s (whole process) | load |', '|---|---|---|---|---|');
    for (const r of pool)
      lines.push(`| ${r.workers} | ${spread(r.memory)} | ${spread(r.memorySpeedup)} | ${r.e2e === undefined ? 'n/a' : spread(r.e2e)} | ${load(r)} |`);
    lines.push('');
  }
  const scaling = rows.filter((x) => x.mode === 'scaling');
  if (scaling.length > 0) {
    lines.push('| axis | value | seconds | ns per coefficient-path | end-to-end peak RSS |', '|---|---|---|---|---|');
    for (const r of scaling)
      lines.push(
        `| ${r.axis} | ${r.value} | ${r.seconds.toFixed(3)} | ${r.nsPerCoefficientPath.toFixed(3)} | ${r.endToEndPeakRssBytes ? `${(r.endToEndPeakRssBytes / 2 ** 20).toFixed(0)} MiB` : ''} |`,
      );
    lines.push('');
  }
  const kernels = rows.filter((x) => x.mode === 'kernels');
  if (kernels.length > 0) {
    lines.push('| call shape | kernel | products | ms per call | complex coefficients / s | load |', '|---|---|---|---|---|---|');
    for (const r of kernels)
      lines.push(
        `| ${r.shape} (${r.bins} bins, L = ${r.L}, M = ${r.M}) | ${r.kernel} | ${r.products} | ${(r.secondsPerCall * 1e3).toFixed(3)} | ${fmt(r.coefficientsPerSecond)} | ${load(r)} |`,
      );
    lines.push('');
  }
  for (const r of rows.filter((x) => x.mode === 'tracer'))
    lines.push(
      `Tracer (${r.description}): ${spread(r.tracesPerSecond)} traces/s, ${r.validPaths} valid paths, peak RSS ${(r.maxRssBytes / 2 ** 20).toFixed(0)} MiB.`,
      '',
    );
  return lines.join('\n');
}

const startLoad = loadavg();
let benchInfo;
const dir = mkdtempSync(join(MEMDIR, 'pathweave-bench-'));
const results = [];
const emit = (row) => {
  results.push(row);
  if (JSON_OUT) process.stdout.write(JSON.stringify(row) + '\n');
};

try {
  const info = numpyInfo();
  benchInfo = info;
  log(`pathweave bench: ${PAIRS} alternating pairs per figure; median [min-max]; ${availableParallelism()} cores; node ${process.version}`);
  log(`numpy side: ${info.python}, ${info.blas}, OpenBLAS core ${info.openblasCore} (OPENBLAS_CORETYPE/OPENBLAS_L2_SIZE unset for it)`);
  for (const name of ONLY) {
    const w = WORKLOADS[name];
    if (w === undefined) throw new Error(`unknown workload ${name}; known: ${Object.keys(WORKLOADS).join(', ')}`);
    if (w.tracer) {
      writeFileSync(join(dir, 'tracer.json'), '{}');
      const runs = Array.from({ length: PAIRS }, () => pw([join(dir, 'tracer.json'), 'tracer', '1']));
      const tps = stats(runs.map((r) => r.tracesPerSecond));
      const row = {
        workload: name,
        description: w.description,
        mode: 'tracer',
        threads: '1',
        tracesPerSecond: tps,
        validPaths: runs[0].validPaths,
        maxRssBytes: Math.max(...runs.map((r) => r.maxRssBytes)),
        numpy: 'n/a (no numpy counterpart of the image-method tracer)',
      };
      emit(row);
      log(
        `\n${name}: ${w.description}\n  traces/s ${spread(tps)} (asked: >= 1000) (${row.validPaths} valid paths), peak RSS ${(row.maxRssBytes / 2 ** 20).toFixed(0)} MiB`,
      );
      continue;
    }
    // The per-path alpha of the numpy side is pathweave's own (Clarke/Jakes J0 at the subframe lag).
    const { scenario } = parseScenarioText(JSON.stringify(w.scenario));
    const built = buildScenario(scenario, {});
    const cfgFile = join(dir, `${name}.json`);
    writeFileSync(cfgFile, JSON.stringify({ scenario: w.scenario, alpha: built.generator.correlations.map((c) => c.alpha), rawBytes: 2 ** 30 }));
    const scenarioFile = join(dir, `${name}-scenario.json`); // what the command line reads
    writeFileSync(scenarioFile, JSON.stringify(w.scenario));
    const blocks = Math.ceil(w.scenario.timing.subframes / blockSubframes(built.valuesPerSubframe * built.generator.bytesPerValue));
    const coefficients = coefficientsOf(w.scenario);

    // Accuracy: pathweave's output (first subframes, with its gains) against the numpy code.
    const checkScenario = { ...w.scenario, timing: { ...w.scenario.timing, subframes: Math.min(20, w.scenario.timing.subframes) } };
    const checkCfg = join(dir, `${name}-check.json`);
    writeFileSync(checkCfg, JSON.stringify({ scenario: checkScenario, alpha: built.generator.correlations.map((c) => c.alpha) }));
    pw([checkCfg, 'e2e', '1', join(dir, `${name}-check.npz`)]);
    const check = np([checkCfg, 'memory', '-', join(dir, `${name}-check.npz`)], 1);
    log(
      `\n${name}: ${w.description}\n  ${coefficients.toExponential(3)} coefficients; pathweave vs numpy relative Frobenius error ${check.relativeFrobenius.toExponential(2)} (target 2e-5)`,
    );

    const combos = [
      ['memory', '1'],
      ['memory', 'default'],
      ...(w.endToEnd
        ? [
            ['e2e', '1'],
            ['e2e', 'default'],
            ['e2e', 'pool'],
            ['e2e-checksum', '1'],
          ]
        : []),
    ].filter(([m, t]) => COMBOS === undefined || COMBOS.includes(`${m}:${t}`));
    for (const [mode, threads] of combos) {
      {
        const workers = threads === '1' ? '1' : threads === 'pool' ? String(availableParallelism()) : 'default';
        const loadBefore = loadavg()[0]; // the machine is shared: say how busy it was
        const p = [],
          n = [];
        for (let i = 0; i < PAIRS; i++) {
          const out = join(dir, `${name}.npy`);
          const first = i % 2 === 0; // alternate which side goes first
          const runP = () =>
            p.push(
              mode === 'memory' ? pw([cfgFile, mode, workers, out]) : pwCommand(scenarioFile, workers, out, { checksum: mode === 'e2e-checksum', blocks }),
            );
          const runN = () => n.push(np([cfgFile, mode, out], threads === '1' ? 1 : 0));
          if (first) {
            runP();
            runN();
          } else {
            runN();
            runP();
          }
          rmSync(out, { force: true });
          rmSync(`${out}.json`, { force: true });
        }
        const seconds = (r) => (mode === 'memory' ? r.loopSeconds : r.wallSeconds);
        const ps = stats(p.map((r) => coefficients / seconds(r)));
        const ns = stats(n.map((r) => coefficients / seconds(r)));
        const ratio = stats(p.map((r, i) => seconds(n[i]) / seconds(r)));
        const row = {
          workload: name,
          description: w.description,
          mode,
          threads,
          pathweaveWorkers: p[0].workers,
          wholeTensor: p[0].wholeTensor === true,
          kernel: p[0].kernel,
          coefficients,
          relativeFrobenius: check.relativeFrobenius,
          pathweave: {
            coefficientsPerSecond: ps,
            bytesPerSecond: stats(p.map((r) => (8 * coefficients) / seconds(r))),
            seconds: stats(p.map(seconds)),
            maxRssBytes: Math.max(...p.map((r) => r.maxRssBytes)),
          },
          numpy: {
            coefficientsPerSecond: ns,
            bytesPerSecond: stats(n.map((r) => (8 * coefficients) / seconds(r))),
            seconds: stats(n.map(seconds)),
            maxRssBytes: Math.max(...n.map((r) => r.maxRssBytes)),
            ...info,
          },
          ratio,
          loadAverage1m: { before: loadBefore, after: loadavg()[0] },
        };
        emit(row);
        log(
          `  ${mode.padEnd(12)} threads ${threads.padEnd(7)} (pathweave ${p[0].wholeTensor ? 'SubframeFiller, whole tensor, ' : ''}workers ${p[0].workers}) pathweave ${spread(ps)} coeff/s (${fmt((ps.median * 8) / 2 ** 20)} MiB/s, peak ${(row.pathweave.maxRssBytes / 2 ** 20).toFixed(0)} MiB) | numpy ${spread(ns)} coeff/s (peak ${(row.numpy.maxRssBytes / 2 ** 20).toFixed(0)} MiB) | ratio ${spread(ratio)} | load ${loadBefore.toFixed(1)}-${row.loadAverage1m.after.toFixed(1)}`,
        );
      }
    }

    if (w.endToEnd && !flag('--no-disk')) {
      // Raw disk rate (16 MiB writes + fsync) beside pathweave's file rate to the same disk (default workers).
      const diskDir = mkdtempSync(join(DISKDIR, 'pathweave-bench-disk-'));
      try {
        const raw = [],
          file = [];
        for (let i = 0; i < Math.min(PAIRS, 3); i++) {
          raw.push(pw([cfgFile, 'rawdisk', '1', join(diskDir, 'raw.bin')]).bytesPerSecond);
          const r = pw([cfgFile, 'e2e', 'default', join(diskDir, 'x.npy')]); // generate's default workers
          file.push(r.fileBytes / r.loopSeconds);
          for (const f of readdirSync(diskDir)) rmSync(join(diskDir, f), { force: true });
        }
        const row = {
          workload: name,
          mode: 'disk',
          disk: DISKDIR,
          rawBytesPerSecond: stats(raw),
          pathweaveFileBytesPerSecond: stats(file),
          fraction: stats(file.map((f, i) => f / raw[i])),
        };
        emit(row);
        log(
          `  disk ${DISKDIR}: raw write+fsync ${spread(stats(raw.map((x) => x / 2 ** 20)))} MiB/s, pathweave file ${spread(stats(file.map((x) => x / 2 ** 20)))} MiB/s (${spread(row.fraction)} of raw)`,
        );
      } finally {
        rmSync(diskDir, { recursive: true, force: true });
      }
    }
  }

  if (!flag('--no-startup')) {
    // Start-up: a bare node, then the command line generating 4 subframes of the dataset scene
    // (whole process), then a library run (import @pathweave/io, generate()) timed from the
    // process start to the import, to the first block and to the end; CPU seconds of every
    // process (all threads: waits for a core do not count, so they say more on a busy machine).
    const base = WORKLOADS.dataset.scenario;
    const f = join(dir, 'startup.json');
    writeFileSync(f, JSON.stringify({ ...base, timing: { ...base.timing, subframes: 4 } }));
    writeFileSync(join(dir, 'startup-cfg.json'), JSON.stringify({ scenario: base }));
    const bin = join(here, '..', 'packages', 'io', 'bin', 'pathweave.js');
    const timeBin = existsSync('/usr/bin/time') ? '/usr/bin/time' : undefined;
    const wall = (args) => {
      const t0 = process.hrtime.bigint();
      const r = timeBin
        ? spawnSync(timeBin, ['-f', 'cpu %U %S', process.execPath, ...args], { encoding: 'utf8' })
        : spawnSync(process.execPath, args, { encoding: 'utf8' });
      if (r.status !== 0) throw new Error(`node ${args.join(' ')} failed (${r.status}): ${r.stderr}`);
      const cpu = /cpu ([\d.]+) ([\d.]+)\s*$/.exec(r.stderr);
      return { wall: Number(process.hrtime.bigint() - t0) / 1e9, cpu: cpu ? Number(cpu[1]) + Number(cpu[2]) : NaN };
    };
    const loadBefore = loadavg()[0];
    const bare = [],
      cli = [],
      lib = [];
    for (let i = 0; i < PAIRS; i++) {
      bare.push(wall(['-e', '0']));
      cli.push(wall([bin, 'generate', f, '--out', join(dir, 'startup.npy'), '--quiet']));
      lib.push(pw([join(dir, 'startup-cfg.json'), 'startup', '1', join(dir, 'startup2.npy')]));
    }
    const row = {
      mode: 'startup',
      nodeBareSeconds: stats(bare.map((r) => r.wall)),
      nodeBareCpuSeconds: stats(bare.map((r) => r.cpu)),
      cliFourSubframesSeconds: stats(cli.map((r) => r.wall)),
      cliFourSubframesCpuSeconds: stats(cli.map((r) => r.cpu)),
      importedSeconds: stats(lib.map((r) => r.importedSeconds)),
      firstBlockSeconds: stats(lib.map((r) => r.firstBlockSeconds)),
      libraryDoneSeconds: stats(lib.map((r) => r.doneSeconds)),
      libraryCpuSeconds: stats(lib.map((r) => r.cpuSeconds)),
      loadAverage1m: { before: loadBefore, after: loadavg()[0] },
    };
    emit(row);
    log(
      `\nstart-up (4 subframes of the dataset scene; wall s, CPU s in parentheses): node -e 0 ${spread(row.nodeBareSeconds)} (${spread(row.nodeBareCpuSeconds)}); ` +
        `pathweave generate, whole process ${spread(row.cliFourSubframesSeconds)} (${spread(row.cliFourSubframesCpuSeconds)}); ` +
        `library: process start to @pathweave/io imported ${spread(row.importedSeconds)}, to the first block ${spread(row.firstBlockSeconds)}, to the end ${spread(row.libraryDoneSeconds)} (${spread(row.libraryCpuSeconds)}) | load ${loadBefore.toFixed(1)}-${row.loadAverage1m.after.toFixed(1)}`,
    );
  }

  if (!flag('--no-kernels')) {
    // The two SIMD kernels on the dataset's and taps' call shapes, one process, alternating
    // (bench/kernels.mjs): where the fill's time goes, without the rest of the loop.
    const loadBefore = loadavg()[0];
    const r = spawnSync(process.execPath, [join(here, 'kernels.mjs'), String(Math.max(10, 3 * PAIRS))], { encoding: 'utf8' });
    if (r.status !== 0) throw new Error(`kernels.mjs failed (${r.status}): ${r.stderr}`);
    log('\nkernels (best of rounds, same process, output in place):');
    for (const line of r.stdout.trim().split('\n')) {
      const k = { mode: 'kernels', ...JSON.parse(line), loadAverage1m: { before: loadBefore, after: loadavg()[0] } };
      emit(k);
      log(
        `  ${k.shape.padEnd(8)} bins ${String(k.bins).padStart(4)} L ${k.L} M ${k.M} ${k.kernel.padEnd(13)} products ${k.products.padEnd(8)} ${(k.secondsPerCall * 1e3).toFixed(3)} ms/call, ${fmt(k.coefficientsPerSecond)} coeff/s`,
      );
    }
  }

  if (!flag('--no-pool-scaling')) {
    // Fill rate of the dataset against worker count, in memory (the workers fill their own
    // shared buffers, read in place; 1 = the main thread in place), and end to end to /dev/shm.
    const cfgFile = join(dir, 'dataset.json');
    const { scenario } = parseScenarioText(JSON.stringify(WORKLOADS.dataset.scenario));
    writeFileSync(
      cfgFile,
      JSON.stringify({ scenario: WORKLOADS.dataset.scenario, alpha: buildScenario(scenario, {}).generator.correlations.map((c) => c.alpha) }),
    );
    const poolScenarioFile = join(dir, 'pool-scenario.json');
    writeFileSync(poolScenarioFile, JSON.stringify(WORKLOADS.dataset.scenario));
    const coefficients = coefficientsOf(WORKLOADS.dataset.scenario);
    log(`\npool scaling (dataset, ${PAIRS} runs each, interleaved; coeff/s, median [min-max]):`);
    const counts = [1, 2, 3];
    const mem = counts.map(() => []),
      e2e = counts.map(() => []),
      sideBySide = [];
    const loadBefore = loadavg()[0];
    for (let i = 0; i < PAIRS; i++) {
      counts.forEach((w, j) => {
        mem[j].push(coefficients / pw([cfgFile, 'memory', String(w)]).loopSeconds);
        e2e[j].push(coefficients / pwCommand(poolScenarioFile, String(w), join(dir, 'scaling.npy'), {}).wallSeconds);
        rmSync(join(dir, 'scaling.npy'), { force: true });
        rmSync(join(dir, 'scaling.npy.json'), { force: true });
      });
      // The machine's own ceiling: two independent one-thread processes whose timed loops start
      // at the same moment (no pool, nothing shared but the hardware); aggregate rate.
      const startAt = String(Date.now() + 1500);
      const both = await Promise.all([0, 1].map(() => pwAsync([cfgFile, 'memory', '1'], { PATHWEAVE_BENCH_START_AT: startAt })));
      sideBySide.push((2 * coefficients) / Math.max(...both.map((r) => r.loopSeconds)));
    }
    counts.forEach((w, j) => {
      const row = {
        mode: 'pool-scaling',
        workers: w,
        memory: stats(mem[j]),
        e2e: stats(e2e[j]),
        memorySpeedup: stats(mem[j].map((x, i) => x / mem[0][i])),
        loadAverage1m: { before: loadBefore, after: loadavg()[0] },
      };
      emit(row);
      log(`  workers ${w}: memory ${spread(row.memory)} (x${spread(row.memorySpeedup)} of 1), end to end ${spread(row.e2e)}`);
    });
    const ceiling = {
      mode: 'pool-scaling',
      workers: '2 one-thread processes at once (ceiling)',
      memory: stats(sideBySide),
      memorySpeedup: stats(sideBySide.map((x, i) => x / mem[0][i])),
      loadAverage1m: { before: loadBefore, after: loadavg()[0] },
    };
    emit(ceiling);
    log(
      `  two one-thread processes at once (no pool; the machine's ceiling): memory ${spread(ceiling.memory)} together (x${spread(ceiling.memorySpeedup)} of 1)`,
    );
    log(`  load ${loadBefore.toFixed(1)}-${loadavg()[0].toFixed(1)}`);
  }

  if (!flag('--no-scaling')) {
    // Cost against L, K, Nr Nt and S (one thread, in memory), and peak memory against S (end to end).
    log('\nscaling (one thread, in memory; ns per coefficient-path = seconds / (S K Nr Nt L)):');
    const base = WORKLOADS.dataset.scenario;
    const variants = [];
    for (const L of [4, 8, 16])
      variants.push([
        'L',
        L,
        {
          ...base,
          timing: { ...base.timing, subframes: 100 },
          paths: Array.from({ length: L }, (_, l) => ({ ...base.paths[l % 8], id: `p${l}`, delayS: base.paths[l % 8].delayS + 1e-9 * l })),
        },
      ]);
    for (const K of [128, 256, 512]) variants.push(['K', K, { ...base, timing: { ...base.timing, subframes: 100 }, band: { ...base.band, subcarriers: K } }]);
    for (const [r, c] of [
      [2, 4],
      [4, 4],
      [8, 4],
    ])
      variants.push([
        'NrNt',
        r * c * 64,
        { ...base, timing: { ...base.timing, subframes: 100 }, receiver: { ...base.receiver, array: { kind: 'upa', rows: r, columns: c } } },
      ]);
    for (const S of [50, 100, 200, 600]) variants.push(['S', S, { ...base, timing: { ...base.timing, subframes: S } }]);
    for (const [axis, v, sc] of variants) {
      const f = join(dir, `scale-${axis}-${v}.json`);
      writeFileSync(f, JSON.stringify({ scenario: sc }));
      const runs = Array.from({ length: 3 }, () => pw([f, 'memory', '1']));
      const sec = median(runs.map((r) => r.loopSeconds));
      const L = sc.paths.length;
      const nsPer = (sec / (coefficientsOf(sc) * L)) * 1e9;
      const row = { mode: 'scaling', axis, value: v, seconds: sec, nsPerCoefficientPath: nsPer };
      if (axis === 'S') {
        const e = pw([f, 'e2e', '1', join(dir, 'scale.npy')]);
        rmSync(join(dir, 'scale.npy'), { force: true });
        rmSync(join(dir, 'scale.npy.json'), { force: true });
        row.endToEndPeakRssBytes = e.maxRssBytes;
      }
      emit(row);
      log(
        `  ${axis.padEnd(5)} ${String(v).padStart(5)}: ${sec.toFixed(3)} s, ${nsPer.toFixed(3)} ns per coefficient-path${row.endToEndPeakRssBytes ? `, end-to-end peak RSS ${(row.endToEndPeakRssBytes / 2 ** 20).toFixed(0)} MiB` : ''}`,
      );
    }
  }
} finally {
  rmSync(dir, { recursive: true, force: true });
}
if (MARKDOWN && benchInfo !== undefined)
  (JSON_OUT ? process.stderr : process.stdout).write('\n' + markdown(results, benchInfo, { start: startLoad, end: loadavg() }) + '\n');
