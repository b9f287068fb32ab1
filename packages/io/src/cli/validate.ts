/** `pathweave validate`: every problem of a scenario, or a one-screen summary. */
import { totalmem } from 'node:os';
import { buildScenario, chooseDomain, elementCount, outputEstimate, portCount, sideArrayBytes } from '../scenario/build.js';
import { checkRequest, DEFAULT_MAX_OUTPUT_BYTES, formatBytes, RequestError } from '../dataset/generate.js';
import { loadScenario } from '../scenario/validate.js';
import { parseArgs, parseBytes } from './args.js';
import { onePositional, parseDomain, type Command, type Io } from './common.js';

async function run(argv: string[], io: Io): Promise<number> {
  const args = parseArgs('validate', argv, { domain: 'value', 'max-bytes': 'value' });
  const file = onePositional('validate', args.positionals, 'scenario file');
  const { scenario, warnings } = await loadScenario(file);
  const domain = chooseDomain(scenario, parseDomain(args.values.domain));
  const maxBytes = args.values['max-bytes'] === undefined ? DEFAULT_MAX_OUTPUT_BYTES : parseBytes('--max-bytes', args.values['max-bytes']);
  // The same up-front refusals as generate (size limit, memory), before building anything.
  checkRequest(scenario, domain, [0, scenario.timing.subframes], maxBytes, scenario.paths?.length ?? 1);
  const side = sideArrayBytes(scenario, scenario.timing.subframes, scenario.paths?.length ?? 1);
  if (side > totalmem() / 4) throw new RequestError(`the per-subframe side arrays (gains and ground truth) would need at least ${formatBytes(side)} of memory; generate the run in shards (--shard)`);
  const built = buildScenario(scenario, { domain });
  const est = outputEstimate(scenario, domain);
  const arrayLine = (name: string, a: typeof scenario.transmitter.array): string => {
    const o = a.orientation ?? {};
    const layout = a.kind === 'ula' ? `ULA of ${a.elements}` : a.kind === 'upa' ? `UPA ${a.rows} rows x ${a.columns} columns` : `custom, ${a.positions!.length} elements`;
    const spacing = a.kind === 'custom' ? '' : `, spacing ${a.spacingWavelengths ?? 0.5} wavelengths`;
    const ports = a.dualPolarized !== undefined ? `, dual-polarised (${a.dualPolarized}): ${portCount(a)} ports` : '';
    return `  ${name.padEnd(12)} ${layout}${spacing}, yaw ${o.yawDeg ?? 0} pitch ${o.pitchDeg ?? 0} roll ${o.rollDeg ?? 0} deg, ${elementCount(a)} elements${ports}`;
  };
  io.out(`${file}: valid`);
  io.out(`  carrier      ${(scenario.carrierHz / 1e9).toFixed(3)} GHz, ${scenario.timing.subframes} subframes of ${scenario.timing.subframeS * 1e3} ms, fading ${scenario.fading.model}, seed ${scenario.seed}`);
  io.out(arrayLine('transmitter', scenario.transmitter.array));
  io.out(arrayLine('receiver', (scenario.receiver ?? scenario.receivers![0]!).array));
  io.out(`  paths        ${built.paths.length} (${scenario.scene !== undefined ? 'traced from the scene' : 'explicit'})`);
  for (const [i, c] of built.generator.correlations.entries()) {
    if (scenario.fading.model !== 'gauss-markov') break;
    if (i >= 8) {
      io.out(`               ... ${built.generator.correlations.length - 8} more`);
      break;
    }
    io.out(`               ${built.paths[i]!.id}: alpha ${c.alpha.toFixed(6)} (${c.source}${c.dopplersHz.length > 0 ? `, f_D ${c.dopplersHz.map((f) => f.toFixed(1)).join(' and ')} Hz` : ''})`);
  }
  const name = domain === 'frequency' ? 'H' : 'h';
  io.out(`  output       ${name} ${scenario.precision ?? 'complex64'} [${est.shape.join(', ')}], ${formatBytes(est.bytes)} (${est.bytes} bytes) as .npy`);
  for (const w of new Set([...warnings, ...built.warnings])) io.out(`  warning: ${w}`);
  return 0;
}


/** The validate command. */
export const validateCommand: Command = {
  usage: 'pathweave validate <scenario.json> [--max-bytes SIZE]',
  run,
};
