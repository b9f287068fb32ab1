/** `pathweave validate`: every problem of a scenario, or a one-screen summary (read from its plan). */
import { buildPlan, traceUsers } from '../scenario/build.js';
import { printable } from '../formats/read-support.js';
import { Progress } from './progress.js';
import { checkRequest, DEFAULT_MAX_OUTPUT_BYTES, formatBytes } from '../dataset/generate.js';
import { outputEstimate, planScenario, type ArrayPlan } from '../scenario/plan.js';
import { loadScenario } from '../scenario/validate.js';
import { parseArgs, parseBytes } from './args.js';
import { onePositional, parseDomain, type Command, type Io } from './common.js';

/** A set-up shorter than this prints no progress, ms. */
const PROGRESS_AFTER_MS = 1000;

async function run(argv: string[], io: Io): Promise<number> {
  const args = parseArgs('validate', argv, { domain: 'value', 'max-bytes': 'value' });
  const file = onePositional('validate', args.positionals, 'scenario file');
  const { scenario, warnings } = await loadScenario(file);
  const plan = planScenario(scenario, { domain: parseDomain(args.values.domain) });
  const maxBytes = args.values['max-bytes'] === undefined ? DEFAULT_MAX_OUTPUT_BYTES : parseBytes('--max-bytes', args.values['max-bytes']);
  // The same up-front refusals as generate (size limit, memory, side arrays), before building anything.
  checkRequest(plan, [0, plan.timing.subframes], maxBytes, { sideArrays: 'whole-run' });
  // Tracing a large scene at every geometry update can take minutes (300 walls at order 3 are
  // refused up front; 100 walls at order 3 are not): past one second, a progress line on stderr.
  const started = Date.now();
  let progress: Progress | undefined;
  const traced = await traceUsers(plan, async (done, total) => {
    if (progress === undefined && done > 0 && Date.now() - started > PROGRESS_AFTER_MS) {
      const who = plan.multiUser ? ' (per receiver)' : '';
      progress = new Progress(`validate ${printable(file)}: tracing the scene${who}`, total, process.stderr, false, 'geometry updates');
    } else progress?.update(done); // from the next update on: a rate measured over one update at least
    await new Promise((resolve) => setImmediate(resolve));
  });
  progress?.update(traced.at(-1)?.epochTimesS.length ?? 0);
  const built = buildPlan(plan, { traced });
  const est = outputEstimate(plan);
  const arrayLine = (name: string, array: ArrayPlan): string => {
    const a = array.config;
    const o = array.orientation;
    const layout =
      a.kind === 'ula' ? `ULA of ${a.elements}` : a.kind === 'upa' ? `UPA ${a.rows} rows x ${a.columns} columns` : `custom, ${a.positions!.length} elements`;
    const spacing = array.spacingWavelengths === undefined ? '' : `, spacing ${array.spacingWavelengths} wavelengths`;
    const ports = a.dualPolarized !== undefined ? `, dual-polarised (${a.dualPolarized}): ${array.ports} ports` : '';
    return `  ${name.padEnd(12)} ${layout}${spacing}, yaw ${o.yawDeg} pitch ${o.pitchDeg} roll ${o.rollDeg} deg, ${array.elements} elements${ports}`;
  };
  io.out(`${file}: valid`);
  io.out(
    `  carrier      ${(plan.carrierHz / 1e9).toFixed(3)} GHz, ${plan.timing.subframes} subframes of ${plan.timing.subframeS * 1e3} ms, fading ${plan.fading.model}, seed ${plan.seed}`,
  );
  io.out(arrayLine('transmitter', plan.transmitter.array));
  io.out(arrayLine('receiver', plan.users[0]!.array));
  io.out(`  paths        ${built.paths.length} (${plan.source === 'scene' ? 'traced from the scene' : 'explicit'})`);
  for (const [i, c] of built.generator.correlations.entries()) {
    if (plan.fading.model !== 'gauss-markov') break;
    if (i >= 8) {
      io.out(`               ... ${built.generator.correlations.length - 8} more`);
      break;
    }
    io.out(
      `               ${built.paths[i]!.id}: alpha ${c.alpha.toFixed(6)} (${c.source}${c.dopplersHz.length > 0 ? `, f_D ${c.dopplersHz.map((f) => f.toFixed(1)).join(' and ')} Hz` : ''})`,
    );
  }
  io.out(`  output       ${plan.tensor.name} ${plan.precision} [${est.shape.join(', ')}], ${formatBytes(est.bytes)} (${est.bytes} bytes) as .npy`);
  for (const w of new Set([...warnings, ...built.warnings])) io.out(`  warning: ${w}`);
  return 0;
}

/** The validate command. */
export const validateCommand: Command = {
  usage: 'pathweave validate <scenario.json> [--max-bytes SIZE]',
  run,
};
