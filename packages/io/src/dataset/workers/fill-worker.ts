/**
 * Worker-thread entry of the block pool (pool.ts): builds the generators once from the plan and
 * the traced epochs of workerData (no tracing: the main thread traced the scene once),
 * then fills each requested block of subframes with the same `fillBlock` the main thread uses,
 * so a block's bytes do not depend on which thread made it.
 *
 * Messages in: { kind: 'fill', id, first, n, into? } and { kind: 'release', slot }; out: { id, slot,
 * tensor, gains, kernel } (tensor: a view of this worker's block buffer `slot`, in shared memory,
 * so the main thread reads it in place; gains copied; kernel: the KERNEL_NAME of this thread),
 * { id, gains, kernel } when the request brought its own shared view `into` (filled there), or
 * { id, error }. A buffer is filled again only after its release.
 * Layouts: tensor [n, (U,) (symbols,) K or count, Nr, Nt] complex interleaved (Float32Array for
 * complex64, Float64Array for complex128); gains [n, (U,) (symbols,) Lmax] complex128.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { KERNEL_NAME } from '@pathweave/core';
import { buildPlan } from '../../scenario/build.js';
import { fillBlock } from './fill.js';
import { sharedBlockArray, type BlockRequest, type BlockWorkerData } from './pool.js';

const data = workerData as BlockWorkerData;
const built = buildPlan(data.plan, { traced: data.traced });
const values = 2 * built.valuesPerSubframe;
const Tensor = built.generator.precision === 'complex64' ? Float32Array : Float64Array;
/** This worker's block buffers (grown to the largest block asked for) and which are free. */
const buffers: Array<Float32Array | Float64Array> = [];
const free: number[] = [];

parentPort!.on('message', (request: BlockRequest) => {
  if (request.kind === 'release') {
    free.push(request.slot);
    return;
  }
  try {
    const length = request.n * values;
    if (request.into !== undefined) {
      // The caller's shared array: filled where it is, nothing to hand back but the gains.
      if (request.into.length !== length) throw new RangeError(`fill-worker: the target view holds ${request.into.length} values, the block needs ${length}`);
      const gains = new Float64Array(request.n * data.gainsPerSubframe);
      fillBlock(built, request.into, request.first, request.n, gains);
      parentPort!.postMessage({ id: request.id, gains, kernel: KERNEL_NAME }, [gains.buffer]);
      return;
    }
    let slot = free.pop();
    if (slot !== undefined && buffers[slot]!.length < length) buffers[slot] = sharedBlockArray(length, Tensor);
    if (slot === undefined) {
      slot = buffers.length;
      buffers.push(sharedBlockArray(length, Tensor));
    }
    const tensor = buffers[slot]!.subarray(0, length);
    const gains = new Float64Array(request.n * data.gainsPerSubframe);
    fillBlock(built, tensor, request.first, request.n, gains);
    parentPort!.postMessage({ id: request.id, slot, tensor, gains, kernel: KERNEL_NAME }, [gains.buffer]);
  } catch (e) {
    parentPort!.postMessage({ id: request.id, error: e instanceof Error ? `${e.name}: ${e.message}` : String(e) });
  }
});
