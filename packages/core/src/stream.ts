/**
 * Subframe streams for test benches: pull the channel subframe by subframe instead of writing
 * files. Each item's `tensor` and `gains` are views of buffers the stream owns and REUSES: they
 * are overwritten by the next item, so copy (`tensor.slice()`) what must outlive one iteration.
 * Items carry the same bits as `generate` writes for that subframe, whatever range a stream
 * covers (design.md, Reproducibility).
 *
 * Layout of `tensor`: one subframe of the generator, [K or count, Nr, Nt] or
 * [symbols, K or count, Nr, Nt], complex interleaved.
 */
import type { ChannelGenerator, TensorArray } from './channel.js';
import type { PathFrame } from './timeline.js';

/** One subframe of a stream. */
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
  paths: PathFrame;
}

/** Range of a stream: subframes [first, first + count). */
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
 * for (const item of streamSubframes(generator, { first: 10, count: 5 })) use(item.tensor); // subframes 10..14
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
 * for await (const item of streamSubframesAsync(generator)) await send(item.tensor);
 */
export async function* streamSubframesAsync(generator: ChannelGenerator, range: StreamRange = {}): AsyncGenerator<SubframeItem, void, undefined> {
  for (const item of streamSubframes(generator, range)) {
    yield item;
    await new Promise<void>((resolveTick) => setImmediate(resolveTick));
  }
}
