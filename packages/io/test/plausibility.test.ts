/** Plausibility of values for their unit: the boundaries, in-process (the CLI texts are in test/cli-mistakes.test.ts). */
import { describe, expect, it } from 'vitest';
import { safeParseScenario, type Scenario } from '../src/index.js';
import { checkPlausibility, MIN_CARRIER_HZ } from '../src/scenario/plausibility.js';

const base: Scenario = {
  carrierHz: 28e9,
  timing: { subframeS: 1e-3, subframes: 2 },
  band: { subcarriers: 8, spacingHz: 120e3 },
  transmitter: { position: [0, 0, 10], array: { kind: 'ula', elements: 4 } },
  receiver: { position: [50, 0, 1.5], array: { kind: 'ula', elements: 2 } },
  paths: [{ aodDeg: [0, -10], aoaDeg: [180, 10], delayS: 1.7e-7, powerDb: -90 }],
  fading: { model: 'static' },
  seed: 1,
};

describe('checkPlausibility', () => {
  it('accepts the boundaries themselves: 1 MHz, 1 kS/s, 100 Hz, lambda/20', () => {
    expect(checkPlausibility({ ...base, carrierHz: MIN_CARRIER_HZ })).toEqual({ problems: [], warnings: [] });
    expect(checkPlausibility({ ...base, band: { subcarriers: 8, spacingHz: 100 } }).problems).toEqual([]);
    expect(checkPlausibility({ ...base, band: undefined, taps: { sampleRateHz: 1e3, count: 4 } }).problems).toEqual([]);
    expect(
      checkPlausibility({ ...base, receiver: { position: [50, 0, 1.5], array: { kind: 'ula', elements: 2, spacingWavelengths: 0.05 } } }).problems,
    ).toEqual([]);
  });

  it('refuses just below them, through safeParseScenario (the validation hook)', () => {
    const r = safeParseScenario({ ...base, carrierHz: 999_999 });
    expect(r.ok).toBe(false);
    if (!r.ok)
      expect(r.problems).toEqual([
        { path: 'carrierHz', message: 'must be in hertz (>= 1e6, 1 MHz), got 999999: it looks like kHz or MHz: write 999999e6 for 999999 MHz' },
      ]);
    const receivers = safeParseScenario({
      ...base,
      receiver: undefined,
      receivers: [
        { position: [1, 0, 0], array: { kind: 'ula', elements: 2 } },
        { position: [2, 0, 0], array: { kind: 'ula', elements: 2, spacingWavelengths: 0.0499 } },
      ],
    });
    expect(receivers.ok).toBe(false);
    if (!receivers.ok) expect(receivers.problems.map((p) => p.path)).toEqual(['receivers[1].array.spacingWavelengths']);
  });

  it('warns about radian-looking angles only when every angle is within +-pi and some are fractional', () => {
    const radians = { ...base, paths: [{ aodDeg: [0.5, -0.17] as [number, number], aoaDeg: [-2.6, 0.17] as [number, number], delayS: 1.7e-7, powerDb: -90 }] };
    expect(checkPlausibility(radians).warnings).toHaveLength(1);
    expect(checkPlausibility(base).warnings).toEqual([]); // 180 degrees: not radians
    const small = { ...base, paths: [{ aodDeg: [1, 0] as [number, number], aoaDeg: [-2, 0] as [number, number], delayS: 1.7e-7, powerDb: -90 }] };
    expect(checkPlausibility(small).warnings).toEqual([]); // whole degrees
  });

  it('warns about orientations that look like radians, naming each field and the degrees it would be', () => {
    // 1.5708 rad = 90.0002 degrees (pi/2 to 5 significant digits, 1.5708 x 180/pi); 0.7854 rad = 45.0001 degrees.
    const rx = (orientation: Record<string, number>): Scenario => ({
      ...base,
      receiver: { position: [50, 0, 1.5], array: { kind: 'ula', elements: 2, orientation } },
    });
    expect(checkPlausibility(rx({ yawDeg: 1.5708, pitchDeg: -0.7854 })).warnings).toEqual([
      'receiver.array.orientation: every angle is within +-2 pi and not whole; these keys are in degrees; if the values are radians ' +
        '(receiver.array.orientation.yawDeg 1.5708 would be 90.0002 degrees, receiver.array.orientation.pitchDeg -0.7854 would be -45.0001 degrees), multiply them by 180/pi',
    ]);
    expect(checkPlausibility(rx({ yawDeg: 90, pitchDeg: 0.5 })).warnings).toEqual([]); // 90 is past 2 pi: degrees
    expect(checkPlausibility(rx({ yawDeg: 3, pitchDeg: 5 })).warnings).toEqual([]); // whole degrees
    expect(checkPlausibility(rx({ yawDeg: 0 })).warnings).toEqual([]);
    const waypoint = {
      ...base,
      receiver: {
        position: [50, 0, 1.5] as [number, number, number],
        trajectory: [
          { t: 0, position: [50, 0, 1.5] as [number, number, number] },
          { t: 1, position: [51, 0, 1.5] as [number, number, number], orientation: { rollDeg: 3.1416 } },
        ],
        array: { kind: 'ula' as const, elements: 2 },
      },
    };
    expect(checkPlausibility(waypoint).warnings).toEqual([
      'receiver.trajectory[1].orientation: every angle is within +-2 pi and not whole; these keys are in degrees; if the values are radians (receiver.trajectory[1].orientation.rollDeg 3.1416 would be 180 degrees), multiply them by 180/pi',
    ]);
  });
});
