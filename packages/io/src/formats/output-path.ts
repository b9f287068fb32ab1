/**
 * Checks of an output name before any work (docs/conventions.md, "Committing outputs"): what `--out`
 * may name, refused with an OutputPathError (the CLI exits 2) when it cannot be the file meant.
 *
 * An output is committed by renaming a temporary file over the name (atomic.ts), which replaces
 * whatever the name is: so a symbolic link, a FIFO, a socket or a device under the name is
 * refused (the rename would replace the special file, not write through it); an existing file
 * the user could not write (no owner write permission, or another owner) is refused unless the
 * overwrite option is given; a folder, an empty name and "-" get their own messages; the folder
 * must exist; every name written (the file, a .npy's side file, a part's manifest, and the
 * temporary names, which atomic.ts shortens) must fit the file-name limit.
 */
import { lstat, stat } from 'node:fs/promises';
import { basename, dirname, extname, join } from 'node:path';
import { formatFromPath, type OutputFormat } from './index.js';

/**
 * An output name refused before any work (exit 2): it names the option, the path and what to do.
 * @example new OutputPathError('--out "" is empty; name the file to write, e.g. --out run.h5').name // "OutputPathError"
 */
export class OutputPathError extends Error {
  override name = 'OutputPathError';
}

/** Longest file name (one path component) in bytes on the file systems pathweave writes to (POSIX NAME_MAX). @example NAME_MAX_BYTES // 255 */
export const NAME_MAX_BYTES = 255;

/**
 * Options of {@link checkOutputPath}.
 * @example const options: OutputPathOptions = { option: '--out', format: 'h5', overwrite: false, companions: ['.manifest.json'] };
 */
export interface OutputPathOptions {
  /** How the caller calls the name in messages (default "--out"). */
  option?: string;
  /** The format to be written; an extension that says another is refused. */
  format?: OutputFormat;
  /** Replace an existing file even if the user lacks write permission on it. */
  overwrite?: boolean;
  /** Suffixes of files written beside the output (".json" for a .npy's side file, ".manifest.json"). */
  companions?: readonly string[];
  /** Files that must not be the output (merge's inputs). */
  inputs?: readonly string[];
}

const KNOWN_EXTENSIONS = ['.npy', '.npz', '.h5', '.hdf5'];

/**
 * Check an output name before any work; resolves when it may be written, else throws
 * OutputPathError saying why.
 * @example await checkOutputPath('out/run.h5', { format: 'npy' }) // throws OutputPathError '--out out/run.h5: the extension .h5 says h5, but the format asked for is npy; name the file .npy or drop --format'
 */
export async function checkOutputPath(out: string, options: OutputPathOptions = {}): Promise<void> {
  const option = options.option ?? '--out';
  const refuse = (why: string): never => {
    throw new OutputPathError(`${option} ${out === '' ? '""' : out}: ${why}`);
  };
  if (out === '') refuse('the name is empty; name the file to write, e.g. --out run.h5');
  if (out === '-') refuse('"-" (standard output) is not supported: a dataset is committed by renaming a finished file; name a file, e.g. --out run.h5');
  if (out.endsWith('/')) refuse(`names a folder; name a file in it, e.g. ${join(out, 'run.h5')}`);
  if (out.includes('\0')) refuse('the name holds a NUL character');
  const ext = extname(out).toLowerCase();
  const implied = formatFromPath(out);
  if (ext !== '' && !KNOWN_EXTENSIONS.includes(ext) && !/^\.[0-9]+$/.test(ext)) {
    refuse(`unknown extension ${ext}; pathweave writes .npy, .npz and .h5 (or .hdf5)`);
  }
  if (options.format !== undefined && implied !== undefined && implied !== options.format) {
    refuse(`the extension ${ext} says ${implied}, but the format asked for is ${options.format}; name the file .${options.format} or drop --format`);
  }
  for (const suffix of ['', ...(options.companions ?? [])]) {
    const name = basename(out) + suffix;
    if (Buffer.byteLength(name) > NAME_MAX_BYTES)
      refuse(
        `the file name ${suffix === '' ? '' : `${JSON.stringify(name)} `}is ${Buffer.byteLength(name)} bytes, more than the ${NAME_MAX_BYTES} a file name may have`,
      );
  }
  const folder = dirname(out);
  const folderStat = await stat(folder).catch((e: NodeJS.ErrnoException) => e);
  if (folderStat instanceof Error) {
    if (folderStat.code === 'ENOENT') refuse(`the folder ${folder} does not exist; create it first (mkdir -p ${folder})`);
    if (folderStat.code === 'ENOTDIR') refuse(`a part of ${folder} is not a folder`);
    refuse(`the folder ${folder} cannot be used (${folderStat.code ?? folderStat.message})`);
  } else if (!folderStat.isDirectory()) refuse(`${folder} is not a folder`);
  for (const suffix of ['', ...(options.companions ?? [])]) {
    const path = out + suffix;
    const st = await lstat(path).catch(() => undefined);
    if (st === undefined) continue;
    const what = suffix === '' ? '' : ` (written beside the output as ${path})`;
    if (st.isSymbolicLink())
      refuse(`${path} is a symbolic link${what}; the output is committed by rename, which would replace the link, not write to its target: name the real file`);
    if (st.isDirectory()) refuse(`${path} is a folder${what}; name a file in it, e.g. ${join(path, 'run.h5')}`);
    if (st.isFIFO() || st.isSocket() || st.isCharacterDevice() || st.isBlockDevice()) {
      refuse(
        `${path} is ${st.isFIFO() ? 'a FIFO' : st.isSocket() ? 'a socket' : 'a device'}${what}; pathweave writes regular files only and will not replace it`,
      );
    }
    const uid = process.getuid?.();
    const notOurs = uid !== undefined && st.uid !== uid;
    const readOnly = (st.mode & 0o200) === 0;
    if ((notOurs || readOnly) && options.overwrite !== true) {
      refuse(`${path} exists and is ${readOnly ? 'read-only' : `owned by another user (uid ${st.uid})`}${what}; give --overwrite to replace it anyway`);
    }
  }
  for (const input of options.inputs ?? []) {
    const [a, b] = await Promise.all([stat(out).catch(() => undefined), stat(input).catch(() => undefined)]);
    if (a !== undefined && b !== undefined && a.dev === b.dev && a.ino === b.ino) refuse(`is the input ${input}; write the result to a new file`);
  }
}
