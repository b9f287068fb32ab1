/**
 * Scenario problems: one problem (dotted path and message) and the error that carries every
 * problem of a scenario. Apart from validate.ts so that the plan can refuse input without
 * importing the validator (validate.ts re-exports both).
 */

/**
 * One problem of a scenario.
 * @example const problem: Problem = { path: 'receiver.array.spacingWavelengths', message: 'must be > 0, got -0.5' };
 */
export interface Problem {
  /** Dotted path, e.g. "transmitter.array.rows" or "paths[2].delayS" ("" for the document). */
  path: string;
  /** What is wrong and what is allowed. */
  message: string;
}

/**
 * Thrown by `parseScenario` and `loadScenario`; carries every problem.
 * @example new ScenarioError([{ path: 'seed', message: 'must be an integer >= 0, got -1' }], 'run.json').message // "run.json: 1 problem\nseed: must be an integer >= 0, got -1"
 */
export class ScenarioError extends Error {
  constructor(
    readonly problems: Problem[],
    readonly source = 'scenario',
  ) {
    super(`${source}: ${problems.length} problem${problems.length === 1 ? '' : 's'}\n` + problems.map(formatProblem).join('\n'));
    this.name = 'ScenarioError';
  }
}

/**
 * "path: message" (or just the message for the document itself).
 * @example formatProblem({ path: 'paths[2].delayS', message: 'must be >= 0, got -1e-9' }) // "paths[2].delayS: must be >= 0, got -1e-9"
 */
export function formatProblem(p: Problem): string {
  return p.path === '' ? p.message : `${p.path}: ${p.message}`;
}

/**
 * A short rendering of a value for messages.
 * @example [describeValue(undefined), describeValue('x'), describeValue([1, 2]), describeValue({ a: 1 })] // ['nothing', '"x"', '[1,2]', 'an object']
 */
export function describeValue(v: unknown): string {
  if (v === undefined) return 'nothing';
  if (typeof v === 'string') return JSON.stringify(v.length > 60 ? `${v.slice(0, 57)}...` : v);
  if (typeof v === 'number' || typeof v === 'boolean' || v === null) return String(v);
  if (Array.isArray(v)) {
    const s = JSON.stringify(v);
    return s.length > 60 ? `an array of ${v.length} items` : s;
  }
  return 'an object';
}
