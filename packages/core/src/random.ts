/**
 * Keyed random streams. A stream is identified by (seed, key string, block index, lane), so a
 * path's numbers never depend on how many other paths exist, on their order, or on where a run
 * is cut (docs/conventions.md, Reproducibility). Generator: xoshiro128** (Blackman & Vigna), its 128-bit
 * state derived from the key by a 32-bit integer mixer; only 32-bit integer arithmetic and
 * V8's fdlibm-derived Math.log/cos/sin are used, so the bits are the same on every machine
 * running the same Node major version.
 */

/**
 * Subframes (or time steps) per random block: a constant of the format, never tuned.
 * @example Math.floor(1000 / RANDOM_BLOCK_STEPS) // 3: steps 768..1023 form block 3
 */
export const RANDOM_BLOCK_STEPS = 256;

const TWO_PI = 2 * Math.PI;
const INV_2_53 = 1 / 9007199254740992;

function mix32(h: number): number {
  h ^= h >>> 16;
  h = Math.imul(h, 0x7feb352d);
  h ^= h >>> 15;
  h = Math.imul(h, 0x846ca68b);
  h ^= h >>> 16;
  return h >>> 0;
}

/**
 * Two independent 32-bit hashes of a string (FNV-1a over UTF-16 code units, two offsets),
 * used as a stable identity for path ids.
 * @example hashKey('los') // the same two numbers on every run
 */
export function hashKey(key: string): [number, number] {
  let a = 0x811c9dc5;
  let b = 0x01000193 ^ 0x5bd1e995;
  for (let i = 0; i < key.length; i++) {
    const c = key.charCodeAt(i);
    a = Math.imul(a ^ c, 0x01000193);
    b = Math.imul(b ^ c, 0x5bd1e995) ^ (b >>> 13);
  }
  return [mix32(a ^ key.length), mix32(b + 0x9e3779b9)];
}

/**
 * A seeded stream of uniform and Gaussian numbers.
 * @example
 * const a = new RandomStream(42, 'los'), b = new RandomStream(42, 'los');
 * a.nextUniform() === b.nextUniform() // true
 * new RandomStream(42, 'los').nextUniform() // 0.6190338581222481 (the same on every run)
 */
export class RandomStream {
  private s0 = 0;
  private s1 = 0;
  private s2 = 0;
  private s3 = 0;

  /**
   * @param seed integer in [0, 2^53)
   * @param key stable identity of the consumer (a path id, "noise", ...)
   * @param block block index (time step div RANDOM_BLOCK_STEPS)
   * @param lane distinguishes several streams of one consumer in one block
   */
  constructor(seed: number, key: string, block = 0, lane = 0) {
    if (!Number.isInteger(seed) || seed < 0 || seed >= 2 ** 53) {
      throw new RangeError(`RandomStream(): seed must be an integer in [0, 2^53), got ${seed}`);
    }
    if (!Number.isInteger(block) || block < 0) throw new RangeError(`RandomStream(): block must be an integer >= 0, got ${block}`);
    const [ka, kb] = hashKey(key);
    const words = [seed >>> 0, Math.floor(seed / 4294967296) >>> 0, ka, kb, block >>> 0, Math.floor(block / 4294967296) >>> 0, lane >>> 0];
    const state = [0, 0, 0, 0];
    for (let i = 0; i < 4; i++) {
      let h = mix32(Math.imul(i + 1, 0x9e3779b9));
      for (const w of words) h = mix32((h ^ w) + 0x6d2b79f5);
      state[i] = h;
    }
    if ((state[0]! | state[1]! | state[2]! | state[3]!) === 0) state[0] = 1;
    [this.s0, this.s1, this.s2, this.s3] = state as [number, number, number, number];
  }

  /** Next 32-bit unsigned integer. */
  nextUint32(): number {
    const s0 = this.s0,
      s1 = this.s1,
      s2 = this.s2,
      s3 = this.s3;
    const m = Math.imul(s1, 5);
    const result = Math.imul((m << 7) | (m >>> 25), 9) >>> 0;
    const t = s1 << 9;
    const n2 = s2 ^ s0;
    const n3 = s3 ^ s1;
    this.s1 = s1 ^ n2;
    this.s0 = s0 ^ n3;
    this.s2 = n2 ^ t;
    this.s3 = (n3 << 11) | (n3 >>> 21);
    return result;
  }

  /** Uniform double in the open interval (0, 1), 53 random bits. */
  nextUniform(): number {
    const hi = this.nextUint32() >>> 5;
    const lo = this.nextUint32() >>> 6;
    return (hi * 67108864 + lo + 0.5) * INV_2_53;
  }

  /** Standard normal N(0, 1) (Box-Muller, one value; the pair's second half is discarded). */
  nextNormal(): number {
    return Math.sqrt(-2 * Math.log(this.nextUniform())) * Math.cos(TWO_PI * this.nextUniform());
  }

  /**
   * Circular complex normal CN(0, variance), written to out[offset], out[offset + 1];
   * E|z|^2 = variance.
   */
  nextComplexNormal(out: Float64Array, offset: number, variance = 1): void {
    const r = Math.sqrt(-variance * Math.log(this.nextUniform()));
    const theta = TWO_PI * this.nextUniform();
    out[offset] = r * Math.cos(theta);
    out[offset + 1] = r * Math.sin(theta);
  }
}

/**
 * The stream that serves time step `step` of consumer `key`: one stream per block of
 * RANDOM_BLOCK_STEPS steps. Callers draw the same count of numbers for every step, so a step's
 * numbers are found by skipping within its block only.
 * @example
 * const streams = new BlockedStreams(42, 'los', (s) => s.nextUniform());
 * streams.at(300).nextUniform() === new BlockedStreams(42, 'los', (s) => s.nextUniform()).at(300).nextUniform() // true: block 1 is replayed from its start
 */
export class BlockedStreams {
  private block = -1;
  private stream: RandomStream | undefined;
  private nextStep = 0;

  /**
   * @param drawsPerStep how many `draw` calls the caller makes per step (for skipping)
   */
  constructor(
    private readonly seed: number,
    private readonly key: string,
    private readonly drawsPerStep: (stream: RandomStream) => void,
    private readonly lane = 0,
  ) {}

  /** The stream positioned at the start of `step`'s draws. Steps must be visited in order within a block, or the block is replayed. */
  at(step: number): RandomStream {
    const block = Math.floor(step / RANDOM_BLOCK_STEPS);
    if (block !== this.block || step < this.nextStep || this.stream === undefined) {
      this.block = block;
      this.stream = new RandomStream(this.seed, this.key, block, this.lane);
      this.nextStep = block * RANDOM_BLOCK_STEPS;
    }
    while (this.nextStep < step) {
      this.drawsPerStep(this.stream);
      this.nextStep++;
    }
    this.nextStep = step + 1;
    return this.stream;
  }
}
