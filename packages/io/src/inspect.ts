/**
 * `inspect`: a summary of a file pathweave wrote: arrays with shapes and dtypes, the scenario in
 * brief, per-path powers and delays, the mean channel power.
 */
import { readFile } from 'node:fs/promises';
import { formatBytes } from './generate.js';
import { readNpy } from './formats/npy.js';
import { RequestError } from './generate.js';

/** Summary of one file: text for people, data for --json. */
export interface InspectSummary {
  text: string;
  data: Record<string, unknown>;
}

/** Mean |x|^2 over complex interleaved values. */
export function meanPower(data: Float32Array | Float64Array): number {
  let sum = 0;
  for (let i = 0; i < data.length; i++) sum += data[i]! * data[i]!;
  return data.length === 0 ? 0 : sum / (data.length / 2);
}

/** Summarise a .npy (with its side file when present). */
export async function inspectFile(file: string): Promise<InspectSummary> {
  if (!/\.npy$/i.test(file)) throw new RequestError(`inspect: cannot read ${file}: this build reads .npy files`);
  const npy = await readNpy(file).catch((e: NodeJS.ErrnoException) => {
    throw new RequestError(`inspect: cannot read ${file}: ${e.code ?? e.message}`);
  });
  const side = await readFile(`${file}.json`, 'utf8')
    .then((t) => JSON.parse(t) as Record<string, unknown>)
    .catch(() => undefined);
  const lines = [`${file}: npy, ${npy.dtype} [${npy.shape.join(', ')}], ${formatBytes(npy.data.byteLength)} of data`];
  const data: Record<string, unknown> = { file, arrays: [{ name: 'tensor', dtype: npy.dtype, shape: npy.shape }] };
  if (npy.dtype === 'complex64' || npy.dtype === 'complex128') {
    const p = meanPower(npy.data as Float32Array | Float64Array);
    lines.push(`  mean |H|^2 per entry: ${p.toExponential(4)} (${(10 * Math.log10(p)).toFixed(2)} dB)`);
    data.meanPower = p;
  }
  if (side !== undefined) {
    const tensor = side.tensor as { name: string; subframes: number[]; sha256: string };
    lines.push(`  tensor ${tensor.name}, subframes ${tensor.subframes.join(':')}, sha256 ${tensor.sha256.slice(0, 16)}..., seed ${String(side.seed)}, pathweave ${String(side.pathweaveVersion)}`);
    const paths = (side.paths ?? []) as { id: string; delayS: number; powerDb: number }[];
    lines.push(`  ${paths.length} paths:`);
    for (const p of paths.slice(0, 20)) lines.push(`    ${p.id.padEnd(24)} delay ${(p.delayS * 1e9).toFixed(2)} ns, power ${p.powerDb.toFixed(2)} dB`);
    data.side = side;
  }
  return { text: lines.join('\n'), data };
}
