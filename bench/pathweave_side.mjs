/**
 * The pathweave side of the benchmark, one measurement per process (bench/run.mjs alternates it
 * with numpy_side.py and times the whole process for end-to-end runs).
 *
 * usage: node bench/pathweave_side.mjs <workload.json> memory|e2e|e2e-checksum|tracer|rawdisk <workers|default> [out]
 *   memory:  the fill loop over all subframes into reused block buffers (after a one-subframe
 *            warm-up; the buffers come from allocateKernelArray, as in `generate`, and are touched
 *            before the clock starts, as numpy's H is); with workers > 1 the blocks go to the
 *            worker pool of `generate` (each worker fills its own shared buffers, read in place;
 *            warmed up with whole blocks); `default` is the library's default for a tensor in
 *            memory: a SubframeFiller (one worker per core) filling the whole tensor into one
 *            shared array (touched first, as numpy's H; warmed up on its first blocks);
 *            with PATHWEAVE_BENCH_START_AT (ms since the epoch) a one-thread loop waits for that moment
 *   e2e:     generate() to `out` (.npy, .npz), everything included, no checksum (a plain run);
 *            `default` leaves the worker count to generate
 *   e2e-checksum: the same with `checksum: true` (the tensor's SHA-256, as a --shard run)
 *   tracer:  traceScene on the 20-wall room at order 2, receiver moved a little per trace
 *   startup: generate() of the workload's first 4 subframes to `out`, importing only
 *            @pathweave/io; reports the time from process start (performance.now(), whose origin
 *            is the process's start) to the import done, to the first block filled and to the end,
 *            and the process's CPU seconds (all threads)
 *   rawdisk: write `bytes` (workload.rawBytes) to `out` in 16 MiB writes, then fsync
 * Prints one JSON line.
 */
import { openSync, readFileSync, writeSync, fsyncSync, closeSync, unlinkSync } from 'node:fs';

const [file, mode, workersArg, out] = process.argv.slice(2);
const cfg = JSON.parse(readFileSync(file, 'utf8'));
const workers = workersArg === 'default' ? 'default' : Number(workersArg ?? 1);
const rss = () => process.resourceUsage().maxRSS * 1024;
const result = { side: 'pathweave', workers };

if (mode === 'startup') {
  // Only what a library user's generate() needs: the io package (which loads core and geometry).
  const { generate, parseScenarioText } = await import('@pathweave/io');
  const imported = performance.now();
  const text = JSON.stringify({ ...cfg.scenario, timing: { ...cfg.scenario.timing, subframes: 4 } });
  const { scenario } = parseScenarioText(text);
  let firstBlock;
  await generate(scenario, text, { out, format: 'npy', onProgress: () => (firstBlock ??= performance.now()) });
  const cpu = process.cpuUsage();
  Object.assign(result, {
    importedSeconds: imported / 1000,
    firstBlockSeconds: firstBlock / 1000,
    doneSeconds: performance.now() / 1000,
    cpuSeconds: (cpu.user + cpu.system) / 1e6,
  });
  console.log(JSON.stringify(result));
  process.exit(0);
}
const { allocateKernelArray, KERNEL_NAME } = await import('@pathweave/core');
const { traceScene, prepareScene } = await import('@pathweave/geometry');
const { allocateSharedTensor, BLOCK_TARGET_BYTES, blockSubframes, buildScenario, fillBlock, generate, parseScenarioText, SubframeFiller } =
  await import('@pathweave/io');
const { BlockPool, defaultWorkers } = await import('../packages/io/dist/dataset/workers/pool.js');
const { twentyWallRoom } = await import('./workloads.mjs');
result.kernel = KERNEL_NAME;

if (mode === 'tracer') {
  const ps = prepareScene(twentyWallRoom());
  const tx = { position: [2, 5, 2.5] },
    rx = { position: [17, 7, 1.5] };
  const first = traceScene(ps, tx, rx, 28e9);
  for (let k = 0; k < 100; k++) traceScene(ps, tx, rx, 28e9); // warm-up
  const runs = 2000;
  const t0 = performance.now();
  for (let k = 0; k < runs; k++) traceScene(ps, tx, { position: [17, 7 + k * 1e-4, 1.5] }, 28e9);
  const seconds = (performance.now() - t0) / 1000;
  Object.assign(result, { loopSeconds: seconds, traces: runs, tracesPerSecond: runs / seconds, validPaths: first.paths.length, walls: ps.walls?.length ?? 20 });
} else if (mode === 'rawdisk') {
  const chunk = Buffer.alloc(16 * 2 ** 20, 0x5a);
  const t0 = performance.now();
  const fd = openSync(out, 'w');
  let written = 0;
  while (written < cfg.rawBytes) written += writeSync(fd, chunk, 0, Math.min(chunk.length, cfg.rawBytes - written));
  fsyncSync(fd);
  closeSync(fd);
  const seconds = (performance.now() - t0) / 1000;
  unlinkSync(out);
  Object.assign(result, { loopSeconds: seconds, bytes: written, bytesPerSecond: written / seconds });
} else {
  const text = JSON.stringify(cfg.scenario);
  const { scenario } = parseScenarioText(text);
  if (mode === 'e2e' || mode === 'e2e-checksum') {
    const report = await generate(scenario, text, {
      out,
      format: out.endsWith('.npz') ? 'npz' : 'npy',
      checksum: mode === 'e2e-checksum',
      ...(workers === 'default' ? {} : { workers }),
    });
    const blocks = Math.ceil(scenario.timing.subframes / blockSubframes(report.built.valuesPerSubframe * report.built.generator.bytesPerValue));
    result.workers = workers === 'default' ? defaultWorkers(blocks) : workers;
    Object.assign(result, { loopSeconds: report.seconds, fileBytes: report.fileBytes, coefficients: report.tensorBytes / 8 });
  } else {
    const built = buildScenario(scenario, {});
    const S = scenario.timing.subframes;
    const perSubframe = built.valuesPerSubframe;
    const block = blockSubframes(perSubframe * 8);
    const Tensor = Float32Array;
    let seconds;
    const threads = workers === 'default' ? undefined : workers;
    result.workers = threads;
    if (threads === undefined) {
      // The library's default for a tensor in memory: a SubframeFiller (one worker per core)
      // filling the whole tensor into one shared array, as numpy fills its whole H.
      const filler = new SubframeFiller(built);
      result.workers = filler.workers;
      const H = allocateSharedTensor(built, S);
      H.fill(0); // touch the pages outside the timed loop, as the numpy side does with H
      await filler.fill(H, 0, Math.min(S, 2 * block * filler.workers)); // warm-up: the workers build and run
      const t0 = performance.now();
      await filler.fill(H, 0, S);
      seconds = (performance.now() - t0) / 1000;
      await filler.close();
      result.wholeTensor = true;
    } else if (threads === 1) {
      const buffer = allocateKernelArray(2 * block * perSubframe, Tensor); // as generate() allocates its block buffers
      buffer.fill(0); // touch the pages outside the timed loop, as the numpy side does with H
      fillBlock(built, buffer.subarray(0, 2 * perSubframe), 0, 1); // warm-up
      // Two processes run side by side (bench/run.mjs's ceiling row) start their loops together.
      const startAt = Number(process.env.PATHWEAVE_BENCH_START_AT ?? 0);
      const nap = new Int32Array(new SharedArrayBuffer(4));
      while (Date.now() < startAt) Atomics.wait(nap, 0, 0, 1);
      const t0 = performance.now();
      for (let s = 0; s < S; s += block) {
        const n = Math.min(block, S - s);
        fillBlock(built, buffer.subarray(0, 2 * n * perSubframe), s, n);
      }
      seconds = (performance.now() - t0) / 1000;
    } else {
      const gainsPerSubframe = 2 * built.generator.pathCount;
      const pool = new BlockPool(threads, { plan: built.plan, traced: built.users.map((u) => u.tracedEpochs), gainsPerSubframe });
      const blocks = Math.ceil(S / block);
      const depth = Math.min(2 * threads, blocks);
      // Start-up and warm-up: each worker fills whole blocks into the buffers it keeps (their
      // pages touched outside the timed loop, as numpy's H), then gives them back.
      const warm = await Promise.all(Array.from({ length: depth }, (_, b) => pool.request(b * block, Math.min(block, S - b * block))));
      for (const w of warm) w.release();
      const inFlight = [];
      const ask = (b) => (inFlight[b] = pool.request(b * block, Math.min(block, S - b * block)));
      const t0 = performance.now();
      for (let b = 0; b < depth; b++) ask(b);
      for (let b = 0; b < blocks; b++) {
        const done = await inFlight[b];
        done.release(); // read in place: nothing to copy out
        if (b + depth < blocks) ask(b + depth);
      }
      seconds = (performance.now() - t0) / 1000;
      await pool.close();
    }
    Object.assign(result, { loopSeconds: seconds, coefficients: S * perSubframe, blockSubframes: block, blockTargetBytes: BLOCK_TARGET_BYTES });
  }
}
result.maxRssBytes = rss();
console.log(JSON.stringify(result));
