/**
 * Part manifests (manifest.ts): part file names, the scenario hash, the tensor checksum of a
 * file against Python's hashlib over numpy's bytes (C), exact refusals of bad manifests, and
 * verifyPart's reasons.
 */
import { writeFileSync, truncateSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import {
  canonicalJson,
  fileSha256,
  manifestOf,
  manifestPathOf,
  partPath,
  readManifest,
  scenarioSha256,
  tensorSha256OfFile,
  verifyPart,
  writeManifest,
} from '../src/dataset/manifest.js';
import { NpySink } from '../src/formats/npy.js';
import { openHdf5Sink } from '../src/formats/hdf5.js';
import { hasPython, python } from '../../../test/support/python.js';
import { tempDir } from '../../../test/support/run.js';

describe('names', () => {
  it('partPath writes --out as given, with {index} and {count} replaced', () => {
    expect(partPath('data/run.part-{index}-of-{count}.h5', 2, 8)).toBe('data/run.part-2-of-8.h5');
    expect(partPath('/x/y.z/shard-{index}', 0, 1)).toBe('/x/y.z/shard-0');
    expect(partPath('data/run.h5', 2, 8)).toBe('data/run.h5'); // docs/conventions.md: --out is the file written
    expect(manifestPathOf('run.part-2-of-8.npy')).toBe('run.part-2-of-8.npy.manifest.json');
    expect(() => partPath('run.h5', 8, 8)).toThrow('partPath(): need integers 0 <= index < count, got index 8, count 8');
  });

  it('scenarioSha256 ignores spacing and key order, not values', () => {
    expect(canonicalJson({ b: [1, { d: 2, c: 'x' }], a: null })).toBe('{"a":null,"b":[1,{"c":"x","d":2}]}');
    expect(scenarioSha256('{ "b": 1, "a": {"y": 2, "x": 3} }')).toBe(scenarioSha256('{"a":{"x":3,"y":2},"b":1}'));
    expect(scenarioSha256('{"a": 1}')).not.toBe(scenarioSha256('{"a": 2}'));
  });
});

async function writeTensorFile(dir: string, format: 'npy' | 'h5'): Promise<{ path: string; data: Float32Array }> {
  const path = join(dir, `t.${format}`);
  const data = new Float32Array(2 * 5 * 3 * 2 * 2).map((_, i) => Math.cos(i * 0.37) * (i % 7));
  const sink = format === 'npy' ? await NpySink.open(path) : await openHdf5Sink(path);
  await sink.beginTensor({ name: 'H', dtype: 'complex64', shape: [5, 3, 2, 2], units: '1', chunkRows: 2 });
  await sink.writeRows(data.subarray(0, 2 * 3 * 3 * 2 * 2));
  await sink.writeRows(data.subarray(2 * 3 * 3 * 2 * 2));
  await sink.commit();
  return { path, data };
}

describe('checksums and verification', () => {
  it.runIf(hasPython('numpy', 'h5py')).each(['npy', 'h5'] as const)(
    'tensorSha256OfFile (.%s) equals hashlib.sha256 of numpy/h5py tobytes (C)',
    async (format) => {
      const { path } = await writeTensorFile(tempDir(), format);
      const ref = python(
        `import sys, hashlib, numpy as np
p = sys.argv[1]
a = np.load(p) if p.endswith('.npy') else __import__('h5py').File(p, 'r')['H'][()]
print(hashlib.sha256(np.ascontiguousarray(a).tobytes()).hexdigest())`,
        [path],
      ).trim();
      expect(await tensorSha256OfFile(path)).toEqual({ sha256: ref, bytes: 5 * 3 * 2 * 2 * 8 });
    },
  );

  it('verifyPart: ok, then each reason', async () => {
    const dir = tempDir();
    const { path } = await writeTensorFile(dir, 'npy');
    const { sha256 } = await tensorSha256OfFile(path);
    const m = manifestOf({
      index: 0,
      count: 1,
      range: [0, 5],
      subframesTotal: 5,
      partFile: path,
      fileBytes: statSync(path).size,
      fileSha256: await fileSha256(path),
      format: 'npy',
      tensorName: 'H',
      dtype: 'complex64',
      shape: [5, 3, 2, 2],
      sha256,
      scenarioText: '{"a":1}',
      seed: 1,
      pathweaveVersion: '0',
      kernel: 'js',
    });
    await writeManifest(path, m);
    expect(await readManifest(manifestPathOf(path))).toEqual(m);
    expect(await verifyPart(path, m)).toEqual({ ok: true });
    expect(await verifyPart(path, { ...m, tensor: { ...m.tensor, sha256: '0'.repeat(64) } })).toEqual({
      ok: false,
      reason: `${path}: tensor sha256 ${sha256} differs from the manifest's ${'0'.repeat(64)}`,
    });
    // The whole file's sha256 (manifest version 2) covers what the tensor's does not.
    expect(await verifyPart(path, { ...m, fileSha256: '1'.repeat(64) })).toEqual({
      ok: false,
      reason: `${path}: file sha256 ${m.fileSha256} differs from the manifest's ${'1'.repeat(64)} (an array or attribute was changed after it was written)`,
    });
    expect(await verifyPart(path, { ...m, fileBytes: m.fileBytes + 1 })).toEqual({
      ok: false,
      reason: `${path} is ${m.fileBytes} bytes, the manifest says ${m.fileBytes + 1}`,
    });
    expect(await verifyPart(join(dir, 'other.npy'), m)).toEqual({ ok: false, reason: 'the manifest names t.npy, not other.npy' });
    truncateSync(path, m.fileBytes - 8);
    expect((await verifyPart(path, { ...m, fileBytes: m.fileBytes - 8 })).ok).toBe(false);
  });

  it('readManifest refuses what is not a manifest, naming the field', async () => {
    const dir = tempDir();
    const p = join(dir, 'x.manifest.json');
    await expect(readManifest(p)).rejects.toThrow(`${p}: cannot read the manifest (ENOENT)`);
    writeFileSync(p, '{"kind": "something else"}');
    await expect(readManifest(p)).rejects.toThrow(`${p}: not a pathweave part manifest: kind:`);
    writeFileSync(p, '{');
    await expect(readManifest(p)).rejects.toThrow(`${p}: not JSON`);
  });
});
