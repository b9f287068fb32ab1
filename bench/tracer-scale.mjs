#!/usr/bin/env node
/**
 * Tracer at scale: full traces per second (traceScene, receiver moved 1 cm per trace as on a
 * walk, transmitter static, after warm-up traces) on the 20-wall room at order 2
 * (test/fixtures/twenty-wall-room.json), a 10 x 10 street grid (400 facades and a ground plane,
 * 28 GHz) at order 3 with edge diffraction (single, and with one reflection) and a 50 000-triangle
 * hall at order 2 (bench/scenes.mjs), with the process's CPU time beside the wall clock (the
 * machine may be shared: CPU time per trace depends much less on its load), the load average,
 * the heap taken by the prepared scene and the peak RSS. The first trace, timed apart, records
 * what later traces from the same transmitter position reuse (tracer.ts, diffraction.ts).
 * Rows launch3, launch4 (street grid, orders 3 and 4) and launchMesh (the hall, order 2) trace
 * with ray launching (method 'launch', 40 962 rays, the default 1 degree spacing) and add the
 * image method's reflection search at the same order (traceReflections, which takes any order;
 * mean CPU time over links 1 cm apart), its path count and how many of those paths the launcher found.
 *
 * usage: node bench/tracer-scale.mjs [--only room,grid,mesh,launch3,launch4,launchMesh] [--json]
 */
import { readFileSync } from 'node:fs';
import { loadavg } from 'node:os';
import { prepareScene, traceReflections, traceScene } from '@pathweave/geometry';
import { streetGrid, triangulatedHall } from './scenes.mjs';

const argv = process.argv.slice(2);
const only = (argv.includes('--only') ? argv[argv.indexOf('--only') + 1] : 'room,grid,mesh,launch3,launch4,launchMesh').split(',');
const JSON_OUT = argv.includes('--json');

const room = () => ({
  scene: { walls: JSON.parse(readFileSync(new URL('../test/fixtures/twenty-wall-room.json', import.meta.url), 'utf8')).scene.walls, maxReflectionOrder: 2 },
  transmitter: [2, 5, 2.5],
  receiver: [17, 7, 1.5],
  step: 1e-4,
  warm: 100,
  runs: 2000,
});
const CASES = {
  room,
  grid: () => {
    const g = streetGrid();
    return { ...g, scene: { ...g.scene, diffraction: true }, step: 0.01, warm: 3, runs: 30 };
  },
  mesh: () => ({ ...triangulatedHall(50000), step: 0.01, warm: 1, runs: 3 }),
  // imageWarm, imageRuns: untimed and timed image-method searches
  launch3: () => ({ ...streetGrid(), step: 0.01, warm: 3, runs: 20, imageWarm: 10, imageRuns: 20, options: { method: 'launch' } }),
  launch4: () => ({ ...streetGrid(), step: 0.01, warm: 3, runs: 20, imageWarm: 3, imageRuns: 3, options: { method: 'launch', launch: { maxBounces: 4 } } }),
  launchMesh: () => ({ ...triangulatedHall(50000), step: 0.01, warm: 1, runs: 5, imageWarm: 1, imageRuns: 3, options: { method: 'launch' } }),
};

const results = [];
for (const name of only) {
  const c = CASES[name]();
  global.gc?.();
  const heap0 = process.memoryUsage().heapUsed;
  const p0 = performance.now();
  const ps = prepareScene(c.scene);
  const prepareS = (performance.now() - p0) / 1000;
  const tx = { position: c.transmitter };
  const at = (k) => ({ position: [c.receiver[0], c.receiver[1] + c.step * k, c.receiver[2]] });
  const f0 = performance.now();
  const opts = c.options ?? {};
  const first = traceScene(ps, tx, at(0), 28e9, opts);
  const firstS = (performance.now() - f0) / 1000;
  for (let k = 1; k <= c.warm; k++) traceScene(ps, tx, at(k), 28e9, opts);
  const cpu0 = process.cpuUsage(),
    t0 = performance.now();
  for (let k = 0; k < c.runs; k++) traceScene(ps, tx, at(k), 28e9, opts);
  const wall = (performance.now() - t0) / 1000,
    cu = process.cpuUsage(cpu0),
    cpu = (cu.user + cu.system) / 1e6;
  const heapMiB = (process.memoryUsage().heapUsed - heap0) / 2 ** 20;
  const order = opts.launch?.maxBounces ?? c.scene.maxReflectionOrder;
  const r = {
    scene: name,
    method: opts.method ?? 'image',
    walls: ps.wallCount,
    order,
    diffraction: c.scene.diffraction === true,
    paths: first.paths.length,
    prepareS: +prepareS.toFixed(3),
    firstTraceS: +firstS.toFixed(3),
    tracesPerSecond: +(c.runs / wall).toFixed(2),
    tracesPerCpuSecond: +(c.runs / cpu).toFixed(2),
    cpuMsPerTrace: +((1000 * cpu) / c.runs).toFixed(3),
    heapMiB: +heapMiB.toFixed(1),
    rssMiB: +(process.resourceUsage().maxRSS / 1024).toFixed(0),
    load1: +loadavg()[0].toFixed(2),
  };
  let extra = '';
  if (r.method === 'launch') {
    // the image method's search at the same order, on the first link, for time and the miss count
    const image = new Set();
    // warm-up: the occlusion tables fill lazily, once per scene, and the first calls run unoptimised
    for (let k = 1; k <= c.imageWarm; k++) traceReflections(ps, c.transmitter, at(k), order, () => {});
    const c1 = process.cpuUsage();
    traceReflections(ps, c.transmitter, c.receiver, order, (w) => image.add(w.join(',')));
    for (let k = 1; k < c.imageRuns; k++) traceReflections(ps, c.transmitter, at(k), order, () => {});
    const cs = process.cpuUsage(c1);
    const launched = first.paths.filter((p) => p.kind === 'reflection').map((p) => p.interactions.map((i) => i.object.index).join(','));
    r.imageSearchCpuS = +((cs.user + cs.system) / 1e6 / c.imageRuns).toFixed(3);
    r.imagePaths = image.size;
    r.launchFound = launched.filter((k) => image.has(k)).length;
    extra = `; image method search ${r.imageSearchCpuS} CPU s at order ${order}, launch found ${r.launchFound} of its ${r.imagePaths} reflection paths`;
  }
  results.push(r);
  if (!JSON_OUT)
    console.log(
      `${name} (${r.method}): ${r.walls} faces, order ${r.order}${r.diffraction ? ' + diffraction' : ''}, ${r.paths} paths; ${r.tracesPerSecond} traces/s (${r.tracesPerCpuSecond} per CPU second, ${r.cpuMsPerTrace} ms of CPU per trace), first trace ${r.firstTraceS} s, prepare ${r.prepareS} s, heap +${r.heapMiB} MiB, peak RSS ${r.rssMiB} MiB, load ${r.load1}${extra}`,
    );
}
if (JSON_OUT) console.log(JSON.stringify(results));
