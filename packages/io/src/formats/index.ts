/**
 * Output formats by name; each opens a DatasetSink writing to a temporary file first. The HDF5
 * writer (and h5wasm, whose start-up costs about 0.1 s) is loaded only when an .h5 is opened.
 */
import type { DatasetSink } from './sink.js';
import { NpySink } from './npy.js';
import { openNpzSink } from './npz.js';

/**
 * File formats `generate` writes.
 * @example const format: OutputFormat = 'h5';
 */
export type OutputFormat = 'npy' | 'npz' | 'h5';

/**
 * The formats available, in the order the CLI lists them.
 * @example OUTPUT_FORMATS.join(', ') // "npy, npz, h5"
 */
export const OUTPUT_FORMATS: readonly OutputFormat[] = ['npy', 'npz', 'h5'];

/** The format implied by a file name's extension, if any. @example formatFromPath('a/b.h5') // "h5" */
export function formatFromPath(path: string): OutputFormat | undefined {
  const m = /\.(npy|npz|h5|hdf5)$/i.exec(path);
  if (m === null) return undefined;
  const ext = m[1]!.toLowerCase();
  return ext === 'hdf5' ? 'h5' : (ext as OutputFormat);
}

/**
 * Open a sink of the given format at `path`.
 * @example
 * const path = join(mkdtempSync(join(tmpdir(), 'pw-')), 'H.npy');
 * const sink = await openSink('npy', path);
 * await sink.beginTensor({ name: 'H', dtype: 'complex64', shape: [1, 2], units: '1' });
 * await sink.writeRows(Float32Array.of(1, 0, 0, 1));
 * await sink.commit() // 144: a 128-byte header and 2 complex64 values
 * (await readNpy(path)).data // Float32Array [1, 0, 0, 1]
 */
export async function openSink(format: OutputFormat, path: string): Promise<DatasetSink> {
  switch (format) {
    case 'npy':
      return NpySink.open(path);
    case 'npz':
      return openNpzSink(path);
    case 'h5':
      return (await import('./hdf5.js')).openHdf5Sink(path);
  }
}
