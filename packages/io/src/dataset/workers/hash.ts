/**
 * SHA-256 of a stream of blocks in a thread of its own, so `generate` can compute the next block
 * while the last one is hashed (hashing runs at about 1.3 GB/s, slower than the kernel fills).
 * The blocks must live in SharedArrayBuffers: the thread reads them in place, no copy (block
 * buffers from `sharedBlockArray`, which the kernel fills in place, are such views). Ranges
 * are hashed in the order given; the digest is the SHA-256 of their concatenation, the same
 * value `createHash('sha256')` gives on the main thread.
 */
import { Worker } from 'node:worker_threads';

/** A message to the hash thread. */
export type HashRequest = { kind: 'update'; buffer: SharedArrayBuffer; byteOffset: number; byteLength: number } | { kind: 'digest' };

type HashReply = { kind: 'hashed' } | { kind: 'digest'; hex: string } | { kind: 'error'; message: string };

/**
 * Where the compiled hash thread lives (dist/dataset/workers/hash-worker.js), reached the same way from src/ and dist/.
 * @example HASH_WORKER_URL.pathname // "<checkout>/packages/io/dist/dataset/workers/hash-worker.js"
 */
export const HASH_WORKER_URL: URL = new URL('../../../dist/dataset/workers/hash-worker.js', import.meta.url);

/**
 * A running SHA-256 in a worker thread.
 * @example
 * const h = new HashThread();
 * const data = new Uint8Array(new SharedArrayBuffer(3));
 * data.set([97, 98, 99]);
 * await h.update(data);
 * await h.digest(); // "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad" (SHA-256 of "abc")
 * await h.close();
 */
export class HashThread {
  private readonly worker: Worker;
  private readonly waiting: Array<{ resolve: (r: HashReply) => void; reject: (e: Error) => void }> = [];
  private failure: Error | undefined;

  constructor() {
    this.worker = new Worker(HASH_WORKER_URL);
    this.worker.on('message', (reply: HashReply) => {
      const w = this.waiting.shift();
      if (reply.kind === 'error') this.fail(new Error(`hash thread: ${reply.message}`));
      else w?.resolve(reply);
    });
    this.worker.on('error', (e) => this.fail(e));
    this.worker.on('exit', (code) => {
      if (code !== 0) this.fail(new Error(`hash thread exited with code ${code}`));
    });
  }

  /** Hash `bytes` (a view of a SharedArrayBuffer) after the ranges sent before; resolves once done, when the bytes may change again. */
  update(bytes: ArrayBufferView): Promise<void> {
    if (!(bytes.buffer instanceof SharedArrayBuffer))
      throw new TypeError(`HashThread.update(): bytes must be a view of a SharedArrayBuffer, got a view of ${bytes.buffer.constructor.name}`);
    const message: HashRequest = { kind: 'update', buffer: bytes.buffer, byteOffset: bytes.byteOffset, byteLength: bytes.byteLength };
    return this.ask(message).then(() => undefined);
  }

  /** Hex SHA-256 of everything sent (call once, after the last update). */
  async digest(): Promise<string> {
    const reply = await this.ask({ kind: 'digest' });
    return (reply as { hex: string }).hex;
  }

  /** Stop the thread (anything pending is rejected). */
  async close(): Promise<void> {
    this.fail(new Error('hash thread closed'));
    await this.worker.terminate();
  }

  private ask(message: HashRequest): Promise<HashReply> {
    if (this.failure !== undefined) return Promise.reject(this.failure);
    return new Promise((resolve, reject) => {
      this.waiting.push({ resolve, reject });
      this.worker.postMessage(message);
    });
  }

  private fail(e: Error): void {
    this.failure ??= e;
    for (const w of this.waiting.splice(0)) w.reject(e);
  }
}
