/**
 * The scenario file (docs/guide.md, "Scenario files"): one zod definition, from which the TypeScript
 * types, the validation and the JSON Schema in docs/ all come. SI units throughout, except
 * angles in degrees under keys ending in `Deg` and decibels under keys ending in `Db`.
 */
import { z } from 'zod';

/**
 * The scenario format this build writes and reads by default.
 * @example CURRENT_FORMAT_VERSION // 1
 */
export const CURRENT_FORMAT_VERSION = 1;

const finite = z.number();
const positive = z.number().positive();
const nonNegative = z.number().nonnegative();
const count = z.number().int().min(1);
// Coordinates within 10 000 km and speeds below the speed of light keep every distance, delay
// and Doppler finite (hostile input must be refused, not turned into NaN).
const coordinate = z.number().min(-1e7).max(1e7);
const point = z.union([z.tuple([coordinate, coordinate, coordinate]), z.tuple([coordinate, coordinate])]);
const speedComponent = z.number().min(-1e8).max(1e8);
const velocity = z.union([z.tuple([speedComponent, speedComponent, speedComponent]), z.tuple([speedComponent, speedComponent])]);
const vector3 = z.tuple([coordinate, coordinate, coordinate]);
const directionDeg = z.tuple([finite, finite]).describe('[azimuth, elevation] in degrees');

const orientationDefinition = z.strictObject({
  yawDeg: finite.optional(),
  pitchDeg: finite.optional(),
  rollDeg: finite.optional(),
});

/**
 * Array orientation in degrees: R = Rz(yaw) Ry(pitch) Rx(roll).
 * @example orientationSchema.safeParse({ yawDeg: 90, tiltDeg: 5 }).success // false: unknown key tiltDeg
 */
export const orientationSchema: z.ZodType<z.output<typeof orientationDefinition>, z.input<typeof orientationDefinition>> = orientationDefinition;

const elementTableSchema = z.strictObject({
  azimuthsDeg: z.array(finite).min(2),
  elevationsDeg: z.array(finite).min(2),
  gainsDbi: z.array(z.array(finite)).min(2),
});

const polarizationDefinition = z.union([z.enum(['vertical', 'horizontal']), z.strictObject({ slantDeg: finite })]);

/**
 * Polarisation of an array's elements: a name, or a slant angle in degrees from vertical.
 * @example [polarizationSchema.safeParse({ slantDeg: 45 }).success, polarizationSchema.safeParse('circular').success] // [true, false]
 */
export const polarizationSchema: z.ZodType<z.output<typeof polarizationDefinition>, z.input<typeof polarizationDefinition>> = polarizationDefinition;

const arrayDefinition = z.strictObject({
  kind: z.enum(['ula', 'upa', 'custom']),
  elements: count.max(65536).optional(),
  rows: count.max(4096).optional(),
  columns: count.max(4096).optional(),
  spacingWavelengths: positive.optional(),
  positions: z.array(vector3).min(1).max(65536).optional(),
  orientation: orientationSchema.optional(),
  element: z.union([z.enum(['isotropic', '3gpp-38.901']), z.strictObject({ table: elementTableSchema })]).optional(),
  polarization: polarizationSchema.optional(),
  /** Two ports per element (Nr, Nt count ports, port = 2 element + p): "slant45" (+45, -45) or "vh" (vertical, horizontal). */
  dualPolarized: z.enum(['slant45', 'vh']).optional(),
  wavefront: z.enum(['plane', 'spherical', 'auto']).optional(),
});

/**
 * An antenna array (ULA along local +y, UPA in the local y-z plane, or custom positions).
 * @example arraySchema.parse({ kind: 'upa', rows: 4, columns: 8, dualPolarized: 'slant45' }) // { kind: 'upa', rows: 4, columns: 8, dualPolarized: 'slant45' }
 */
export const arraySchema: z.ZodType<z.output<typeof arrayDefinition>, z.input<typeof arrayDefinition>> = arrayDefinition;

const waypointSchema = z.strictObject({ t: nonNegative, position: point, orientation: orientationSchema.optional() });

const terminalDefinition = z.strictObject({
  id: z.string().min(1).max(200).optional(),
  position: point,
  velocity: velocity.optional(),
  trajectory: z.array(waypointSchema).min(2).optional(),
  array: arraySchema,
});

/**
 * A transmitter or receiver.
 * @example terminalSchema.safeParse({ position: [0, 0, 10], array: { kind: 'ula', elements: 0 } }).error?.issues[0]?.path // ['array', 'elements']: must be >= 1
 */
export const terminalSchema: z.ZodType<z.output<typeof terminalDefinition>, z.input<typeof terminalDefinition>> = terminalDefinition;

const clusterDefinition = z.strictObject({
  preset: z.enum(['umi-los', 'umi-nlos', 'indoor-office-los', 'indoor-office-nlos', 'indoor-factory-los', 'indoor-factory-nlos']).optional(),
  method: z.enum(['gaussian', 'laplacian', 'offsets-38901']).optional(),
  subPaths: count.max(1000).optional(),
  azimuthSpreadDepartureDeg: nonNegative.optional(),
  elevationSpreadDepartureDeg: nonNegative.optional(),
  azimuthSpreadArrivalDeg: nonNegative.optional(),
  elevationSpreadArrivalDeg: nonNegative.optional(),
  delaySpreadS: nonNegative.optional(),
});

/**
 * A cluster of sub-paths around a path (docs/deployments.md): a 3GPP TR 38.901 preset by name,
 * or spreads of its own (degrees, seconds; missing spreads are 0, or the preset's).
 * @example clusterSchema.parse({ preset: 'umi-nlos', delaySpreadS: 5e-9 }) // { preset: 'umi-nlos', delaySpreadS: 5e-9 }
 */
export const clusterSchema: z.ZodType<z.output<typeof clusterDefinition>, z.input<typeof clusterDefinition>> = clusterDefinition;

const pathDefinition = z.strictObject({
  id: z.string().min(1).max(200).optional(),
  aodDeg: directionDeg,
  aoaDeg: directionDeg,
  delayS: nonNegative,
  // Path powers are absolute E|rho|^2 in dB; +-400 dB covers any physical link and keeps 10^(P/10) finite.
  powerDb: z.number().min(-400).max(400),
  phaseDeg: finite.optional(),
  dopplerHz: finite.optional(),
  maxDopplerHz: nonNegative.optional(),
  /** This path's own cluster (replaces the scenario's `clusters` for it). */
  cluster: clusterSchema.optional(),
  // Descriptive fields printed by `pathweave paths --json`, accepted (and ignored) when pasted back.
  kind: z.string().max(40).optional(),
  interactions: z.array(z.strictObject({ type: z.string(), object: z.string(), point: z.array(finite) })).optional(),
  lengthM: nonNegative.optional(),
  aodLocalDeg: directionDeg.optional(),
  aoaLocalDeg: directionDeg.optional(),
  blockageDb: nonNegative.optional(),
});

/**
 * An explicit path (directions in the global frame).
 * @example pathSchema.safeParse({ aodDeg: [0, 0], aoaDeg: [180, 0], delayS: 1e-7, powerDb: 500 }).success // false: powerDb is limited to [-400, 400] dB
 */
export const pathSchema: z.ZodType<z.output<typeof pathDefinition>, z.input<typeof pathDefinition>> = pathDefinition;

const materialSchema = z.union([
  z.string().min(1),
  z.strictObject({ relativePermittivity: positive, conductivitySpm: nonNegative }),
]);

const sceneDefinition = z.strictObject({
  lineOfSight: z.boolean().optional(),
  walls: z
    .array(
      z.strictObject({
        vertices: z.array(z.array(coordinate).min(2).max(3)).min(2),
        material: materialSchema.optional(),
        reflectionLossDb: nonNegative.optional(),
      }),
    )
    .optional(),
  scatterers: z.array(z.strictObject({ position: point, rcsM2: positive })).optional(),
  blockers: z
    .array(
      z.union([
        z.strictObject({ shape: z.literal('box'), min: point, max: point, lossDb: nonNegative.optional() }),
        z.strictObject({ shape: z.literal('cylinder'), base: point, radiusM: positive, heightM: positive, lossDb: nonNegative.optional() }),
      ]),
    )
    .optional(),
  maxReflectionOrder: z.number().int().min(0).max(3).optional(),
  maxPaths: count.optional(),
  dynamicRangeDb: positive.optional(),
  gasAttenuationDbPerKm: nonNegative.optional(),
  /** Gas absorption by ITU-R P.676-13 Annex 1 (line-by-line) at the carrier, instead of a fixed gasAttenuationDbPerKm. */
  atmosphere: z
    .strictObject({
      method: z.literal('p676-13-line-by-line'),
      dryPressureHpa: positive.optional(),
      temperatureK: positive.optional(),
      waterVapourDensityGm3: nonNegative.optional(),
    })
    .optional(),
});

/**
 * Scene objects traced into paths.
 * @example sceneSchema.parse({ walls: [{ vertices: [[0, 5], [20, 5]], material: 'glass' }], maxReflectionOrder: 1 }).walls!.length // 1
 */
export const sceneSchema: z.ZodType<z.output<typeof sceneDefinition>, z.input<typeof sceneDefinition>> = sceneDefinition;

const scenarioDefinition = z.strictObject({
  formatVersion: z.number().int().min(1).max(CURRENT_FORMAT_VERSION).optional(),
  name: z.string().max(200).optional(),
  description: z.string().max(2000).optional(),
  carrierHz: positive,
  timing: z.strictObject({
    subframeS: positive,
    subframes: count,
    symbolsPerSubframe: count.max(4096).optional(),
    numerology: z.number().int().optional(),
    cyclicPrefix: z.enum(['normal', 'extended']).optional(),
    geometryUpdateS: positive.optional(),
  }),
  band: z
    .strictObject({
      subcarriers: count,
      spacingHz: positive.optional(),
      beamSquint: z.boolean().optional(),
    })
    .optional(),
  taps: z
    .strictObject({
      sampleRateHz: positive,
      count,
      pulse: z.enum(['sinc', 'raised-cosine']).optional(),
      rollOff: z.number().min(0).max(1).optional(),
      alignFirstPath: z.boolean().optional(),
    })
    .optional(),
  transmitter: terminalSchema,
  receiver: terminalSchema.optional(),
  receivers: z.array(terminalSchema).min(1).optional(),
  scene: sceneSchema.optional(),
  paths: z.array(pathSchema).min(1).optional(),
  /** Widen every path (traced or explicit) into a cluster of sub-paths. */
  clusters: clusterSchema.optional(),
  fading: z.strictObject({
    model: z.enum(['static', 'gauss-markov', 'ar', 'sum-of-sinusoids', 'geometric']),
    // Below the speed of light, so Doppler spreads stay finite.
    speedMps: nonNegative.max(1e8).optional(),
    // Orders above a few dozen are ill-conditioned anyway (AR_MAX_CONDITION refuses them); the cap keeps the fit's cost bounded.
    order: count.max(256).optional(),
    sinusoids: count.max(4096).optional(),
    ricianKDb: finite.optional(),
    normalize: z.boolean().optional(),
    /** Cross-polar ratio (dB) of stochastic paths and cluster sub-paths, with random initial phases. */
    xprDb: finite.optional(),
  }),
  seed: z.number().int().min(0).max(2 ** 53 - 1),
  precision: z.enum(['complex64', 'complex128']).optional(),
});

/**
 * The whole scenario document.
 * @example
 * const result = scenarioSchema.safeParse({
 *   carrierHz: 28e9, timing: { subframeS: 1e-3, subframes: 10 }, band: { subcarriers: 64, spacingHz: 120e3 },
 *   transmitter: { position: [0, 0, 10], array: { kind: 'ula', elements: 4 } }, receiver: { position: [50, 0, 1.5], array: { kind: 'ula', elements: 2 } },
 *   paths: [{ aodDeg: [0, -10], aoaDeg: [180, 10], delayS: 1.7e-7, powerDb: -90 }], fading: { model: 'static' }, seed: 1,
 * });
 * result.success // true
 */
export const scenarioSchema: z.ZodType<z.output<typeof scenarioDefinition>, z.input<typeof scenarioDefinition>> = scenarioDefinition;

/**
 * A scenario as parsed (defaults not yet applied).
 * @example
 * const scenario: Scenario = {
 *   carrierHz: 60e9, timing: { subframeS: 1e-3, subframes: 100 }, taps: { sampleRateHz: 2e9, count: 64 },
 *   transmitter: { position: [0, 0, 3], array: { kind: 'upa', rows: 4, columns: 4 } }, receiver: { position: [8, 2, 1], array: { kind: 'ula', elements: 1 } },
 *   scene: { walls: [{ vertices: [[-5, 6, 0], [20, 6, 0], [20, 6, 4]] }] }, fading: { model: 'geometric' }, seed: 7,
 * };
 */
export type Scenario = z.infer<typeof scenarioSchema>;
/**
 * An array description of a scenario.
 * @example const array: ArrayConfig = { kind: 'ula', elements: 8, spacingWavelengths: 0.5, element: '3gpp-38.901', orientation: { yawDeg: 180 } };
 */
export type ArrayConfig = z.infer<typeof arraySchema>;
/**
 * A terminal description of a scenario.
 * @example const walker: TerminalConfig = { id: 'ue-1', position: [10, 0, 1.5], velocity: [0, 1.4, 0], array: { kind: 'ula', elements: 2 } };
 */
export type TerminalConfig = z.infer<typeof terminalSchema>;
/**
 * A cluster description of a scenario.
 * @example const cluster: ClusterConfig = { method: 'laplacian', subPaths: 10, azimuthSpreadArrivalDeg: 8 };
 */
export type ClusterConfig = z.infer<typeof clusterSchema>;
/**
 * An explicit path of a scenario.
 * @example const echo: PathConfig = { id: 'wall', aodDeg: [30, 0], aoaDeg: [150, 0], delayS: 2.1e-7, powerDb: -97, phaseDeg: 180 };
 */
export type PathConfig = z.infer<typeof pathSchema>;

/**
 * The JSON Schema (draft 2020-12) of scenario files, for editors.
 * @example scenarioJsonSchema().type // "object"
 */
export function scenarioJsonSchema(): Record<string, unknown> {
  const schema = z.toJSONSchema(scenarioSchema, { target: 'draft-2020-12' }) as Record<string, unknown>;
  return { $id: 'https://pathweave.invalid/scenario.schema.json', title: 'pathweave scenario', ...schema };
}
