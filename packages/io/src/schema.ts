/**
 * The scenario file (design.md, "Scenario file"): one zod definition, from which the TypeScript
 * types, the validation and the JSON Schema in docs/ all come. SI units throughout, except
 * angles in degrees under keys ending in `Deg` and decibels under keys ending in `Db`.
 */
import { z } from 'zod';

/** The scenario format this build writes and reads by default. */
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

/** Array orientation in degrees: R = Rz(yaw) Ry(pitch) Rx(roll). */
export const orientationSchema = z.strictObject({
  yawDeg: finite.optional(),
  pitchDeg: finite.optional(),
  rollDeg: finite.optional(),
});

const elementTableSchema = z.strictObject({
  azimuthsDeg: z.array(finite).min(2),
  elevationsDeg: z.array(finite).min(2),
  gainsDbi: z.array(z.array(finite)).min(2),
});

/** Polarisation of an array's elements: a name, or a slant angle in degrees from vertical. */
export const polarizationSchema = z.union([z.enum(['vertical', 'horizontal']), z.strictObject({ slantDeg: finite })]);

/** An antenna array (ULA along local +y, UPA in the local y-z plane, or custom positions). */
export const arraySchema = z.strictObject({
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

const waypointSchema = z.strictObject({ t: nonNegative, position: point, orientation: orientationSchema.optional() });

/** A transmitter or receiver. */
export const terminalSchema = z.strictObject({
  id: z.string().min(1).max(200).optional(),
  position: point,
  velocity: velocity.optional(),
  trajectory: z.array(waypointSchema).min(2).optional(),
  array: arraySchema,
});

/**
 * A cluster of sub-paths around a path (docs/deployments.md): a 3GPP TR 38.901 preset by name,
 * or spreads of its own (degrees, seconds; missing spreads are 0, or the preset's).
 */
export const clusterSchema = z.strictObject({
  preset: z.enum(['umi-los', 'umi-nlos', 'indoor-office-los', 'indoor-office-nlos', 'indoor-factory-los', 'indoor-factory-nlos']).optional(),
  method: z.enum(['gaussian', 'laplacian', 'offsets-38901']).optional(),
  subPaths: count.max(1000).optional(),
  azimuthSpreadDepartureDeg: nonNegative.optional(),
  elevationSpreadDepartureDeg: nonNegative.optional(),
  azimuthSpreadArrivalDeg: nonNegative.optional(),
  elevationSpreadArrivalDeg: nonNegative.optional(),
  delaySpreadS: nonNegative.optional(),
});

/** An explicit path (directions in the global frame). */
export const pathSchema = z.strictObject({
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

const materialSchema = z.union([
  z.string().min(1),
  z.strictObject({ relativePermittivity: positive, conductivitySpm: nonNegative }),
]);

/** Scene objects traced into paths. */
export const sceneSchema = z.strictObject({
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

/** The whole scenario document. */
export const scenarioSchema = z.strictObject({
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

/** A scenario as parsed (defaults not yet applied). */
export type Scenario = z.infer<typeof scenarioSchema>;
/** An array description of a scenario. */
export type ArrayConfig = z.infer<typeof arraySchema>;
/** A terminal description of a scenario. */
export type TerminalConfig = z.infer<typeof terminalSchema>;
/** A cluster description of a scenario. */
export type ClusterConfig = z.infer<typeof clusterSchema>;
/** An explicit path of a scenario. */
export type PathConfig = z.infer<typeof pathSchema>;

/**
 * The JSON Schema (draft 2020-12) of scenario files, for editors.
 * @example scenarioJsonSchema().type // "object"
 */
export function scenarioJsonSchema(): Record<string, unknown> {
  const schema = z.toJSONSchema(scenarioSchema, { target: 'draft-2020-12' }) as Record<string, unknown>;
  return { $id: 'https://pathweave.invalid/scenario.schema.json', title: 'pathweave scenario', ...schema };
}
