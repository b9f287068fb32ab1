/**
 * Subframe streams for test benches: pull the channel subframe by subframe instead of writing
 * files. Each item's `tensor` and `gains` are views of buffers the stream owns and REUSES: they
 * are overwritten by the next item, so copy (`tensor.slice()`) what must outlive one iteration.
 * Items carry the same bits as `generate` writes for that subframe, whatever range a stream
 * covers (docs/conventions.md, Reproducibility).
 *
 * Layout of `tensor`: one subframe of the generator, [K or count, Nr, Nt] or
 * [symbols, K or count, Nr, Nt], complex interleaved.
 */
import type { ChannelGenerator, TensorArray } from './channel.js';
import type { PathSetFrame } from './timeline.js';

/**
 * One subframe of a stream.
 * @example
 * const still = { array: AntennaArray.ula(1, 0), velocity: [0, 0, 0] as Vec3 };
 * const generator = new ChannelGenerator({
 *   carrierHz: 28e9, subframeS: 1e-3, subframes: 4, seed: 1, fading: { model: 'static' },
 *   transmitter: { ...still, position: [0, 0, 0] }, receiver: { ...still, position: [10, 0, 0] },
 *   paths: [{ id: 'los', delayS: 0, power: 1, phaseRad: 0, departure: [1, 0, 0], arrival: [-1, 0, 0] }],
 *   grid: { domain: 'frequency', subcarriers: 2, spacingHz: 120e3 },
 * });
 * const item: SubframeItem = streamSubframes(generator, { first: 3 }).next().value!;
 * [item.index, item.timeS, item.tensor.length, item.gains] // [3, 0.003, 4, Float64Array [1, 0]]: [K = 2, 1, 1] complex values
 */
export interface SubframeItem {
  /** Absolute subframe index s. */
  index: number;
  /** Start time of the subframe, seconds (s * subframeS). */
  timeS: number;
  /** The tensor of this subframe (reused buffer). */
  tensor: TensorArray;
  /** Gains rho of the paths, [L] or [symbols, L] complex interleaved (reused buffer). */
  gains: Float64Array;
  /** Path parameters at the subframe's start (delays, directions, amplitudes; reused). */
  paths: PathSetFrame;
}

/**
 * Range of a stream: subframes [first, first + count).
 * @example
 * const still = { array: AntennaArray.ula(1, 0), velocity: [0, 0, 0] as Vec3 };
 * const generator = new ChannelGenerator({
 *   carrierHz: 28e9, subframeS: 1e-3, subframes: 4, seed: 1, fading: { model: 'static' },
 *   transmitter: { ...still, position: [0, 0, 0] }, receiver: { ...still, position: [10, 0, 0] },
 *   paths: [{ id: 'los', delayS: 0, power: 1, phaseRad: 0, departure: [1, 0, 0], arrival: [-1, 0, 0] }],
 *   grid: { domain: 'frequency', subcarriers: 2, spacingHz: 120e3 },
 * });
 * const range: StreamRange = { first: 1, count: 2 };
 * [...streamSubframes(generator, range)].length // 2
 */
export interface StreamRange {
  first?: number;
  count?: number;
}

function resolve(generator: ChannelGenerator, range: StreamRange): [number, number] {
  const S = generator.spec.subframes;
  const first = range.first ?? 0;
  const count = range.count ?? S - first;
  if (!Number.isInteger(first) || !Number.isInteger(count) || first < 0 || count < 0 || first + count > S) {
    throw new RangeError(`streamSubframes(): subframes [${first}, ${first + count}) lie outside [0, ${S})`);
  }
  return [first, count];
}

/**
 * Iterate subframes synchronously.
 * @example
 * const end = (position: Vec3) => ({ position, velocity: [0, 0, 0] as Vec3, array: AntennaArray.ula(1, 0) });
 * const generator = new ChannelGenerator({ carrierHz: 28e9, subframeS: 1e-3, subframes: 20, seed: 1, fading: { model: 'static' }, transmitter: end([0, 0, 0]),
 *   receiver: end([10, 0, 0]), paths: [{ id: 'los', delayS: 0, power: 1, phaseRad: 0, departure: [1, 0, 0], arrival: [-1, 0, 0] }], grid: { domain: 'frequency', subcarriers: 2, spacingHz: 120e3 } });
 * const seen: number[] = [];
 * for (const item of streamSubframes(generator, { first: 10, count: 5 })) seen.push(item.index); // item.tensor: Float32Array [1, 0, 1, 0]
 * seen // [10, 11, 12, 13, 14]
 */
export function* streamSubframes(generator: ChannelGenerator, range: StreamRange = {}): Generator<SubframeItem, void, undefined> {
  const [first, count] = resolve(generator, range);
  const tensor = generator.allocate(1);
  const gains = new Float64Array(2 * generator.stepsPerSubframe * generator.pathCount);
  for (let s = first; s < first + count; s++) {
    generator.fill(tensor, s, 1, { gainsOut: gains });
    const paths = generator.frameAtStep(s * generator.stepsPerSubframe);
    yield { index: s, timeS: s * generator.spec.subframeS, tensor, gains, paths };
  }
}

/**
 * Iterate subframes asynchronously, yielding to the event loop between subframes so a test
 * bench can interleave I/O.
 * @example
 * const end = (position: Vec3) => ({ position, velocity: [0, 0, 0] as Vec3, array: AntennaArray.ula(1, 0) });
 * const generator = new ChannelGenerator({ carrierHz: 28e9, subframeS: 1e-3, subframes: 20, seed: 1, fading: { model: 'static' }, transmitter: end([0, 0, 0]),
 *   receiver: end([10, 0, 0]), paths: [{ id: 'los', delayS: 0, power: 1, phaseRad: 0, departure: [1, 0, 0], arrival: [-1, 0, 0] }], grid: { domain: 'frequency', subcarriers: 2, spacingHz: 120e3 } });
 * const seen: number[] = [];
 * for await (const item of streamSubframesAsync(generator, { first: 18 })) seen.push(item.index);
 * seen // [18, 19]
 */
export async function* streamSubframesAsync(generator: ChannelGenerator, range: StreamRange = {}): AsyncGenerator<SubframeItem, void, undefined> {
  for (const item of streamSubframes(generator, range)) {
    yield item;
    await new Promise<void>((resolveTick) => setImmediate(resolveTick));
  }
}
