/**
 * Worker-thread entry of HashThread (hash.ts): one running SHA-256 over the byte ranges it is
 * sent, in the order sent, so the digest is that of their concatenation.
 *
 * Messages in: { kind: 'update', buffer: SharedArrayBuffer, byteOffset, byteLength } (shared,
 * not copied) or { kind: 'digest' }; out: { kind: 'hashed' } once a range is hashed (its
 * buffer may be reused), { kind: 'digest', hex } or { kind: 'error', message }.
 */
import { createHash } from 'node:crypto';
import { parentPort } from 'node:worker_threads';
import type { HashRequest } from './hash.js';

const hash = createHash('sha256');

parentPort!.on('message', (request: HashRequest) => {
  try {
    if (request.kind === 'update') {
      hash.update(new Uint8Array(request.buffer, request.byteOffset, request.byteLength));
      parentPort!.postMessage({ kind: 'hashed' });
    } else parentPort!.postMessage({ kind: 'digest', hex: hash.digest('hex') });
  } catch (e) {
    parentPort!.postMessage({ kind: 'error', message: e instanceof Error ? `${e.name}: ${e.message}` : String(e) });
  }
});
