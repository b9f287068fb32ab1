/**
 * Plausibility of values for their unit: the usual slips (a carrier written in GHz under a key
 * in hertz, angles in radians under keys in degrees, element spacing in metres under a key in
 * wavelengths) pass the schema's "positive number" yet write a channel that is wrong by orders
 * of magnitude. Each finding names the key, the value, what it looks like and how to write it.
 * Refusals are values no radio scenario of this library can mean; warnings are values that are
 * possible but more often a mistake.
 */
import { SPEED_OF_LIGHT } from '@pathweave/geometry';
import type { ArrayConfig, Scenario, TerminalConfig } from './schema.js';
import type { Problem } from './validate.js';

/** Lowest carrier accepted, Hz: below 1 MHz a value is almost surely in GHz or MHz. */
export const MIN_CARRIER_HZ = 1e6;
/** Lowest tap sample rate accepted, Hz (below it a value is in MHz or GHz). */
const MIN_SAMPLE_RATE_HZ = 1e3;
/** Lowest subcarrier spacing accepted, Hz (below it a value is in kHz). */
const MIN_SPACING_HZ = 100;
/** Smallest element spacing accepted, in wavelengths (1/20: closer elements are not an array one can build). */
const MIN_ELEMENT_SPACING_WAVELENGTHS = 1 / 20;

const fmt = (v: number): string => String(Number(v.toPrecision(6)));

/** The arrays of a scenario with the dotted path of each. */
function arraysOf(s: Scenario): { path: string; array: ArrayConfig }[] {
  const out = [{ path: 'transmitter.array', array: s.transmitter.array }];
  if (s.receiver !== undefined) out.push({ path: 'receiver.array', array: s.receiver.array });
  s.receivers?.forEach((r, i) => out.push({ path: `receivers[${i}].array`, array: r.array }));
  return out;
}

/**
 * Check a scenario that passed the schema for values implausible for their unit.
 * @example checkPlausibility({ ...scenario, carrierHz: 5.9 }).problems[0] // { path: 'carrierHz', message: 'must be in hertz (>= 1e6, 1 MHz), got 5.9: it looks like GHz: write 5.9e9 for 5.9 GHz' }
 */
export function checkPlausibility(s: Scenario): { problems: Problem[]; warnings: string[] } {
  const problems: Problem[] = [];
  const warnings: string[] = [];
  if (s.carrierHz < MIN_CARRIER_HZ) {
    const hint =
      s.carrierHz < 1e3
        ? `it looks like GHz: write ${fmt(s.carrierHz)}e9 for ${fmt(s.carrierHz)} GHz`
        : `it looks like kHz or MHz: write ${fmt(s.carrierHz)}e6 for ${fmt(s.carrierHz)} MHz`;
    problems.push({ path: 'carrierHz', message: `must be in hertz (>= 1e6, 1 MHz), got ${fmt(s.carrierHz)}: ${hint}` });
  }
  if (s.taps !== undefined && s.taps.sampleRateHz < MIN_SAMPLE_RATE_HZ) {
    const v = fmt(s.taps.sampleRateHz);
    const hint = s.taps.sampleRateHz < 10 ? `it looks like GS/s: write ${v}e9 for ${v} GS/s` : `it looks like MS/s: write ${v}e6 for ${v} MS/s`;
    problems.push({ path: 'taps.sampleRateHz', message: `must be in hertz (>= 1e3), got ${v}: ${hint}` });
  }
  if (s.band?.spacingHz !== undefined && s.band.spacingHz < MIN_SPACING_HZ) {
    problems.push({
      path: 'band.spacingHz',
      message: `must be in hertz (>= 100), got ${fmt(s.band.spacingHz)}: it looks like kHz: write ${fmt(s.band.spacingHz)}e3 for ${fmt(s.band.spacingHz)} kHz`,
    });
  }
  if (s.carrierHz >= MIN_CARRIER_HZ) {
    const lambda = SPEED_OF_LIGHT / s.carrierHz;
    for (const { path, array } of arraysOf(s)) {
      if (array.spacingWavelengths !== undefined && array.spacingWavelengths < MIN_ELEMENT_SPACING_WAVELENGTHS) {
        problems.push({
          path: `${path}.spacingWavelengths`,
          message:
            `must be >= 0.05 (1/20 of a wavelength), got ${fmt(array.spacingWavelengths)}: the key is in wavelengths (0.5 is half a wavelength, ${fmt(lambda / 2)} m at this carrier)` +
            `${array.spacingWavelengths < lambda ? `; ${fmt(array.spacingWavelengths)} m would be ${fmt(array.spacingWavelengths / lambda)} wavelengths` : ''}`,
        });
      }
      const positions = array.positions;
      if (positions !== undefined && positions.length > 1 && positions.length <= 4096) {
        let best = Infinity,
          pair: [number, number] = [0, 1];
        for (let i = 0; i < positions.length; i++) {
          for (let j = i + 1; j < positions.length; j++) {
            const a = positions[i]!,
              b = positions[j]!;
            const d = Math.hypot(a[0]! - b[0]!, a[1]! - b[1]!, (a[2] ?? 0) - (b[2] ?? 0));
            if (d < best) [best, pair] = [d, [i, j]];
          }
        }
        if (best < MIN_ELEMENT_SPACING_WAVELENGTHS * lambda) {
          problems.push({
            path: `${path}.positions`,
            message: `elements ${pair[0]} and ${pair[1]} are ${fmt(best)} m apart, below 1/20 of a wavelength (${fmt(lambda / 20)} m at this carrier); positions are in metres`,
          });
        }
      }
    }
  }
  // Angles that look like radians: every explicit path angle within +-pi, some of them fractional.
  if (s.paths !== undefined) {
    const angles = s.paths.flatMap((p) => [...p.aodDeg, ...p.aoaDeg]);
    const nonZero = angles.filter((a) => a !== 0);
    const largest = Math.max(...angles.map(Math.abs));
    if (nonZero.length >= 2 && largest <= Math.PI + 1e-9 && nonZero.some((a) => !Number.isInteger(a))) {
      warnings.push(
        `paths[].aodDeg and paths[].aoaDeg: every angle is within +-pi (largest |value| ${fmt(largest)}); these keys are in degrees; if the values are radians, multiply them by 180/pi`,
      );
    }
  }
  // Orientations that look like radians: every angle given within +-2 pi, some fractional (1.5708).
  for (const { path, terminal } of terminalsOf(s)) {
    const orientations = [
      { at: `${path}.array.orientation`, o: terminal.array.orientation },
      ...(terminal.trajectory ?? []).map((w, i) => ({ at: `${path}.trajectory[${i}].orientation`, o: w.orientation })),
    ];
    for (const { at, o } of orientations) {
      if (o === undefined) continue;
      const given = (['yawDeg', 'pitchDeg', 'rollDeg'] as const).filter((k) => o[k] !== undefined && o[k] !== 0);
      const values = given.map((k) => o[k]!);
      if (values.length === 0 || values.some((v) => Math.abs(v) > 2 * Math.PI) || values.every(Number.isInteger)) continue;
      const asDegrees = given.map((k) => `${at}.${k} ${fmt(o[k]!)} would be ${fmt((o[k]! * 180) / Math.PI)} degrees`).join(', ');
      warnings.push(
        `${at}: every angle is within +-2 pi and not whole; these keys are in degrees; if the values are radians (${asDegrees}), multiply them by 180/pi`,
      );
    }
  }
  return { problems, warnings };
}

/** The terminals of a scenario with the dotted path of each. */
function terminalsOf(s: Scenario): { path: string; terminal: TerminalConfig }[] {
  const out = [{ path: 'transmitter', terminal: s.transmitter }];
  if (s.receiver !== undefined) out.push({ path: 'receiver', terminal: s.receiver });
  s.receivers?.forEach((r, i) => out.push({ path: `receivers[${i}]`, terminal: r }));
  return out;
}
