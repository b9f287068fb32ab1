/**
 * Scenario validation: every problem at once, each with its dotted path, the value found and
 * what is allowed (`receiver.array.spacingWavelengths: must be > 0, got -0.5`). Unknown keys
 * are refused with the nearest known key suggested.
 */
import { readFile } from 'node:fs/promises';
import { dirname } from 'node:path';
import type { z } from 'zod';
import { DEFAULT_REFLECTION_ORDER, validateScene, type Scene } from '@pathweave/geometry';
import { JsonSyntaxError, parseJson } from './json.js';
import { checkPlausibility } from './plausibility.js';
import { portCount } from './plan.js';
import { describeValue, formatProblem, ScenarioError, type Problem } from './problems.js';
import { CURRENT_FORMAT_VERSION, SCENARIO_DEFAULTS, scenarioSchema, type Scenario } from './schema.js';

export { describeValue, formatProblem, ScenarioError, type Problem } from './problems.js';

/**
 * Result of `safeParseScenario`.
 * @example
 * const result: ScenarioResult = safeParseScenario({ carrierHz: 28e9 });
 * result.ok ? result.warnings : result.problems.slice(0, 2) // [{ path: 'timing', message: 'is required (object)' }, { path: 'transmitter', message: 'is required (object)' }]
 */
export type ScenarioResult = { ok: true; scenario: Scenario; warnings: string[] } | { ok: false; problems: Problem[] };

/**
 * Dotted path from zod's path segments: a.b[2].c
 * @example dottedPath(['scene', 'walls', 2, 'vertices', 0]) // "scene.walls[2].vertices[0]"
 */
export function dottedPath(segments: readonly PropertyKey[]): string {
  let out = '';
  for (const s of segments) {
    if (typeof s === 'number') out += `[${s}]`;
    else out += out === '' ? String(s) : `.${String(s)}`;
  }
  return out;
}

function valueAt(root: unknown, segments: readonly PropertyKey[]): unknown {
  let v: unknown = root;
  for (const s of segments) {
    if (v === null || typeof v !== 'object') return undefined;
    v = (v as Record<PropertyKey, unknown>)[s];
  }
  return v;
}

/** Levenshtein distance (small strings only). */
function editDistance(a: string, b: string): number {
  const row = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    let diagonal = row[0]!;
    row[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const above = row[j]!;
      row[j] = Math.min(row[j]! + 1, row[j - 1]! + 1, diagonal + (a[i - 1]!.toLowerCase() === b[j - 1]!.toLowerCase() ? 0 : 1));
      diagonal = above;
    }
  }
  return row[b.length]!;
}

/**
 * The known key nearest to `key`, if it is close enough to be a likely typo.
 * @example nearestKey('carierHz', ['carrierHz', 'seed']) // "carrierHz"
 */
export function nearestKey(key: string, known: readonly string[]): string | undefined {
  let best: string | undefined;
  let bestDistance = Infinity;
  for (const k of known) {
    const d = k.toLowerCase() === key.toLowerCase() ? 0 : editDistance(key, k);
    if (d < bestDistance) {
      best = k;
      bestDistance = d;
    }
  }
  return best !== undefined && bestDistance <= Math.max(2, Math.floor(best.length / 3)) ? best : undefined;
}

type AnySchema = z.ZodType & { _zod: { def: Record<string, unknown> & { type: string } } };

/** The keys an object schema allows at `segments` (walking through optionals, arrays, unions). */
function knownKeysAt(schema: AnySchema, segments: readonly PropertyKey[], data: unknown): string[] {
  const def = schema._zod.def;
  switch (def.type) {
    case 'optional':
    case 'default':
    case 'nullable':
      return knownKeysAt(def.innerType as AnySchema, segments, data);
    case 'pipe':
      return knownKeysAt(def.in as AnySchema, segments, data);
    case 'union': {
      const keys = new Set<string>();
      for (const option of def.options as AnySchema[]) for (const k of knownKeysAt(option, segments, data)) keys.add(k);
      return [...keys];
    }
    case 'array':
      return segments.length === 0 ? [] : knownKeysAt(def.element as AnySchema, segments.slice(1), valueAt(data, segments.slice(0, 1)));
    case 'object': {
      const shape = def.shape as Record<string, AnySchema>;
      if (segments.length === 0) return Object.keys(shape);
      const next = shape[String(segments[0])];
      return next === undefined ? [] : knownKeysAt(next, segments.slice(1), valueAt(data, segments.slice(0, 1)));
    }
    default:
      return [];
  }
}

function boundText(inclusive: boolean | undefined, bound: unknown, below: boolean): string {
  return `${below ? (inclusive ? '>=' : '>') : inclusive ? '<=' : '<'} ${bound as string}`;
}

/**
 * The message of every issue the schema states no message for: those are worded here, from the
 * issue's code; a message the schema states (a variant's required or refused key) is kept as is.
 */
const UNWORDED = '\u0000unworded';

function issueToProblems(issue: z.core.$ZodIssue, input: unknown): Problem[] {
  const path = dottedPath(issue.path);
  const value = valueAt(input, issue.path);
  const got = `got ${describeValue(value)}`;
  if (issue.message !== UNWORDED && issue.code !== 'unrecognized_keys') return [{ path, message: issue.message }];
  switch (issue.code) {
    case 'unrecognized_keys': {
      // A key already present is never the one meant (timing.subframs must not suggest subframeS).
      const here = valueAt(input, issue.path);
      const known = knownKeysAt(scenarioSchema as unknown as AnySchema, issue.path, input);
      const absent = known.filter((k) => here === null || typeof here !== 'object' || !Object.hasOwn(here, k));
      return issue.keys.map((key) => {
        const near = nearestKey(key, absent);
        const hint = near !== undefined ? `; did you mean "${near}"?` : known.length > 0 ? `; allowed here: ${known.join(', ')}` : '';
        return { path: dottedPath([...issue.path, key]), message: `unknown key${hint}` };
      });
    }
    case 'invalid_type': {
      if (value === undefined) return [{ path, message: `is required (${issue.expected})` }];
      const expected = issue.expected === 'int' ? 'an integer' : issue.expected === 'tuple' ? 'an array' : `a ${issue.expected}`;
      const extra = issue.expected === 'int' && typeof value === 'number' && !Number.isSafeInteger(value) && Number.isInteger(value) ? ' below 2^53' : '';
      return [{ path, message: `must be ${expected}${extra}, ${got}` }];
    }
    case 'too_small':
      if (issue.origin === 'array' || issue.origin === 'string') {
        const what = issue.origin === 'array' ? 'item' : 'character';
        return [{ path, message: `must have at least ${issue.minimum as number} ${what}${issue.minimum === 1 ? '' : 's'}, ${got}` }];
      }
      return [{ path, message: `must be ${boundText(issue.inclusive, issue.minimum, true)}, ${got}` }];
    case 'too_big':
      if (issue.origin === 'array' || issue.origin === 'string') {
        const what = issue.origin === 'array' ? 'item' : 'character';
        return [{ path, message: `must have at most ${issue.maximum as number} ${what}s, ${got}` }];
      }
      if (issue.origin === 'number' && issue.maximum === 2 ** 53 - 1) return [{ path, message: `must be an integer below 2^53, ${got}` }];
      if (path === 'formatVersion')
        return [
          {
            path,
            message: `this build reads scenario format versions 1 to ${CURRENT_FORMAT_VERSION}; version ${describeValue(value)} comes from a newer pathweave; older versions load with the same meaning`,
          },
        ];
      return [{ path, message: `must be ${boundText(issue.inclusive, issue.maximum, false)}, ${got}` }];
    case 'invalid_value':
      return [{ path, message: `must be one of ${issue.values.map((v) => JSON.stringify(v)).join(', ')}, ${got}` }];
    case 'invalid_union': {
      // A discriminated union whose tag (array kind, fading model) names no variant.
      if (issue.discriminator !== undefined && 'options' in issue && issue.options !== undefined && issue.errors.length === 0) {
        return [
          {
            path,
            message: `must be one of ${issue.options
              .filter((v) => v !== undefined)
              .map((v) => JSON.stringify(v))
              .join(', ')}, ${got}`,
          },
        ];
      }
      // Report the alternative that came closest (fewest problems) rather than a bare "invalid".
      let best: Problem[] | undefined;
      for (const branch of issue.errors) {
        const problems = branch.flatMap((sub) => issueToProblems({ ...sub, path: [...issue.path, ...sub.path] } as z.core.$ZodIssue, input));
        if (best === undefined || problems.length < best.length) best = problems;
      }
      if (Array.isArray(value) || typeof value !== 'object' || best === undefined || best.length === 0) {
        return [{ path, message: `does not match any allowed form, ${got}` }];
      }
      return best;
    }
    default:
      return [{ path, message: `${issue.message}, ${got}` }];
  }
}

/** Checks across fields that the per-key schema cannot express. */
/** Most explicit paths a scenario may list. @example MAX_EXPLICIT_PATHS // 10000 */
export const MAX_EXPLICIT_PATHS = 10_000;

/** Most wall-reflection sequences a scene may ask the tracer to try (walls W at order N: W (W-1)^(k-1) summed over k <= N). @example MAX_REFLECTION_SEQUENCES // 1000000 */
export const MAX_REFLECTION_SEQUENCES = 1_000_000;

function crossChecks(s: Scenario): Problem[] {
  const problems: Problem[] = [];
  if (s.paths === undefined && s.scene === undefined)
    problems.push({ path: '', message: 'give either "paths" (explicit paths) or "scene" (paths traced from geometry)' });
  if (s.paths !== undefined && s.scene !== undefined) problems.push({ path: 'scene', message: 'give either "paths" or "scene", not both' });
  if (s.band === undefined && s.taps === undefined) problems.push({ path: '', message: 'give "band" (frequency-domain output) or "taps" (tap-delay output)' });
  if (s.receiver === undefined && s.receivers === undefined) problems.push({ path: 'receiver', message: 'is required (or give "receivers")' });
  if (s.receiver !== undefined && s.receivers !== undefined) problems.push({ path: 'receivers', message: 'give either "receiver" or "receivers", not both' });
  const terminals: [string, Scenario['transmitter']][] = [['transmitter', s.transmitter]];
  if (s.receiver !== undefined) terminals.push(['receiver', s.receiver]);
  s.receivers?.forEach((r, i) => terminals.push([`receivers[${i}]`, r]));
  for (const [name, t] of terminals) {
    const a = t.array;
    const at = `${name}.array`;
    // Which keys each kind requires or refuses is the schema's (the variants of arraySchema).
    if (a.dualPolarized !== undefined && a.polarization !== undefined) {
      problems.push({
        path: `${at}.polarization`,
        message: `does not apply to a dual-polarised array (dualPolarized "${a.dualPolarized}" sets both ports), got ${describeValue(a.polarization)}`,
      });
    }
    const table = a.element !== undefined && typeof a.element === 'object' ? a.element.table : undefined;
    if (table !== undefined && (table.gainsDbi.length !== table.elevationsDeg.length || table.gainsDbi.some((r) => r.length !== table.azimuthsDeg.length))) {
      problems.push({
        path: `${at}.element.table.gainsDbi`,
        message: `must be ${table.elevationsDeg.length} rows (elevations) of ${table.azimuthsDeg.length} values (azimuths)`,
      });
    }
    if (t.trajectory !== undefined) {
      t.trajectory.forEach((w, i) => {
        if (i > 0 && !(w.t > t.trajectory![i - 1]!.t)) {
          problems.push({ path: `${name}.trajectory[${i}].t`, message: `times must increase, got ${w.t} after ${t.trajectory![i - 1]!.t}` });
        }
      });
      if (t.velocity !== undefined) problems.push({ path: `${name}.velocity`, message: 'give either "velocity" or "trajectory", not both' });
    }
  }
  // The roll-off belongs to pulse "raised-cosine": the variants of the taps union say so.
  // Up-front limits on work (docs/conventions.md, "Limits"): refused here, before a build that
  // would hold the event loop (and so a signal) for a long time.
  if (s.paths !== undefined && s.paths.length > MAX_EXPLICIT_PATHS) {
    problems.push({
      path: 'paths',
      message: `lists ${s.paths.length} paths, more than the ${MAX_EXPLICIT_PATHS} allowed; split the scenario or widen fewer paths into clusters`,
    });
  }
  if (s.scene?.launch?.rays !== undefined && s.scene.launch.angularSpacingDeg !== undefined)
    problems.push({ path: 'scene.launch.rays', message: 'give rays or angularSpacingDeg, not both' });
  // ray launching does not enumerate sequences: its work is rays times bounces, bounded by the schema
  if (s.scene !== undefined && s.scene.method !== 'launch') {
    const walls = s.scene.walls?.length ?? 0;
    const order = s.scene.maxReflectionOrder ?? DEFAULT_REFLECTION_ORDER;
    let sequences = 0;
    for (let k = 1, n = walls; k <= order; k++, n *= Math.max(walls - 1, 0)) sequences += n; // no wall twice in a row
    if (sequences > MAX_REFLECTION_SEQUENCES) {
      problems.push({
        path: 'scene.maxReflectionOrder',
        message: `${walls} walls at order ${order} mean ${sequences} reflection sequences to trace, more than the ${MAX_REFLECTION_SEQUENCES} allowed; lower maxReflectionOrder or give fewer walls`,
      });
    }
  }
  const ids = new Set<string>();
  s.paths?.forEach((p, i) => {
    if (p.id === undefined) return;
    if (ids.has(p.id)) problems.push({ path: `paths[${i}].id`, message: `duplicate path id ${JSON.stringify(p.id)}` });
    ids.add(p.id);
  });
  // Receivers share one tensor, so they must have the same number of elements.
  if (s.receivers !== undefined && s.receivers.length > 1) {
    const count = portCount;
    const n0 = count(s.receivers[0]!.array);
    s.receivers.forEach((r, i) => {
      if (count(r.array) !== n0)
        problems.push({
          path: `receivers[${i}].array`,
          message: `has ${count(r.array)} ports (elements, twice for dualPolarized) but receivers[0] has ${n0}; users share one tensor [S, U, ..., Nr, Nt]`,
        });
    });
    const ids = new Set<string>();
    s.receivers.forEach((r, i) => {
      const id = r.id ?? String(i);
      if (ids.has(id)) problems.push({ path: `receivers[${i}].id`, message: `duplicate user id ${JSON.stringify(id)}` });
      ids.add(id);
    });
  }
  // Time resolution: numerology (3GPP TS 38.211 section 4) or a uniform symbol count.
  const t = s.timing;
  if (t.numerology !== undefined) {
    if (t.numerology < 0 || t.numerology > 4)
      problems.push({ path: 'timing.numerology', message: `must be an integer from 0 to 4 (subcarrier spacing 15 kHz * 2^mu), got ${t.numerology}` });
    else {
      if (t.cyclicPrefix === 'extended' && t.numerology !== 2)
        problems.push({
          path: 'timing.cyclicPrefix',
          message: `"extended" is allowed only with numerology 2 (60 kHz, TS 38.211 Table 4.2-1), got numerology ${t.numerology}`,
        });
      const symbols = (t.cyclicPrefix === 'extended' ? 12 : 14) * 2 ** t.numerology;
      if (t.symbolsPerSubframe !== undefined && t.symbolsPerSubframe !== symbols)
        problems.push({
          path: 'timing.symbolsPerSubframe',
          message: `numerology ${t.numerology} has ${symbols} symbols per 1 ms subframe, got ${t.symbolsPerSubframe}`,
        });
      const spacing = SCENARIO_DEFAULTS.numerologyBaseSpacingHz * 2 ** t.numerology;
      if (s.band?.spacingHz !== undefined && s.band.spacingHz !== spacing)
        problems.push({
          path: 'band.spacingHz',
          message: `numerology ${t.numerology} means ${spacing} Hz; give that or leave spacingHz out, got ${s.band.spacingHz}`,
        });
      if (t.subframeS < 1e-3)
        problems.push({ path: 'timing.subframeS', message: `an NR subframe is 1 ms: with a numerology it must be >= 0.001, got ${t.subframeS}` });
    }
  } else if (t.cyclicPrefix !== undefined) problems.push({ path: 'timing.cyclicPrefix', message: 'applies only with timing.numerology' });
  if (s.band !== undefined && s.band.spacingHz === undefined && t.numerology === undefined)
    problems.push({ path: 'band.spacingHz', message: 'is required (or give timing.numerology, from which it follows)' });
  const f = s.fading;
  // Which options each model takes is the schema's (the variants of the fading union).
  const polarised = f.xprDb !== undefined || terminals.some(([, t]) => t.array.dualPolarized !== undefined);
  if (polarised && s.band?.beamSquint === true)
    problems.push({ path: 'band.beamSquint', message: 'is not supported together with dual-polarised arrays or fading.xprDb' });
  // A cluster's sub-path count with method "offsets-38901" is the schema's (the variants of clusterSchema).
  for (const [i, p] of (s.paths ?? []).entries()) {
    for (const key of ['aodDeg', 'aoaDeg'] as const) {
      const el = p[key][1];
      if (el < -90 || el > 90) problems.push({ path: `paths[${i}].${key}[1]`, message: `elevation must lie in [-90, 90] degrees, got ${el}` });
    }
  }
  if (s.scene?.atmosphere !== undefined && s.scene.gasAttenuationDbPerKm !== undefined)
    problems.push({ path: 'scene.atmosphere', message: 'give either "atmosphere" (ITU-R P.676 line-by-line) or "gasAttenuationDbPerKm", not both' });
  if (s.scene?.atmosphere !== undefined && !(s.carrierHz >= 1e9 && s.carrierHz <= 1e12))
    problems.push({ path: 'scene.atmosphere', message: `the P.676 line-by-line method covers 1-1000 GHz, got a carrier of ${s.carrierHz / 1e9} GHz` });
  if (s.scene !== undefined && problems.length === 0) {
    const receivers = s.receivers ?? (s.receiver !== undefined ? [s.receiver] : []);
    receivers.forEach((r, i) => {
      const at = s.receivers !== undefined ? `receivers[${i}]` : 'receiver';
      for (const p of validateScene(s.scene as unknown as Scene, {
        transmitter: terminalPoint(s.transmitter),
        receiver: terminalPoint(r),
        carrierHz: s.carrierHz,
        scenePath: 'scene',
        transmitterPath: 'transmitter.position',
        receiverPath: `${at}.position`,
      })) {
        if (p.severity === 'error' && !problems.some((q) => q.path === p.path && q.message === p.message)) problems.push({ path: p.path, message: p.message });
        else if (p.severity === 'warning') sceneWarnings.add(formatProblem(p));
      }
    });
  }
  return problems;
}

const sceneWarnings = new Set<string>();

function terminalPoint(t: Scenario['transmitter']): [number, number, number] {
  const p = t.trajectory?.[0]?.position ?? t.position;
  return [p[0]!, p[1]!, p[2] ?? 0];
}

/**
 * Hooks a later stage (the scene tracer, fading models) can add checks through.
 * @example const seedNotZero: ScenarioCheck = (scenario) => ({ problems: scenario.seed === 0 ? [{ path: 'seed', message: 'must not be 0 here, got 0' }] : [], warnings: [] });
 */
export type ScenarioCheck = (scenario: Scenario) => { problems: Problem[]; warnings: string[] };
const extraChecks: ScenarioCheck[] = [];

/**
 * Register an extra semantic check run after the schema and the cross-field checks pass.
 * @example registerScenarioCheck((s) => ({ problems: [], warnings: s.name === undefined ? ['the scenario has no name'] : [] })) // undefined; every later safeParseScenario runs the check
 */
export function registerScenarioCheck(check: ScenarioCheck): void {
  extraChecks.push(check);
}

/**
 * Validate a parsed JSON value as a scenario, collecting every problem.
 * @example safeParseScenario({}).ok // false
 */
export function safeParseScenario(input: unknown): ScenarioResult {
  if (input === null || typeof input !== 'object' || Array.isArray(input)) {
    return { ok: false, problems: [{ path: '', message: `a scenario must be a JSON object, got ${describeValue(input)}` }] };
  }
  const result = scenarioSchema.safeParse(input, { error: () => UNWORDED });
  if (!result.success) {
    const problems = result.error.issues.flatMap((issue) => issueToProblems(issue, input));
    return { ok: false, problems: dedupe(problems) };
  }
  sceneWarnings.clear();
  const problems = crossChecks(result.data);
  const warnings: string[] = [...sceneWarnings];
  if (problems.length === 0) {
    for (const check of [checkPlausibility, ...extraChecks]) {
      const r = check(result.data);
      problems.push(...r.problems);
      warnings.push(...r.warnings);
    }
  }
  return problems.length > 0 ? { ok: false, problems } : { ok: true, scenario: result.data, warnings };
}

function dedupe(problems: Problem[]): Problem[] {
  const seen = new Set<string>();
  return problems.filter((p) => {
    const k = formatProblem(p);
    if (seen.has(k)) return false;
    seen.add(k);
    return true;
  });
}

/**
 * Parse scenario text (JSON); throws ScenarioError with every problem.
 * @example parseScenarioText('{"carrierHz": 28e9,}') // throws ScenarioError "scenario: 1 problem\nnot valid JSON: expected a key in double quotes but found '}' at line 1, column 20"
 */
export function parseScenarioText(text: string, source = 'scenario'): { scenario: Scenario; warnings: string[] } {
  let json: unknown;
  try {
    json = parseJson(text);
  } catch (e) {
    if (e instanceof JsonSyntaxError) throw new ScenarioError([{ path: '', message: `not valid JSON: ${e.message}` }], source);
    throw e;
  }
  const r = safeParseScenario(json);
  if (!r.ok) throw new ScenarioError(r.problems, source);
  return { scenario: r.scenario, warnings: r.warnings };
}

/**
 * Read and validate a scenario file, with `scene.imports` read into walls from files beside it;
 * throws ScenarioError (also for an unreadable file).
 * @example await loadScenario('/nonexistent/run.json') // throws ScenarioError "/nonexistent/run.json: 1 problem\ncannot read the file: ENOENT"
 */
export async function loadScenario(file: string): Promise<{ scenario: Scenario; warnings: string[]; text: string }> {
  let text: string;
  try {
    text = await readFile(file, 'utf8');
  } catch (e) {
    throw new ScenarioError([{ path: '', message: `cannot read the file: ${(e as NodeJS.ErrnoException).code ?? String(e)}` }], file);
  }
  const parsed = parseScenarioText(text, file);
  // scene.imports: files beside the scenario, read into walls (scenario/imports.ts)
  const { expandSceneImports } = await import('./imports.js');
  return { ...parsed, scenario: await expandSceneImports(parsed.scenario, dirname(file), file), text };
}
