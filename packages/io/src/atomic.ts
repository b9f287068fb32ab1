/**
 * Atomic output files: data go to a temporary file in the destination's folder (unique per
 * process and call), which is fsynced and renamed over the final name only when complete.
 * A failure, abort or signal removes the temporary file and leaves any earlier file untouched.
 */
import { randomBytes } from 'node:crypto';
import { open, rename, unlink, type FileHandle } from 'node:fs/promises';
import { unlinkSync } from 'node:fs';
import { basename, dirname, join } from 'node:path';

const live = new Set<string>();

/** Record a temporary file written by other means (e.g. a library that opens it itself), so a signal handler removes it. */
export function trackTemporary(path: string): void {
  live.add(path);
}

/** Forget a temporary file (after it was renamed or removed). */
export function untrackTemporary(path: string): void {
  live.delete(path);
}

/** Temporary files still open by this process (removed by `removeLiveTemporaryFiles`). */
export function liveTemporaryFiles(): string[] {
  return [...live];
}

/** Synchronously remove every temporary file this process still holds (for signal handlers). */
export function removeLiveTemporaryFiles(): string[] {
  const removed: string[] = [];
  for (const p of live) {
    try {
      unlinkSync(p);
      removed.push(p);
    } catch {
      // already gone
    }
  }
  live.clear();
  return removed;
}

/**
 * The temporary name used for `target`: hidden, in the same folder (so rename is atomic),
 * unique per process and call.
 * @example temporaryPathFor('/data/run.npy') // "/data/.run.npy.4242-1a2b3c4d.part"
 */
export function temporaryPathFor(target: string): string {
  return join(dirname(target), `.${basename(target)}.${process.pid}-${randomBytes(4).toString('hex')}.part`);
}

/** A file being written under a temporary name. */
export class AtomicFile {
  private handle: FileHandle | undefined;
  private position = 0;
  private done = false;

  private constructor(
    readonly target: string,
    readonly temporary: string,
  ) {}

  /** Create the temporary file next to `target`. */
  static async create(target: string): Promise<AtomicFile> {
    const f = new AtomicFile(target, temporaryPathFor(target));
    f.handle = await open(f.temporary, 'wx', 0o644);
    live.add(f.temporary);
    return f;
  }

  /** Bytes written so far. */
  get bytesWritten(): number {
    return this.position;
  }

  /** Append bytes. */
  async write(data: Uint8Array): Promise<void> {
    if (this.handle === undefined) throw new Error(`AtomicFile.write(): ${this.target} is already closed`);
    let offset = 0;
    while (offset < data.length) {
      const { bytesWritten } = await this.handle.write(data, offset, data.length - offset, this.position);
      offset += bytesWritten;
      this.position += bytesWritten;
    }
  }

  /** Overwrite bytes at an absolute offset (e.g. a header finished at the end). */
  async writeAt(data: Uint8Array, at: number): Promise<void> {
    if (this.handle === undefined) throw new Error(`AtomicFile.writeAt(): ${this.target} is already closed`);
    let offset = 0;
    while (offset < data.length) {
      const { bytesWritten } = await this.handle.write(data, offset, data.length - offset, at + offset);
      offset += bytesWritten;
    }
  }

  /** fsync, close and rename over the target. */
  async commit(): Promise<void> {
    if (this.handle === undefined) throw new Error(`AtomicFile.commit(): ${this.target} is already closed`);
    const h = this.handle;
    this.handle = undefined;
    try {
      await h.sync();
    } finally {
      await h.close();
    }
    await rename(this.temporary, this.target);
    live.delete(this.temporary);
    this.done = true;
  }

  /** Close and remove the temporary file; a no-op after commit. */
  async abort(): Promise<void> {
    if (this.done) return;
    this.done = true;
    const h = this.handle;
    this.handle = undefined;
    await h?.close().catch(() => undefined);
    await unlink(this.temporary).catch(() => undefined);
    live.delete(this.temporary);
  }
}

/** Write a whole small file atomically. */
export async function writeFileAtomic(target: string, data: Uint8Array | string): Promise<void> {
  const f = await AtomicFile.create(target);
  try {
    await f.write(typeof data === 'string' ? new TextEncoder().encode(data) : data);
    await f.commit();
  } catch (e) {
    await f.abort();
    throw e;
  }
}
