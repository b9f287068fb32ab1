/**
 * Worker-thread entry of the block pool (pool.ts): builds the generators once from the plan and
 * the traced epochs of workerData (no tracing: the main thread traced the scene once),
 * then fills each requested block of subframes with the same `fillBlock` the main thread uses,
 * so a block's bytes do not depend on which thread made it.
 *
 * Messages in: { id, first, n, tensor: ArrayBuffer, gains: ArrayBuffer } (buffers transferred);
 * out: { id, tensor, gains, kernel } (buffers transferred back; kernel: the KERNEL_NAME of this
 * thread) or { id, error }.
 * Layouts: tensor [n, (U,) (symbols,) K or count, Nr, Nt] complex interleaved (Float32Array for
 * complex64, Float64Array for complex128); gains [n, (U,) (symbols,) Lmax] complex128.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { KERNEL_NAME } from '@pathweave/core';
import { buildPlan } from '../../scenario/build.js';
import { fillBlock } from './fill.js';
import type { BlockRequest, BlockWorkerData } from './pool.js';

const data = workerData as BlockWorkerData;
const built = buildPlan(data.plan, { traced: data.traced });
const values = 2 * built.valuesPerSubframe;
const Tensor = built.generator.precision === 'complex64' ? Float32Array : Float64Array;

parentPort!.on('message', (request: BlockRequest) => {
  try {
    const tensor = new Tensor(request.tensor, 0, request.n * values);
    const gains = new Float64Array(request.gains, 0, request.n * data.gainsPerSubframe);
    fillBlock(built, tensor, request.first, request.n, gains);
    parentPort!.postMessage({ id: request.id, tensor: request.tensor, gains: request.gains, kernel: KERNEL_NAME }, [request.tensor, request.gains]);
  } catch (e) {
    parentPort!.postMessage({ id: request.id, error: e instanceof Error ? `${e.name}: ${e.message}` : String(e) });
  }
});
