/**
 * A small command-line parser: `--name value`, `--name=value`, boolean flags, positionals.
 * Unknown options are refused with the nearest known one suggested.
 */
import { nearestKey } from '../scenario/validate.js';

/** A refusal of the command line (exit code 2). */
export class UsageError extends Error {
  override name = 'UsageError';
}

/** Option table of a command: name to "value" or "flag". */
export type OptionSpec = Record<string, 'value' | 'flag'>;

/** Parsed command line. */
export interface ParsedArgs {
  positionals: string[];
  values: Record<string, string>;
  flags: Set<string>;
}

/** Parse argv against a command's options. */
export function parseArgs(command: string, argv: readonly string[], spec: OptionSpec): ParsedArgs {
  const out: ParsedArgs = { positionals: [], values: {}, flags: new Set() };
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i]!;
    if (a === '--') {
      out.positionals.push(...argv.slice(i + 1));
      break;
    }
    if (!a.startsWith('--') || a === '-') {
      if (a.startsWith('-') && a.length > 1 && !/^-\d/.test(a))
        throw new UsageError(
          `${command}: unknown option ${a}; options are ${Object.keys(spec)
            .map((k) => `--${k}`)
            .join(', ')}`,
        );
      out.positionals.push(a);
      continue;
    }
    const eq = a.indexOf('=');
    const name = eq >= 0 ? a.slice(2, eq) : a.slice(2);
    const kind = spec[name];
    if (kind === undefined) {
      const near = nearestKey(name, Object.keys(spec));
      throw new UsageError(
        `${command}: unknown option --${name}${
          near !== undefined
            ? `; did you mean --${near}?`
            : `; options are ${Object.keys(spec)
                .map((k) => `--${k}`)
                .join(', ')}`
        }`,
      );
    }
    if (kind === 'flag') {
      if (eq >= 0) throw new UsageError(`${command}: --${name} takes no value`);
      out.flags.add(name);
    } else {
      const value = eq >= 0 ? a.slice(eq + 1) : argv[++i];
      if (value === undefined || (eq < 0 && value.startsWith('--'))) throw new UsageError(`${command}: --${name} needs a value`);
      if (name in out.values) throw new UsageError(`${command}: --${name} given twice`);
      out.values[name] = value;
    }
  }
  return out;
}

/**
 * Parse a non-negative integer option.
 * @example parseCount('--seed', '42') // 42
 */
export function parseInteger(option: string, text: string, min = 0, max = Number.MAX_SAFE_INTEGER): number {
  if (!/^\d+$/.test(text)) throw new UsageError(`${option} must be an integer >= ${min}, got ${JSON.stringify(text)}`);
  const v = Number(text);
  if (!Number.isSafeInteger(v) || v < min || v > max) throw new UsageError(`${option} must be an integer in [${min}, ${max}], got ${text}`);
  return v;
}

/**
 * Parse a byte count with an optional binary or decimal suffix.
 * @example parseBytes('--max-bytes', '2GiB') // 2147483648
 */
export function parseBytes(option: string, text: string): number {
  const m = /^(\d+(?:\.\d+)?)\s*(B|KB|MB|GB|TB|KiB|MiB|GiB|TiB)?$/i.exec(text.trim());
  if (m === null) throw new UsageError(`${option} must be a size such as 500MB or 2GiB, got ${JSON.stringify(text)}`);
  const unit = (m[2] ?? 'B').toLowerCase();
  const factor: Record<string, number> = { b: 1, kb: 1e3, mb: 1e6, gb: 1e9, tb: 1e12, kib: 2 ** 10, mib: 2 ** 20, gib: 2 ** 30, tib: 2 ** 40 };
  return Math.floor(Number(m[1]) * factor[unit]!);
}

/**
 * `A:B` half-open, like a Python slice; either end may be omitted.
 * @example parseRange('--subframes', '10:20', 100) // [10, 20]
 */
export function parseRange(option: string, text: string, total: number): [number, number] {
  const m = /^(\d*):(\d*)$/.exec(text);
  if (m === null) throw new UsageError(`${option} must look like A:B (half-open, subframes A to B-1), got ${JSON.stringify(text)}`);
  const a = m[1] === '' ? 0 : Number(m[1]);
  const b = m[2] === '' ? total : Number(m[2]);
  if (!(a < b) || b > total) throw new UsageError(`${option} ${text} must satisfy A < B <= ${total} (the scenario has ${total} subframes)`);
  return [a, b];
}

/** Environment variables of cluster schedulers read by `--shard auto`. */
export interface ShardEnvironment {
  [name: string]: string | undefined;
}

/**
 * `I/N` (I from 0 to N-1), `auto` or `auto/N` (from a scheduler's job-array variables) to a
 * shard index and count.
 * @example parseShard('1/4', {}) // { index: 1, count: 4 }
 */
export function parseShard(text: string, env: ShardEnvironment): { index: number; count: number; source: string } {
  const explicit = /^(\d+)\/(\d+)$/.exec(text);
  if (explicit !== null) {
    const index = Number(explicit[1]);
    const count = Number(explicit[2]);
    if (!(count >= 1) || !(index < count)) throw new UsageError(`--shard ${text}: need 0 <= I < N, got I = ${index}, N = ${count}`);
    return { index, count, source: 'command line' };
  }
  const auto = /^auto(?:\/(\d+))?$/.exec(text);
  if (auto === null) throw new UsageError(`--shard must be I/N, auto or auto/N, got ${JSON.stringify(text)}`);
  const given = auto[1] === undefined ? undefined : Number(auto[1]);
  const int = (name: string): number | undefined => {
    const v = env[name];
    if (v === undefined || v === '') return undefined;
    if (!/^\d+$/.test(v)) throw new UsageError(`--shard auto: ${name} must be a non-negative integer, got ${JSON.stringify(v)}`);
    return Number(v);
  };
  const slurmId = int('SLURM_ARRAY_TASK_ID');
  if (slurmId !== undefined) {
    const min = int('SLURM_ARRAY_TASK_MIN') ?? 0;
    const step = int('SLURM_ARRAY_TASK_STEP') ?? 1;
    const count = given ?? int('SLURM_ARRAY_TASK_COUNT');
    if (count === undefined) throw new UsageError('--shard auto: SLURM_ARRAY_TASK_COUNT is not set; give the count as --shard auto/N');
    if (step < 1 || (slurmId - min) % step !== 0)
      throw new UsageError(`--shard auto: SLURM_ARRAY_TASK_ID ${slurmId} is not MIN ${min} plus a multiple of STEP ${step}`);
    const index = (slurmId - min) / step;
    if (!(index >= 0 && index < count)) throw new UsageError(`--shard auto: Slurm index (ID - MIN) / STEP = ${index} is outside 0..${count - 1}`);
    return { index, count, source: 'Slurm job array' };
  }
  const k8s = int('JOB_COMPLETION_INDEX');
  if (k8s !== undefined) {
    if (given === undefined) throw new UsageError('--shard auto: a Kubernetes Indexed Job gives JOB_COMPLETION_INDEX but not the count; use --shard auto/N');
    if (!(k8s < given)) throw new UsageError(`--shard auto/${given}: JOB_COMPLETION_INDEX ${k8s} is outside 0..${given - 1}`);
    return { index: k8s, count: given, source: 'Kubernetes Indexed Job' };
  }
  throw new UsageError('--shard auto: no scheduler variables found (SLURM_ARRAY_TASK_ID, or JOB_COMPLETION_INDEX with --shard auto/N)');
}

/**
 * Subframes of shard I of N: floor(I S / N) to floor((I + 1) S / N) - 1, as a half-open range.
 * @example shardRange(1, 4, 10) // [2, 5]
 */
export function shardRange(index: number, count: number, subframes: number): [number, number] {
  return [Math.floor((index * subframes) / count), Math.floor(((index + 1) * subframes) / count)];
}
