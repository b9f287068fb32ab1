/**
 * Hostile files and outputs (what inspect, merge and plot read is untrusted; --out never
 * clobbers what it should not). Every hostile file is built here from a valid output of
 * `pathweave generate` (never a checked-in blob), then given to the command line in-process
 * (`main`) or, where stderr of the whole process matters (HDF5 diagnostics), to the built binary.
 * Each case asserts the exit code, the message (naming the file and what is wrong) and that
 * nothing was written.
 *
 * Sources: NPY format specification (numpy.lib.format, "Format Version 1.0": the header is a
 * Python dict literal of descr, fortran_order and shape) V; PKWARE APPNOTE.TXT 4.3.7 (local
 * header), 4.3.12 (central directory), 4.4.7 (CRC-32 of the uncompressed data) V; HDF5 User's
 * Guide, "Links" (soft and external links) and "External Storage" (H5Pset_external) M; h5py
 * builds the HDF5 cases (C); POSIX rename(2) replaces a symlink or special file under the name M.
 */
import { execFileSync, spawn } from 'node:child_process';
import { chmodSync, copyFileSync, existsSync, lstatSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync, symlinkSync, writeFileSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { generate, loadScenario, merge, npyHeader, openDatasetReader, parseNpyHeader, planScenario, READ_LIMITS, traceUsers } from '@pathweave/io';
import { main } from '@pathweave/io/cli';
import { CLI, ROOT, runCli, tempDir, writeScenario } from './support/run.js';
import { hasPython, PYTHON } from './support/python.js';

const FIXTURE = join(ROOT, 'test', 'fixtures', 'three-path-static.json');

/** The command line in-process: exit code and the lines it printed. */
async function run(args: string[]): Promise<{ code: number; out: string; err: string }> {
  const out: string[] = [],
    err: string[] = [];
  const code = await main(args, { out: (s) => out.push(s), err: (s) => err.push(s) });
  return { code, out: out.join('\n'), err: err.join('\n') };
}

const sha = (path: string): string => createHash('sha256').update(readFileSync(path)).digest('hex');
/** A manifest rewritten to describe its (edited) part, as an adversary handing over both would. */
function reseal(part: string, edit: (m: any) => void = () => undefined): void {
  const m = JSON.parse(readFileSync(`${part}.manifest.json`, 'utf8'));
  m.fileBytes = statSync(part).size;
  m.fileSha256 = sha(part);
  edit(m);
  writeFileSync(`${part}.manifest.json`, JSON.stringify(m));
}

let dir: string;
const file = (name: string): string => join(dir, name);
const py = { skip: !hasPython('numpy', 'h5py'), python: PYTHON };

beforeAll(async () => {
  dir = tempDir('pathweave-hostile-');
  const { scenario, text } = await loadScenario(FIXTURE);
  for (const format of ['npy', 'npz', 'h5'] as const) await generate(scenario, text, { out: file(`ok.${format}`), format, checksum: true });
}, 120_000);

describe('HDF5: nothing outside the file is followed (exit 2, naming the dataset)', () => {
  const h5py = (name: string, code: string): string => {
    copyFileSync(file('ok.h5'), file(name));
    execFileSync(py.python, ['-c', `import h5py, numpy\nf = h5py.File(${JSON.stringify(file(name))}, 'a')\n${code}\nf.close()`]);
    return file(name);
  };
  it.skipIf(py.skip)('external raw storage pointing at a local file, in inspect and in merge with a resealed manifest', async () => {
    writeFileSync(file('secret.txt'), 'private bytes of the merge host');
    const bad = h5py('external.h5', `f.create_dataset('paths/notes', shape=(31,), dtype='u1', external=[(${JSON.stringify(file('secret.txt'))}, 0, 31)])`);
    const r = await run(['inspect', bad]);
    expect(r.code).toBe(2);
    expect(r.err).toContain(
      `error: ${bad}: dataset paths/notes refers to another file, ${JSON.stringify(file('secret.txt'))} (external storage, an external link or a virtual dataset): refused`,
    );
    // The same through merge: parts whose manifests were rewritten to match.
    for (const i of [0, 1])
      expect((await run(['generate', FIXTURE, '--shard', `${i}/2`, '--out', file('x.part-{index}-of-{count}.h5'), '--quiet'])).code).toBe(0);
    execFileSync(py.python, [
      '-c',
      `import h5py\nf = h5py.File(${JSON.stringify(file('x.part-1-of-2.h5'))}, 'a')\nf.create_dataset('paths/notes', shape=(31,), dtype='u1', external=[(${JSON.stringify(file('secret.txt'))}, 0, 31)])\nf.close()`,
    ]);
    reseal(file('x.part-1-of-2.h5'));
    const m = await run(['merge', file('x.part-0-of-2.h5'), file('x.part-1-of-2.h5'), '--out', file('x.h5'), '--quiet']);
    expect(m.code).toBe(2);
    expect(m.err).toContain('dataset paths/notes refers to another file');
    expect(existsSync(file('x.h5'))).toBe(false);
  });
  it.skipIf(py.skip)('a soft link and an external link', async () => {
    const soft = h5py('soft.h5', "f['paths/alias'] = h5py.SoftLink('/gains')");
    expect(await run(['inspect', soft])).toMatchObject({ code: 2, err: expect.stringContaining(`${soft}: paths/alias is a soft link to "/gains": refused`) });
    const ext = h5py('elink.h5', `f['paths/other'] = h5py.ExternalLink(${JSON.stringify(file('ok.h5'))}, '/H')`);
    expect(await run(['inspect', ext])).toMatchObject({
      code: 2,
      err: expect.stringContaining(`${ext}: paths/other is an external link to ${JSON.stringify(file('ok.h5'))}: refused`),
    });
  });
  it.skipIf(py.skip)('a tensor resized to 1e9 subframes of fill values is refused from its size, before any read', async () => {
    const big = h5py(
      'resized.h5',
      "del f['H']\nf.create_dataset('H', shape=(10**9, 33, 3, 8), maxshape=(None, 33, 3, 8), chunks=(1, 33, 3, 8), dtype=[('r', '<f4'), ('i', '<f4')])",
    );
    const r = await run(['inspect', big]);
    expect(r.code).toBe(2);
    expect(r.err).toContain(
      `${big}: dataset H of shape [1000000000, 33, 3, 8] is 6336000000000 bytes, more than its ${statSync(big).size}-byte file can hold: refused`,
    );
  });
  it.skipIf(py.skip)('300 nested groups: refused by depth', async () => {
    const deep = h5py('deep.h5', "g = f\nfor i in range(300): g = g.create_group('g')");
    const r = await run(['inspect', deep]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(new RegExp(`${deep}: /?g/g/g/g/g/g/g/g/g\\S* is nested \\d+ deep, more than the ${READ_LIMITS.groupDepth} allowed`));
  });
  it('a truncated or corrupt .h5: exit 2 naming the file, and no HDF5 diagnostics on stderr (built binary)', () => {
    writeFileSync(file('cut.h5'), readFileSync(file('ok.h5')).subarray(0, 3000));
    const r = runCli(['inspect', file('cut.h5')]);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain(`error: ${file('cut.h5')}: not a readable HDF5 file (truncated file: eof = 3000`);
    expect(r.stderr).not.toContain('HDF5-DIAG');
    const bytes = readFileSync(file('ok.h5'));
    bytes.fill(0x55, 8, 64); // the superblock after the signature
    writeFileSync(file('garbled.h5'), bytes);
    const g = runCli(['inspect', file('garbled.h5')]);
    expect(g.status).toBe(2);
    expect(g.stderr).toMatch(/garbled\.h5: not a readable HDF5 file \(/);
    expect(g.stderr).not.toContain('HDF5-DIAG');
  });
});

describe('NPY headers and side files (exit 2 naming the file and what is wrong)', () => {
  /** ok.npy with its header dict replaced (same length, so the data stay where they are). */
  const withHeader = (name: string, dict: string, side = true): string => {
    const bytes = readFileSync(file('ok.npy'));
    const length = bytes.readUInt16LE(8);
    expect(dict.length).toBeLessThan(length);
    bytes.write(dict.padEnd(length - 1, ' ') + '\n', 10, 'latin1');
    writeFileSync(file(name), bytes);
    if (side) copyFileSync(file('ok.npy.json'), file(`${name}.json`));
    return file(name);
  };
  const cases: [string, string, string][] = [
    ['negative', "{'descr': '<c8', 'fortran_order': False, 'shape': (-3, 33, 3, 8), }", 'shape entry 0 is not a decimal integer >= 0'],
    ['fractional', "{'descr': '<c8', 'fortran_order': False, 'shape': (1.5, 33, 3, 8), }", 'shape entry 0 is not followed by "," or ")"'],
    ['word', "{'descr': '<c8', 'fortran_order': False, 'shape': (three, 33, 3, 8), }", 'shape entry 0 is not a decimal integer >= 0'],
    ['duplicate', "{'descr': '<c8', 'descr': '<f8', 'fortran_order': False, 'shape': (3, 33, 3, 8), }", 'key "descr" given twice'],
    ['unknown', "{'descr': '<c8', 'fortran_order': False, 'shape': (3, 33, 3, 8), 'extra': 1, }", 'unknown key "extra"'],
    ['fortran', "{'descr': '<c8', 'fortran_order': True, 'shape': (3, 33, 3, 8), }", 'the NPY header is Fortran-ordered'],
    ['object', "{'descr': '|O', 'fortran_order': False, 'shape': (3, 33, 3, 8), }", 'dtype "|O" is not one pathweave writes'],
  ];
  for (const [name, dict, message] of cases) {
    it(`${name}: ${message}`, async () => {
      const bad = withHeader(`${name}.npy`, dict);
      const r = await run(['inspect', bad]);
      expect(r.code, r.err).toBe(2);
      expect(r.err).toContain(`error: ${bad}: `);
      expect(r.err).toContain(message);
    });
  }
  it('an empty shape, zero rows, a real (not complex) tensor, a header that lies about the length', async () => {
    const empty = withHeader('empty.npy', "{'descr': '<c8', 'fortran_order': False, 'shape': (), }", false);
    expect((await run(['inspect', empty])).err).toContain(
      `${empty}: is ${statSync(empty).size} bytes, its header [] complex64 needs 136: the file is longer than its header says`,
    );
    const zero = file('zero.npy');
    writeFileSync(zero, npyHeader('<c8', [0, 33, 3, 8]));
    expect(await run(['inspect', zero])).toMatchObject({
      code: 2,
      err: expect.stringContaining(`${zero}: its tensor tensor has shape [0, 33, 3, 8]: no data`),
    });
    const real = file('real.npy');
    writeFileSync(real, Buffer.concat([npyHeader('<f8', [3, 33, 3, 8]), Buffer.alloc(3 * 33 * 3 * 8 * 8)]));
    expect(await run(['inspect', real])).toMatchObject({
      code: 2,
      err: expect.stringContaining(`${real}: its tensor tensor is float64; a channel tensor is complex64 or complex128`),
    });
    const long = withHeader('long.npy', "{'descr': '<c8', 'fortran_order': False, 'shape': (4, 33, 3, 8), }");
    expect(await run(['inspect', long])).toMatchObject({
      code: 2,
      err: expect.stringMatching(/long\.npy: is \d+ bytes, its header \[4, 33, 3, 8\] complex64 needs \d+: the file is truncated/),
    });
  });
  it('parseNpyHeader reads what npyHeader writes and what numpy writes (format 1.0 and 2.0)', () => {
    expect(parseNpyHeader(npyHeader('<c16', [7])).shape).toEqual([7]);
    expect(parseNpyHeader(npyHeader('<c8', [2, 3, 4], false, true))).toMatchObject({ version: [2, 0], shape: [2, 3, 4] });
    expect(() => npyHeader("<c8', 'x': '", [1])).toThrow('npyHeader(): descr must look like "<c8" or "|u1"');
    expect(() => npyHeader('<c8', [1.5])).toThrow('npyHeader(): shape must be integers >= 0');
  });
  it('side files: wrong types, a shape that disagrees, a FIFO', async () => {
    copyFileSync(file('ok.npy'), file('side.npy'));
    const side = JSON.parse(readFileSync(file('ok.npy.json'), 'utf8'));
    writeFileSync(file('side.npy.json'), JSON.stringify({ ...side, seed: 'seven' }));
    expect(await run(['inspect', file('side.npy')])).toMatchObject({
      code: 2,
      err: expect.stringContaining(`${file('side.npy.json')}: not a pathweave side file: seed must be an integer >= 0, got "seven"`),
    });
    writeFileSync(file('side.npy.json'), JSON.stringify({ ...side, tensor: { ...side.tensor, shape: [3, 33, 3, 9] } }));
    expect(await run(['inspect', file('side.npy')])).toMatchObject({ code: 2, err: expect.stringContaining('the side file says the tensor is [3, 33, 3, 9]') });
    rmSync(file('side.npy.json'));
    execFileSync('mkfifo', [file('side.npy.json')]);
    expect(await run(['inspect', file('side.npy')])).toMatchObject({
      code: 2,
      err: expect.stringContaining(`${file('side.npy.json')}: the side file is a FIFO; only regular files are read`),
    });
  });
});

describe('NPZ: the zip directory is checked against the file (exit 2)', () => {
  /** Offsets of the central directory entries of a zip (APPNOTE 4.3.12), by name. */
  const centralEntries = (bytes: Buffer): Map<string, number> => {
    const entries = new Map<string, number>();
    for (
      let at = bytes.lastIndexOf(Buffer.from([0x50, 0x4b, 0x01, 0x02]), undefined);
      at >= 0;
      at = at > 0 ? bytes.lastIndexOf(Buffer.from([0x50, 0x4b, 0x01, 0x02]), at - 1) : -1
    ) {
      entries.set(bytes.toString('utf8', at + 46, at + 46 + bytes.readUInt16LE(at + 28)), at);
    }
    return entries;
  };
  it('a flipped byte of the stored tensor: CRC-32 mismatch at the end of the pass', async () => {
    const bytes = readFileSync(file('ok.npz'));
    const at = bytes.indexOf(Buffer.from('H.npy')) + 5 + 128 + 100; // inside H's data (local header name, NPY header)
    bytes[at] = bytes[at]! ^ 0x01;
    writeFileSync(file('crc.npz'), bytes);
    const r = await run(['inspect', file('crc.npz')]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/crc\.npz: entry H\.npy: CRC-32 0x[0-9a-f]{8}, the zip directory says 0x[0-9a-f]{8}: the entry is corrupt/);
  });
  it('a directory that lies about a size, an offset, or names an entry twice', async () => {
    const base = readFileSync(file('ok.npz'));
    const cd = centralEntries(base);
    const gains = cd.get('gains.npy')!;
    const huge = Buffer.from(base);
    huge.writeUInt32LE(0x7ffffff0, gains + 20); // compressed size
    huge.writeUInt32LE(0x7ffffff0, gains + 24); // uncompressed size
    writeFileSync(file('size.npz'), huge);
    expect(await run(['inspect', file('size.npz')])).toMatchObject({
      code: 2,
      err: expect.stringContaining(`${file('size.npz')}: the zip directory lies: "gains.npy" claims bytes`),
    });
    const offset = Buffer.from(base);
    offset.writeUInt32LE(base.readUInt32LE(base.length - 22 + 16) + 1, base.length - 22 + 16); // end record: directory offset + 1
    writeFileSync(file('offset.npz'), offset);
    expect(await run(['inspect', file('offset.npz')])).toMatchObject({
      code: 2,
      err: expect.stringMatching(/offset\.npz: the zip directory lies: the directory \[\d+, \d+\) runs past its end record/),
    });
    const renamed = Buffer.from(base);
    renamed.write('x', cd.get('seed.npy')! + 46, 'utf8'); // the directory says "xeed.npy", the local header "seed.npy"
    writeFileSync(file('renamed.npz'), renamed);
    expect(await run(['inspect', file('renamed.npz')])).toMatchObject({
      code: 2,
      err: expect.stringMatching(/renamed\.npz: the zip directory lies: the local header at \d+ does not name "xeed\.npy"/),
    });
  });
  it.skipIf(py.skip)('duplicate entries written by Python zipfile are refused (numpy would read the last)', async () => {
    execFileSync(py.python, [
      '-c',
      `import zipfile, warnings\nwarnings.simplefilter('ignore')\nsrc = zipfile.ZipFile(${JSON.stringify(file('ok.npz'))})\nwith zipfile.ZipFile(${JSON.stringify(file('dup.npz'))}, 'w') as z:\n    for n in src.namelist(): z.writestr(n, src.read(n))\n    z.writestr('gains.npy', src.read('gains.npy'))`,
    ]);
    expect(await run(['inspect', file('dup.npz')])).toMatchObject({
      code: 2,
      err: expect.stringContaining(`${file('dup.npz')}: zip entry "gains.npy" appears twice`),
    });
  });
  it.skipIf(py.skip)('deflated entries (numpy savez_compressed) are read in one inflation per pass', async () => {
    execFileSync(py.python, [
      '-c',
      `import numpy as np\nd = dict(np.load(${JSON.stringify(file('ok.npz'))}))\nnp.savez_compressed(${JSON.stringify(file('deflated.npz'))}, **d)`,
    ]);
    const reader = await openDatasetReader(file('deflated.npz'));
    const plain = await openDatasetReader(file('ok.npz'));
    const opened = (reader as unknown as { inflatedBytes: number }).inflatedBytes;
    try {
      const rows: number[] = [];
      for (let r = 0; r < 3; r++) rows.push(...((await reader.readRows('H', r, r + 1)) as Float32Array));
      expect(rows).toEqual([...(await plain.readRows('H', 0, 3))]);
      // One pass: rows read in order never restart the inflation (a restart per row, as before,
      // inflates the entry again for every row: at least twice its size here).
      const h = reader.arrays.find((a) => a.name === 'H')! as unknown as { entry: { size: number } };
      const inflated = (): number => (reader as unknown as { inflatedBytes: number }).inflatedBytes;
      expect(inflated() - opened).toBeLessThanOrEqual(h.entry.size);
      // A second pass starts again from the entry's first byte and inflates it exactly once.
      const second = inflated();
      for (let r = 0; r < 3; r++) await reader.readRows('H', r, r + 1);
      expect(inflated() - second).toBe(h.entry.size);
    } finally {
      await reader.close();
      await plain.close();
    }
  });
});

describe('outputs: --out is checked before any work (exit 2, nothing written)', () => {
  const generateTo = (out: string, ...extra: string[]): Promise<{ code: number; out: string; err: string }> =>
    run(['generate', FIXTURE, '--out', out, '--quiet', ...extra]);
  it('empty, "-", a folder, a missing folder, an unknown extension, an extension against --format', async () => {
    expect((await generateTo('')).err).toContain('error: --out "": the name is empty');
    expect((await generateTo('-')).err).toContain('error: --out -: "-" (standard output) is not supported');
    expect((await generateTo(`${dir}/`)).err).toContain(`names a folder; name a file in it, e.g. ${join(dir, 'run.h5')}`);
    expect(await generateTo(join(dir, 'nowhere', 'run.h5'))).toMatchObject({
      code: 2,
      err: expect.stringContaining(`the folder ${join(dir, 'nowhere')} does not exist; create it first (mkdir -p ${join(dir, 'nowhere')})`),
    });
    expect(await generateTo(file('run.mat'))).toMatchObject({
      code: 2,
      err: expect.stringContaining('unknown extension .mat; pathweave writes .npy, .npz and .h5 (or .hdf5)'),
    });
    expect(await generateTo(file('run.h5'), '--format', 'npy')).toMatchObject({
      code: 2,
      err: expect.stringContaining('the extension .h5 says h5, but the format asked for is npy'),
    });
    expect(existsSync(file('run.mat')) || existsSync(file('run.h5'))).toBe(false);
  });
  it('a symlink, a FIFO and a device are refused, never replaced', async () => {
    symlinkSync(file('ok.npz'), file('link.npz'));
    expect(await generateTo(file('link.npz'))).toMatchObject({ code: 2, err: expect.stringContaining(`${file('link.npz')} is a symbolic link`) });
    execFileSync('mkfifo', [file('fifo.h5')]);
    expect(await generateTo(file('fifo.h5'))).toMatchObject({
      code: 2,
      err: expect.stringContaining(`${file('fifo.h5')} is a FIFO; pathweave writes regular files only and will not replace it`),
    });
    expect(statSync(file('fifo.h5')).isFIFO()).toBe(true);
    expect(await generateTo('/dev/null', '--format', 'npy')).toMatchObject({ code: 2, err: expect.stringContaining('/dev/null is a device') });
    // A side file that is a symlink (a .npy's side file is replaced too).
    symlinkSync('/etc/hostname', file('sided.npy.json'));
    expect(await generateTo(file('sided.npy'))).toMatchObject({
      code: 2,
      err: expect.stringContaining(`${file('sided.npy.json')} is a symbolic link (written beside the output as ${file('sided.npy.json')})`),
    });
  });
  it('a read-only existing file is refused unless --overwrite', async () => {
    copyFileSync(file('ok.h5'), file('ro.h5'));
    chmodSync(file('ro.h5'), 0o444);
    const before = sha(file('ro.h5'));
    expect(await generateTo(file('ro.h5'))).toMatchObject({
      code: 2,
      err: expect.stringContaining(`${file('ro.h5')} exists and is read-only; give --overwrite to replace it anyway`),
    });
    expect(sha(file('ro.h5'))).toBe(before);
    expect((await generateTo(file('ro.h5'), '--overwrite')).code).toBe(0);
  });
  it('a final name of 250 bytes works (the temporary name is shortened); one past the limit is refused', async () => {
    const name = `${'n'.repeat(247)}.h5`;
    expect(Buffer.byteLength(name)).toBe(250);
    const r = await generateTo(file(name));
    expect(r.code, r.err).toBe(0);
    expect(readdirSync(dir).filter((f) => f.endsWith('.part'))).toEqual([]);
    const npy = `${'n'.repeat(247)}.npy`; // its side file would be 256 bytes
    expect(await generateTo(file(npy))).toMatchObject({
      code: 2,
      err: expect.stringContaining(`the file name "${npy}.json" is 256 bytes, more than the 255 a file name may have`),
    });
  });
  it('merge refuses an output that is one of its inputs', async () => {
    for (const i of [0, 1])
      expect((await run(['generate', FIXTURE, '--shard', `${i}/2`, '--out', file('m.part-{index}-of-{count}.npz'), '--quiet'])).code).toBe(0);
    const before = sha(file('m.part-0-of-2.npz'));
    const r = await run(['merge', file('m.part-0-of-2.npz'), file('m.part-1-of-2.npz'), '--out', file('m.part-0-of-2.npz')]);
    expect(r).toMatchObject({ code: 2, err: expect.stringContaining(`--out ${file('m.part-0-of-2.npz')}: is the input ${file('m.part-0-of-2.npz')}`) });
    expect(sha(file('m.part-0-of-2.npz'))).toBe(before);
  });
});

describe('parts: the manifest covers every array and attribute', () => {
  it.skipIf(py.skip)('a part whose scenario attribute says 99 GHz (size kept) is refused by merge and regenerated by a rerun', async () => {
    for (const i of [0, 1])
      expect((await run(['generate', FIXTURE, '--shard', `${i}/2`, '--out', file('s.part-{index}-of-{count}.h5'), '--quiet'])).code).toBe(0);
    const part = file('s.part-1-of-2.h5');
    const size = statSync(part).size;
    execFileSync(py.python, [
      '-c',
      `import h5py\nf = h5py.File(${JSON.stringify(part)}, 'a')\nf.attrs['scenario'] = f.attrs['scenario'].replace('28000000000', '99000000000')\nf.close()`,
    ]);
    const r = await run(['merge', file('s.part-0-of-2.h5'), part, '--out', file('s.h5'), '--quiet']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(statSync(part).size === size ? /file sha256 [0-9a-f]{64} differs from its manifest's/ : /is \d+ bytes, its manifest says \d+/);
    expect(existsSync(file('s.h5'))).toBe(false);
    const again = await run(['generate', FIXTURE, '--shard', '1/2', '--out', file('s.part-{index}-of-{count}.h5')]);
    expect(again.code).toBe(0);
    expect(again.err).toContain(`regenerating ${part}: `);
  });
  it.skipIf(py.skip)('a scenario attribute that does not match the tensor (resealed manifest): refused by merge and by plot', async () => {
    for (const i of [0, 1])
      expect((await run(['generate', FIXTURE, '--shard', `${i}/2`, '--out', file('a.part-{index}-of-{count}.h5'), '--quiet'])).code).toBe(0);
    const part = file('a.part-1-of-2.h5');
    execFileSync(py.python, [
      '-c',
      `import h5py, json\nf = h5py.File(${JSON.stringify(part)}, 'a')\ns = json.loads(f.attrs['scenario'])\ns['band']['subcarriers'] = 32\nf.attrs['scenario'] = json.dumps(s)\nf.close()`,
    ]);
    reseal(part);
    const r = await run(['merge', file('a.part-0-of-2.h5'), part, '--out', file('a.h5'), '--quiet']);
    expect(r.code).toBe(2);
    expect(r.err).toContain(
      `${part}: its scenario attribute describes H complex64 [2, 32, 3, 8], but the file holds complex64 [2, 33, 3, 8]: the scenario or the tensor was changed`,
    );
    expect(existsSync(file('a.h5'))).toBe(false);
    const p = await run(['plot', part, '--kind', 'delay-profile', '--out', file('a.svg')]);
    expect(p.code).toBe(2);
    expect(p.err).toContain('its scenario attribute describes H complex64 [2, 32, 3, 8]');
  });
  it('parts of different pathweave versions: refused, or merged with a warning under --allow-versions', async () => {
    for (const i of [0, 1])
      expect((await run(['generate', FIXTURE, '--shard', `${i}/2`, '--out', file('v.part-{index}-of-{count}.npz'), '--quiet'])).code).toBe(0);
    reseal(file('v.part-1-of-2.npz'), (m) => (m.pathweaveVersion = '0.0.9'));
    const parts = [file('v.part-0-of-2.npz'), file('v.part-1-of-2.npz')];
    const r = await run(['merge', ...parts, '--out', file('v.npz'), '--quiet']);
    expect(r).toMatchObject({ code: 2, err: expect.stringContaining('the parts were written by different pathweave versions: ') });
    expect(r.err).toContain('give --allow-versions to merge them anyway');
    const ok = await run(['merge', ...parts, '--out', file('v.npz'), '--quiet', '--allow-versions']);
    expect(ok.code, ok.err).toBe(0);
    expect(ok.err).toContain('warning: the parts were written by different pathweave versions (');
  });
  it('a signal during set-up (while the parts are checked) ends merge before anything is written', async () => {
    for (const i of [0, 1])
      expect((await run(['generate', FIXTURE, '--shard', `${i}/2`, '--out', file('g.part-{index}-of-{count}.npz'), '--quiet'])).code).toBe(0);
    const controller = new AbortController();
    controller.abort(new Error('interrupted by SIGTERM'));
    await expect(merge([file('g.part-0-of-2.npz'), file('g.part-1-of-2.npz')], file('g.npz'), { signal: controller.signal })).rejects.toThrow(
      'interrupted by SIGTERM',
    );
    expect(readdirSync(dir).filter((f) => f.startsWith('g.npz') || f.startsWith('.g.npz'))).toEqual([]);
  });
  it('a manifest whose format disagrees with the file', async () => {
    for (const i of [0, 1])
      expect((await run(['generate', FIXTURE, '--shard', `${i}/2`, '--out', file('f.part-{index}-of-{count}.npz'), '--quiet'])).code).toBe(0);
    reseal(file('f.part-0-of-2.npz'), (m) => (m.format = 'h5'));
    reseal(file('f.part-1-of-2.npz'), (m) => (m.format = 'h5'));
    const r = await run(['merge', file('f.part-0-of-2.npz'), file('f.part-1-of-2.npz'), '--out', file('f.h5'), '--quiet']);
    expect(r).toMatchObject({ code: 2, err: expect.stringContaining(`${file('f.part-0-of-2.npz')} is npz, its manifest says h5`) });
  });
});

describe('the .npy side file: committed first, never deleted on an error path', () => {
  it('a .npy commit that fails (a folder appeared under the name) puts the earlier side file back', async () => {
    const out = file('keep.npy');
    const { scenario, text } = await loadScenario(FIXTURE);
    await generate(scenario, text, { out, format: 'npy', seed: 1 });
    const earlier = readFileSync(`${out}.json`, 'utf8');
    rmSync(out);
    await expect(
      generate(scenario, text, {
        out,
        format: 'npy',
        seed: 2,
        onProgress: () => {
          if (!existsSync(out)) mkdirSync(join(out, 'inside'), { recursive: true });
        },
      }),
    ).rejects.toThrow(`cannot finish ${out}`);
    expect(readFileSync(`${out}.json`, 'utf8')).toBe(earlier);
    expect(readdirSync(dir).filter((f) => f.startsWith('.keep.npy'))).toEqual([]);
  });
});

describe('the terminal never receives control characters from names or files', () => {
  it('an escape sequence in a file name is printed escaped', async () => {
    const name = file('evil\u001b[2J\u009b31m.npz');
    writeFileSync(name, 'not a dataset at all');
    const r = await run(['inspect', name]);
    expect(r.code).toBe(2);
    expect(r.err).toContain('evil\\u001b[2J\\u009b31m.npz');
    // eslint-disable-next-line no-control-regex -- the check is that no control character is left
    expect(r.err).not.toMatch(/[\u0000-\u0008\u000b-\u001f\u007f-\u009f]/);
  });
});

describe('scenario limits up front (refused before any build)', () => {
  it('100 000 explicit paths', async () => {
    const s = JSON.parse(readFileSync(FIXTURE, 'utf8'));
    const p = s.paths[0];
    s.paths = Array.from({ length: 100_000 }, (_, i) => ({ ...p, id: `p${i}` }));
    writeFileSync(file('many.json'), JSON.stringify(s));
    const r = await run(['validate', file('many.json')]);
    expect(r.code).toBe(2);
    expect(r.err).toContain('paths: lists 100000 paths, more than the 10000 allowed');
  });
  it('300 walls at order 3', async () => {
    const s = JSON.parse(readFileSync(join(ROOT, 'examples', 'street-corner-28ghz.json'), 'utf8'));
    const wall = s.scene.walls[0];
    s.scene.walls = Array.from({ length: 300 }, () => wall);
    s.scene.maxReflectionOrder = 3;
    writeFileSync(file('walls.json'), JSON.stringify(s));
    const r = await run(['validate', file('walls.json')]);
    expect(r.code).toBe(2);
    expect(r.err).toContain('scene.maxReflectionOrder: 300 walls at order 3 mean 26910300 reflection sequences to trace, more than the 1000000 allowed');
  });
});

describe('a FIFO or a device given as a manifest or a side file is refused, never read', () => {
  it('merge and a shard rerun with a FIFO or /dev/zero as a part manifest; inspect with /dev/zero as a .npy side file', async () => {
    for (const i of [0, 1])
      expect((await run(['generate', FIXTURE, '--shard', `${i}/2`, '--out', file('q.part-{index}-of-{count}.npz'), '--quiet'])).code).toBe(0);
    const manifest = file('q.part-1-of-2.npz.manifest.json');
    const parts = [file('q.part-0-of-2.npz'), file('q.part-1-of-2.npz')];
    rmSync(manifest);
    execFileSync('mkfifo', [manifest]);
    const fifo = await run(['merge', ...parts, '--out', file('q.npz'), '--quiet']);
    expect(fifo.code).toBe(2);
    expect(fifo.err).toContain(`${manifest}: the manifest is a FIFO; only regular files are read`);
    expect(existsSync(file('q.npz'))).toBe(false);
    expect(statSync(manifest).isFIFO()).toBe(true); // not replaced, not opened for writing
    rmSync(manifest);
    symlinkSync('/dev/zero', manifest);
    const device = await run(['merge', ...parts, '--out', file('q.npz'), '--quiet']);
    expect(device.code).toBe(2);
    expect(device.err).toContain(`${manifest}: the manifest is a device; only regular files are read`);
    expect(existsSync(file('q.npz'))).toBe(false);
    // A shard rerun neither reads the device as a manifest nor replaces the link: refused up front.
    const rerun = await run(['generate', FIXTURE, '--shard', '1/2', '--out', file('q.part-{index}-of-{count}.npz'), '--quiet']);
    expect(rerun.code).toBe(2);
    expect(rerun.err).toContain(`${manifest} is a symbolic link (written beside the output as ${manifest})`);
    expect(lstatSync(manifest).isSymbolicLink()).toBe(true);
    // /dev/zero as the side file of a .npy (a symlink under the side file's name).
    copyFileSync(file('ok.npy'), file('zero.npy'));
    symlinkSync('/dev/zero', file('zero.npy.json'));
    expect(await run(['inspect', file('zero.npy')])).toMatchObject({
      code: 2,
      err: expect.stringContaining(`${file('zero.npy.json')}: the side file is a device; only regular files are read`),
    });
  });
});

/** 20 walls at order 3, the receiver walking, one geometry update per 1 ms subframe (a long set-up). */
function slowSetUp(subframes: number): Record<string, unknown> {
  const room = JSON.parse(readFileSync(join(ROOT, 'test', 'fixtures', 'twenty-wall-room.json'), 'utf8'));
  return {
    carrierHz: 28e9,
    timing: { subframeS: 1e-3, subframes, geometryUpdateS: 1e-3 },
    band: { subcarriers: 4, spacingHz: 120e3 },
    transmitter: { position: [2, 2, 3], array: { kind: 'ula', elements: 1 } },
    receiver: { position: [15, 8, 1.5], velocity: [-1.3, 0.2, 0], array: { kind: 'ula', elements: 1, orientation: { yawDeg: 1.5708 } } },
    scene: { lineOfSight: true, maxReflectionOrder: 3, walls: room.scene.walls },
    fading: { model: 'static' },
    seed: 7,
  };
}

describe('the binary and its pipes and signals', () => {
  it('pathweave paths ... | head: a reader that closes the pipe early ends the output quietly, exit 0', async () => {
    const s = JSON.parse(readFileSync(FIXTURE, 'utf8'));
    s.paths = Array.from({ length: 5000 }, (_, i) => ({ ...s.paths[0], id: `p${i}` }));
    writeFileSync(file('listing.json'), JSON.stringify(s));
    // 5000 paths as JSON are about 1.5 MB: far past a pipe's 64 KiB buffer, so writes continue after the close.
    const child = spawn(process.execPath, [CLI, 'paths', file('listing.json'), '--json'], { stdio: ['ignore', 'pipe', 'pipe'] });
    let stderr = '';
    child.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
    let first = '';
    child.stdout.once('data', (d: Buffer) => {
      first = d.toString();
      child.stdout.destroy(); // what head does after its first lines
    });
    const code = await new Promise<number | null>((resolve) => child.on('exit', (c) => resolve(c)));
    expect(first.startsWith('[')).toBe(true);
    expect(stderr).toBe('');
    expect(code).toBe(0);
  }, 60_000);

  it('SIGTERM during the set-up (tracing 2000 geometry updates) ends generate at the next update: exit 1, no file, no temporary', async () => {
    // slowSetUp: 20 walls at order 3 (20 x 19 x 19 = 7220 reflection sequences per update): 2000
    // updates to trace before the first block. The receiver's yaw 1.5708 looks like radians: its
    // warning is printed just before the set-up starts, and is the test's mark that it has begun.
    const folder = tempDir('pathweave-setup-signal-');
    const path = join(folder, 'slow.json');
    writeFileSync(path, JSON.stringify(slowSetUp(2000)));
    // The chunk the set-up yields between is one update's trace: measured here on 40 updates, so
    // the bound below is derived from it (and the check is meaningful only when the whole set-up
    // would take well past the bound).
    const { scenario: sample } = await loadScenario(writeScenario(folder, 'sample.json', slowSetUp(40)));
    const t0 = performance.now();
    await traceUsers(planScenario(sample), async () => undefined);
    const perUpdateMs = (performance.now() - t0) / 40;
    rmSync(join(folder, 'sample.json'));
    // The handler's 900 ms deadline is not needed (nothing to stop but the trace), so the exit
    // comes one update plus the teardown of a process on a shared 2-core machine (as the block
    // case of test/crash-safety.test.ts, 3 s) after the signal.
    const boundMs = 3000 + perUpdateMs;
    expect(2000 * perUpdateMs).toBeGreaterThan(boundMs);
    const out = join(folder, 'slow.npy');
    const child = spawn(process.execPath, [CLI, 'generate', path, '--out', out], { stdio: ['ignore', 'pipe', 'pipe'] });
    let stderr = '';
    child.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
    const exited = new Promise<number | null>((resolve) => child.on('exit', (c) => resolve(c)));
    const deadline = Date.now() + 60_000;
    while (!stderr.includes('warning: receiver.array.orientation')) {
      if (Date.now() > deadline || child.exitCode !== null) throw new Error(`the set-up did not start: ${stderr}`);
      await new Promise((r) => setTimeout(r, 10));
    }
    await new Promise((r) => setTimeout(r, 300));
    const killedAt = Date.now();
    child.kill('SIGTERM');
    const code = await exited;
    const exitAfterMs = Date.now() - killedAt;
    expect(code, stderr).toBe(1);
    expect(stderr).toContain('receiver.array.orientation.yawDeg 1.5708 would be 90.0002 degrees');
    expect(stderr).toContain(`error: interrupted by SIGTERM after 0 of 2000 subframes; removed 0 temporary file(s); nothing was written to ${out}`);
    expect(exitAfterMs).toBeLessThan(boundMs);
    expect(readdirSync(folder)).toEqual(['slow.json']);
  }, 120_000);

  it('validate of a scene whose tracing takes seconds prints progress in geometry updates on stderr', () => {
    const folder = tempDir('pathweave-validate-progress-');
    const path = writeScenario(folder, 'slow.json', slowSetUp(2000));
    const r = runCli(['validate', path]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toContain(`${path}: valid`);
    expect(r.stderr).toMatch(new RegExp(`validate .*slow\\.json: tracing the scene: \\d+/2000 geometry updates \\(\\d+%\\)`));
    expect(r.stderr).toContain('tracing the scene: 2000/2000 geometry updates (100%)');
  }, 120_000);
});
