/**
 * The scenario file (docs/guide.md, "Scenario files"): one zod definition, from which the TypeScript
 * types, the validation and the JSON Schema in docs/ all come. SI units throughout, except
 * angles in degrees under keys ending in `Deg` and decibels under keys ending in `Db`.
 */
import { z } from 'zod';
import { AR_DEFAULT_ORDER, SOS_DEFAULT_SINUSOIDS } from '@pathweave/core';
import {
  DEFAULT_ALPHA_R,
  DEFAULT_DIFFUSE_PATHS_PER_WALL,
  DEFAULT_LAUNCH_SPACING_DEG,
  DEFAULT_MATERIAL,
  DEFAULT_REFLECTION_ORDER,
  DEFAULT_SCATTERING_COEFFICIENT,
  LAUNCH_MAX_BOUNCES,
  LAUNCH_MAX_RAYS,
  MATERIAL_NAMES,
  MAX_ALPHA_R,
  MAX_REFLECTION_ORDER,
} from '@pathweave/geometry';
import { describeValue } from './problems.js';

/**
 * The scenario format this build writes and reads by default.
 * @example CURRENT_FORMAT_VERSION // 1
 */
export const CURRENT_FORMAT_VERSION = 1;

const finite = z.number();
const positive = z.number().positive();
const nonNegative = z.number().nonnegative();
const count = z.number().int().min(1);
const unitInterval = z.number().min(0).max(1);
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

// Each variant of a discriminated union lists every key of the others too: the keys another
// variant takes are refused here with a message that names the variant (rather than "unknown
// key"), and keys a variant requires say why when they are missing. These messages are the
// ones users see: validate.ts words only the issues the schema leaves unworded.
/** A key this variant does not take: refused, saying why and what was given. */
const refused = (why: string) => z.never({ error: (issue) => `${why}, got ${describeValue(issue.input)}` }).optional();
/** A number this variant requires: when missing, the message says what it is for. */
const requiredNumber = (why: string) => z.number({ error: (issue) => (issue.input === undefined ? why : undefined) });

const arrayCommon = {
  orientation: orientationSchema.optional(),
  element: z.union([z.enum(['isotropic', '3gpp-38.901']), z.strictObject({ table: elementTableSchema })]).optional(),
  polarization: polarizationSchema.optional(),
  /** Two ports per element (Nr, Nt count ports, port = 2 element + p): "slant45" (+45, -45) or "vh" (vertical, horizontal). */
  dualPolarized: z.enum(['slant45', 'vh']).optional(),
  wavefront: z.enum(['plane', 'spherical', 'auto']).optional(),
};
const notForKind = (kind: string) => refused(`does not apply to kind "${kind}"`);
const arrayDefinition = z.discriminatedUnion('kind', [
  z.strictObject({
    kind: z.literal('ula'),
    elements: requiredNumber('is required for kind "ula" (the number of elements)').int().min(1).max(65536),
    rows: notForKind('ula'),
    columns: notForKind('ula'),
    spacingWavelengths: positive.optional(),
    positions: notForKind('ula'),
    ...arrayCommon,
  }),
  z.strictObject({
    kind: z.literal('upa'),
    elements: notForKind('upa'),
    rows: requiredNumber('is required for kind "upa" (elements along local +z)').int().min(1).max(4096),
    columns: requiredNumber('is required for kind "upa" (elements along local +y)').int().min(1).max(4096),
    spacingWavelengths: positive.optional(),
    positions: notForKind('upa'),
    ...arrayCommon,
  }),
  z.strictObject({
    kind: z.literal('custom'),
    elements: notForKind('custom'),
    rows: notForKind('custom'),
    columns: notForKind('custom'),
    spacingWavelengths: notForKind('custom'),
    positions: z
      .array(vector3, {
        error: (issue) => (issue.input === undefined ? 'is required for kind "custom" (element positions in metres, local frame)' : undefined),
      })
      .min(1)
      .max(65536),
    ...arrayCommon,
  }),
]);

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

const OFFSETS_SUB_PATHS = 20;
const offsetsSubPathsMessage = (got: unknown): string =>
  `method "offsets-38901" has ${OFFSETS_SUB_PATHS} sub-paths (3GPP TR 38.901 Table 7.5-3), got ${describeValue(got)}`;
const subPaths = count.max(1000).optional();
const clusterPreset = z.enum(['umi-los', 'umi-nlos', 'indoor-office-los', 'indoor-office-nlos', 'indoor-factory-los', 'indoor-factory-nlos']).optional();
const clusterSpreads = {
  azimuthSpreadDepartureDeg: nonNegative.optional(),
  elevationSpreadDepartureDeg: nonNegative.optional(),
  azimuthSpreadArrivalDeg: nonNegative.optional(),
  elevationSpreadArrivalDeg: nonNegative.optional(),
  delaySpreadS: nonNegative.optional(),
};
// Variants by method. The method may be left out: it is then "offsets-38901" with a preset and
// "gaussian" without (docs/deployments.md); that one rule across two keys is the refinement below.
const clusterDefinition = z.discriminatedUnion('method', [
  z.strictObject({ preset: clusterPreset, method: z.literal('gaussian').optional(), subPaths, ...clusterSpreads }).superRefine((c, ctx) => {
    if (c.method === undefined && c.preset !== undefined && c.subPaths !== undefined && c.subPaths !== OFFSETS_SUB_PATHS) {
      ctx.addIssue({ code: 'custom', path: ['subPaths'], message: offsetsSubPathsMessage(c.subPaths), input: c.subPaths });
    }
  }),
  z.strictObject({ preset: clusterPreset, method: z.literal('laplacian'), subPaths, ...clusterSpreads }),
  z.strictObject({
    preset: clusterPreset,
    method: z.literal('offsets-38901'),
    subPaths: count
      .max(1000)
      .refine((n) => n === OFFSETS_SUB_PATHS, { error: (issue) => offsetsSubPathsMessage(issue.input), when: (payload) => payload.issues.length === 0 })
      .optional(),
    ...clusterSpreads,
  }),
]);

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

const materialSchema = z.union([z.string().min(1), z.strictObject({ relativePermittivity: positive, conductivitySpm: nonNegative })]);

// Imported surfaces (docs/conventions.md, "Imported surfaces"): a file path relative to the scenario file.
const sceneImportSchema = z.union([
  z.strictObject({
    footprints: z.string().min(1),
    origin: z.strictObject({ latitudeDeg: z.number().min(-90).max(90), longitudeDeg: z.number().min(-180).max(180), heightM: finite.optional() }),
    heightProperty: z.string().min(1).optional(),
    defaultHeightM: positive.optional(),
    materialProperty: z.string().min(1).optional(),
    materials: z.record(z.string(), materialSchema).optional(),
    material: materialSchema.optional(),
    roofs: z.boolean().optional(),
  }),
  z.strictObject({
    mesh: z.string().min(1),
    unit: z.enum(['m', 'cm', 'mm', 'km', 'in', 'ft']).optional(),
    upAxis: z.enum(['y', 'z']).optional(),
    offsetM: vector3.optional(),
    materialProperty: z.string().min(1).optional(),
    materials: z.record(z.string(), materialSchema).optional(),
    material: materialSchema.optional(),
  }),
]);

const sceneDefinition = z.strictObject({
  lineOfSight: z.boolean().optional(),
  /** Surfaces read from files, added after `walls` (expanded by loadScenario / expandSceneImports). */
  imports: z.array(sceneImportSchema).optional(),
  walls: z
    .array(
      z.strictObject({
        vertices: z.array(z.array(coordinate).min(2).max(3)).min(2),
        material: materialSchema.optional(),
        reflectionLossDb: nonNegative.optional(),
        /** Thickness in metres: the wall transmits as an ITU-R P.2040 slab of its material (off: opaque). */
        thicknessM: positive.optional(),
        /** Scattering coefficient S of this wall under scene.diffuse. */
        scatteringCoefficient: unitInterval.optional(),
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
  maxReflectionOrder: z.number().int().min(0).max(MAX_REFLECTION_ORDER).optional(),
  maxPaths: count.optional(),
  dynamicRangeDb: positive.optional(),
  gasAttenuationDbPerKm: nonNegative.optional(),
  /** Edge diffraction (UTD) at the walls' wedges, single and with one reflection; off by default. */
  diffraction: z.boolean().optional(),
  /** Diffuse scattering from the walls' tiles (directive model of Degli-Esposti et al. 2007); off by default. */
  diffuse: z
    .strictObject({
      tileM: positive,
      maxPathsPerWall: count.optional(),
      scatteringCoefficient: unitInterval.optional(),
      alphaR: z.number().int().min(1).max(MAX_ALPHA_R).optional(),
      pattern: z.enum(['directive', 'lambertian']).optional(),
      materials: z.partialRecord(z.enum(MATERIAL_NAMES as unknown as [string, ...string[]]), unitInterval).optional(),
    })
    .optional(),
  /** How reflections are found: the image method (every path) or ray launching refined by it (launch.ts). */
  method: z.enum(['image', 'launch']).optional(),
  /** Ray launching: rays or angularSpacingDeg (not both, checked by validateScenario), maxBounces. */
  launch: z
    .strictObject({
      rays: z.number().int().min(12).max(LAUNCH_MAX_RAYS).optional(),
      angularSpacingDeg: z.number().min(0.0637).max(30).optional(),
      maxBounces: z.number().int().min(1).max(LAUNCH_MAX_BOUNCES).optional(),
    })
    .optional(),
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

// Orders above a few dozen are ill-conditioned anyway (AR_MAX_CONDITION refuses them); the cap keeps the fit's cost bounded.
const arOrder = count.max(256).optional();
// Zheng & Xiao (2003) need at least 8 sinusoids for their statistics (checked once the count itself is valid).
const sinusoidCount = count
  .max(4096)
  .refine((n) => n >= 8, {
    error: (issue) => `must be >= 8 (Zheng & Xiao need that many for their statistics), got ${describeValue(issue.input)}`,
    when: (payload) => payload.issues.length === 0,
  })
  .optional();
/** A key of other models, refused with `model` (the message names the model given). */
const onlyFor = (models: string, model: string) => z.never({ error: () => `applies only to ${models}, got model "${model}"` }).optional();
// Every variant lists the keys in one order (the parsed scenario keeps it): model, speedMps, order, sinusoids, ricianKDb, normalize, xprDb.
const fadingVariant = <M extends string, O extends z.ZodType, S extends z.ZodType, K extends z.ZodType, V extends z.ZodType>(
  model: M,
  speedMps: V,
  order: O,
  sinusoids: S,
  ricianKDb: K,
) =>
  z.strictObject({
    model: z.literal(model),
    speedMps,
    order,
    sinusoids,
    ricianKDb,
    normalize: z.boolean().optional(),
    /** Cross-polar ratio (dB) of stochastic paths and cluster sub-paths, with random initial phases. */
    xprDb: finite.optional(),
  });
// Below the speed of light, so Doppler spreads stay finite.
const speed = nonNegative.max(1e8).optional();
const notAr = (model: string) => onlyFor('model "ar"', model);
const notSinusoids = (model: string) => onlyFor('models "sum-of-sinusoids" and "geometric"', model);
const notGeometric = (model: string) => onlyFor('model "geometric"', model);
const fadingDefinition = z.discriminatedUnion('model', [
  fadingVariant(
    'static',
    z.never({ error: () => 'has no effect with model "static"' }).optional(),
    notAr('static'),
    notSinusoids('static'),
    notGeometric('static'),
  ),
  fadingVariant('gauss-markov', speed, notAr('gauss-markov'), notSinusoids('gauss-markov'), notGeometric('gauss-markov')),
  fadingVariant('ar', speed, arOrder, notSinusoids('ar'), notGeometric('ar')),
  fadingVariant('sum-of-sinusoids', speed, notAr('sum-of-sinusoids'), sinusoidCount, notGeometric('sum-of-sinusoids')),
  fadingVariant('geometric', speed, notAr('geometric'), sinusoidCount, finite.optional()),
]);

// Taps by pulse: the roll-off belongs to the raised cosine (sinc, the default, has none).
const tapsVariant = <P extends z.ZodType, R extends z.ZodType>(pulse: P, rollOff: R) =>
  z.strictObject({ sampleRateHz: positive, count, pulse, rollOff, alignFirstPath: z.boolean().optional() });
const tapsDefinition = z.discriminatedUnion('pulse', [
  tapsVariant(z.literal('sinc').optional(), z.never({ error: () => 'applies only with pulse "raised-cosine"' }).optional()),
  tapsVariant(z.literal('raised-cosine'), z.number().min(0).max(1).optional()),
]);

// The coverage grid (dataset/coverage.ts): point (row, column) = origin + column uStepM u + row vStepM v,
// u and v the unit vectors of uAxis and vAxis. The rules across keys are the refinement below.
const coverageDefinition = z
  .strictObject({
    origin: point,
    columns: count.max(100_000),
    rows: count.max(100_000),
    stepM: positive.max(1e6).optional(),
    uStepM: positive.max(1e6).optional(),
    vStepM: positive.max(1e6).optional(),
    uAxis: vector3.optional(),
    vAxis: vector3.optional(),
  })
  .superRefine((c, ctx) => {
    const issue = (path: string, message: string, input: unknown): void => ctx.addIssue({ code: 'custom', path: [path], message, input });
    if (c.stepM === undefined && (c.uStepM === undefined || c.vStepM === undefined))
      issue(c.uStepM === undefined ? 'uStepM' : 'vStepM', 'give stepM (both directions), or uStepM and vStepM', c.uStepM === undefined ? c.uStepM : c.vStepM);
    if (c.stepM !== undefined && (c.uStepM !== undefined || c.vStepM !== undefined))
      issue(c.uStepM !== undefined ? 'uStepM' : 'vStepM', `give stepM or uStepM and vStepM, not both (stepM is ${c.stepM})`, c.uStepM ?? c.vStepM);
    if (c.columns * c.rows > MAX_COVERAGE_POINTS)
      issue('rows', `columns x rows must be at most ${MAX_COVERAGE_POINTS} points, got ${c.columns} x ${c.rows} = ${c.columns * c.rows}`, c.rows);
    const u = c.uAxis ?? [1, 0, 0],
      v = c.vAxis ?? [0, 1, 0];
    const nu = Math.hypot(...u),
      nv = Math.hypot(...v);
    if (!(nu > 0)) issue('uAxis', `must be a non-zero direction, got ${describeValue(c.uAxis)}`, c.uAxis);
    if (!(nv > 0)) issue('vAxis', `must be a non-zero direction, got ${describeValue(c.vAxis)}`, c.vAxis);
    if (nu > 0 && nv > 0) {
      const cross = Math.hypot(u[1] * v[2] - u[2] * v[1], u[2] * v[0] - u[0] * v[2], u[0] * v[1] - u[1] * v[0]) / (nu * nv);
      // sin of the angle between the axes: below 1e-6 the grid collapses onto a line.
      if (cross < 1e-6) issue('vAxis', `must not be parallel to uAxis ${describeValue(u)}, got ${describeValue(v)}`, c.vAxis);
    }
  });

/**
 * The largest coverage grid, columns x rows (every map of it is held in memory: about 100 bytes a point).
 * @example MAX_COVERAGE_POINTS // 4000000
 */
export const MAX_COVERAGE_POINTS = 4_000_000;

/**
 * The `coverage` section of a scenario: a grid of receiver points for `pathweave coverage`.
 * @example coverageSchema.safeParse({ origin: [0, 0, 1.5], columns: 10, rows: 5, stepM: 1 }).success // true
 */
export const coverageSchema: z.ZodType<z.output<typeof coverageDefinition>, z.input<typeof coverageDefinition>> = coverageDefinition;

/**
 * A coverage grid as a scenario gives it.
 * @example const grid: CoverageConfig = { origin: [-20, -20, 1.5], columns: 41, rows: 41, stepM: 1 }; // a horizontal 40 m x 40 m grid at 1.5 m
 */
export type CoverageConfig = z.infer<typeof coverageSchema>;

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
  taps: tapsDefinition.optional(),
  transmitter: terminalSchema,
  receiver: terminalSchema.optional(),
  receivers: z.array(terminalSchema).min(1).optional(),
  scene: sceneSchema.optional(),
  paths: z.array(pathSchema).min(1).optional(),
  /** Widen every path (traced or explicit) into a cluster of sub-paths. */
  clusters: clusterSchema.optional(),
  /** A grid of receiver points for `pathweave coverage` (ignored by generate). */
  coverage: coverageSchema.optional(),
  fading: fadingDefinition,
  seed: z
    .number()
    .int()
    .min(0)
    .max(2 ** 53 - 1),
  precision: z.enum(['complex64', 'complex128']).optional(),
});

/**
 * The whole scenario document.
 * @example
 * const result = scenarioSchema.safeParse(scenario);
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
 * @example const echo: ExplicitPathConfig = { id: 'wall', aodDeg: [30, 0], aoaDeg: [150, 0], delayS: 2.1e-7, powerDb: -97, phaseDeg: 180 };
 */
export type ExplicitPathConfig = z.infer<typeof pathSchema>;

/**
 * The defaults of optional scenario keys: the plan (plan.ts) applies them, once, and the JSON
 * Schema in docs/ shows them.
 * @example [SCENARIO_DEFAULTS.precision, SCENARIO_DEFAULTS.spacingWavelengths] // ['complex64', 0.5]
 */
export const SCENARIO_DEFAULTS = Object.freeze({
  precision: 'complex64' as 'complex64' | 'complex128',
  spacingWavelengths: 0.5,
  pulse: 'sinc' as 'sinc' | 'raised-cosine',
  rollOff: 0,
  beamSquint: false,
  alignFirstPath: false,
  cyclicPrefix: 'normal' as 'normal' | 'extended',
  wavefront: 'plane' as 'plane' | 'spherical' | 'auto',
  normalize: false,
  /** Subcarrier spacing with a numerology: 15 kHz 2^mu (3GPP TS 38.211 Table 4.2-1). */
  numerologyBaseSpacingHz: 15e3,
});

/** What the JSON Schema says of one key: a description, the unit of a number, the default of an optional key. */
interface KeyDoc {
  description: string;
  unit?: string;
  default?: unknown;
}

// Keys of the shared parts are documented once: a terminal's keys under "terminal.", a
// cluster's under "cluster." (transmitter, receiver and receivers[]; clusters and paths[].cluster).
const TERMINAL = ['transmitter', 'receiver', 'receivers'];
const CLUSTER = ['clusters', 'paths.cluster'];
const d = (description: string, unit?: string, def?: unknown): KeyDoc => ({
  description,
  ...(unit !== undefined ? { unit } : {}),
  ...(def !== undefined ? { default: def } : {}),
});
const orientationDocs = (at: string): Record<string, KeyDoc> => ({
  [`${at}`]: d('Orientation R = Rz(yaw) Ry(pitch) Rx(roll), local to global (docs/conventions.md, "Array frame").'),
  [`${at}.yawDeg`]: d('Rotation about z, degrees.', 'deg', 0),
  [`${at}.pitchDeg`]: d('Rotation about the new y, degrees; positive tilts the boresight down.', 'deg', 0),
  [`${at}.rollDeg`]: d('Rotation about the new x, degrees.', 'deg', 0),
});
const KEY_DOCS: Record<string, KeyDoc> = {
  formatVersion: d('Scenario format version; absent means the current one.', '1', CURRENT_FORMAT_VERSION),
  name: d('A short name of the scenario (shown by inspect and in figure titles).'),
  description: d('Free text describing the scenario.'),
  carrierHz: d('Carrier frequency f_c.', 'Hz'),
  timing: d('Time axis: subframes and, optionally, OFDM symbols within them.'),
  'timing.subframeS': d('Duration T_s of one subframe (the step of the gain processes).', 's'),
  'timing.subframes': d('Number of subframes S (axis 0 of every per-subframe array).', '1'),
  'timing.symbolsPerSubframe': d(
    'Uniform OFDM symbols per subframe (adds a symbol axis after S); with a numerology it must equal 14 2^mu (12 2^mu with the extended prefix).',
    '1',
  ),
  'timing.numerology': d(
    'NR numerology mu, 0 to 4 (3GPP TS 38.211): sets the symbols per subframe, their true start times and the default subcarrier spacing 15 kHz 2^mu.',
    '1',
  ),
  'timing.cyclicPrefix': d('NR cyclic prefix with a numerology ("extended" only with numerology 2).', undefined, SCENARIO_DEFAULTS.cyclicPrefix),
  'timing.geometryUpdateS': d('Time between two traces of the scene while terminals move; default one subframe.', 's'),
  band: d('Frequency-domain output H[k]: the subcarrier grid f_k = (k - floor(K / 2)) df.'),
  'band.subcarriers': d('Number of subcarriers K.', '1'),
  'band.spacingHz': d('Subcarrier spacing df; required unless timing.numerology gives it (15 kHz 2^mu).', 'Hz'),
  'band.beamSquint': d('Array responses at f_c + f_k per subcarrier instead of at the carrier.', undefined, SCENARIO_DEFAULTS.beamSquint),
  taps: d('Tap-delay output h[n] at n / sampleRateHz.'),
  'taps.sampleRateHz': d('Sample rate 1 / T of the taps.', 'Hz'),
  'taps.count': d('Number of taps.', '1'),
  'taps.pulse': d('Band-limiting pulse p of the taps.', undefined, SCENARIO_DEFAULTS.pulse),
  'taps.rollOff': d('Roll-off of the raised-cosine pulse, 0 to 1.', '1', SCENARIO_DEFAULTS.rollOff),
  'taps.alignFirstPath': d('Shift every delay so that the first arrival sits 4 samples after zero.', undefined, SCENARIO_DEFAULTS.alignFirstPath),
  transmitter: d('The transmitter: position, motion and antenna array.'),
  receiver: d('The receiver (or give receivers).'),
  receivers: d('Several receivers (users): the tensors gain a user axis after S.'),
  'terminal.id': d('Identity of a user: keys its random streams, so it has the same channel alone or among others; default its index.'),
  'terminal.position': d('Position of the array reference point [x, y, z] (or [x, y] in a 2-D scene), global frame.', 'm'),
  'terminal.velocity': d('Constant velocity [vx, vy, vz]; absent: the terminal stands still.', 'm/s'),
  'terminal.trajectory': d('Waypoints { t, position, orientation? } followed piecewise linearly instead of a velocity.'),
  'terminal.trajectory.t': d('Time of the waypoint.', 's'),
  'terminal.trajectory.position': d('Position at time t.', 'm'),
  ...orientationDocs('terminal.trajectory.orientation'),
  'terminal.array': d('The antenna array.'),
  'terminal.array.kind': d('"ula" (along local +y), "upa" (local y-z plane) or "custom" positions.'),
  'terminal.array.elements': d('Elements of a ULA.', '1'),
  'terminal.array.rows': d('Rows of a UPA (along local +z).', '1'),
  'terminal.array.columns': d('Columns of a UPA (along local +y).', '1'),
  'terminal.array.spacingWavelengths': d('Element spacing of a ULA or UPA, in carrier wavelengths.', 'wavelength', SCENARIO_DEFAULTS.spacingWavelengths),
  'terminal.array.positions': d('Element positions of a custom array, local frame.', 'm'),
  ...orientationDocs('terminal.array.orientation'),
  'terminal.array.element': d('Element pattern: "isotropic", "3gpp-38.901" (TR 38.901 Table 7.3-1) or a table.', undefined, 'isotropic'),
  'terminal.array.element.table': d('A tabulated element gain over azimuth and elevation (bilinear).'),
  'terminal.array.element.table.azimuthsDeg': d('Azimuths of the table columns, increasing.', 'deg'),
  'terminal.array.element.table.elevationsDeg': d('Elevations of the table rows, increasing.', 'deg'),
  'terminal.array.element.table.gainsDbi': d('Gains, one row per elevation, one value per azimuth.', 'dBi'),
  'terminal.array.polarization': d('Polarisation of the elements: "vertical", "horizontal" or a slant.', undefined, 'vertical'),
  'terminal.array.polarization.slantDeg': d('Slant angle from vertical.', 'deg'),
  'terminal.array.dualPolarized': d('Two ports per element: "slant45" (+45, -45) or "vh"; Nr or Nt then counts ports.'),
  'terminal.array.wavefront': d(
    'Plane or spherical wavefront (both ends spherical: every element pair\'s own distance); "auto": spherical inside the link distance 2 (D_rx + D_tx)^2 / lambda.',
    undefined,
    SCENARIO_DEFAULTS.wavefront,
  ),
  scene: d('Scene objects traced into paths (or give explicit paths).'),
  'scene.lineOfSight': d('Include the direct path when nothing blocks it.', undefined, true),
  'scene.imports': d(
    'Surfaces read from files beside the scenario (GeoJSON footprints; OBJ, PLY and binary glTF meshes), appended to walls (docs/conventions.md, "Imported surfaces").',
  ),
  'scene.imports.footprints': d('A GeoJSON file (RFC 7946) of Polygon or MultiPolygon building footprints, relative to the scenario file.'),
  'scene.imports.origin': d('The geodetic point (WGS-84) where east = north = 0.'),
  'scene.imports.origin.latitudeDeg': d('Latitude of the origin.', 'deg'),
  'scene.imports.origin.longitudeDeg': d('Longitude of the origin.', 'deg'),
  'scene.imports.origin.heightM': d('Height of the origin above the ellipsoid.', 'm', 0),
  'scene.imports.heightProperty': d('Feature property holding the building height.', undefined, 'height'),
  'scene.imports.defaultHeightM': d('Height of features without the height property (else they are refused).', 'm'),
  'scene.imports.materialProperty': d(
    'Footprints: the feature property naming the material (looked up in materials, else a material name). PLY meshes: the face property whose value (as a decimal string) is looked up in materials.',
  ),
  'scene.imports.materials': d('Property values (footprints) or group names (meshes) to materials.'),
  'scene.imports.material': d('Material of surfaces not mapped by materials.', undefined, DEFAULT_MATERIAL),
  'scene.imports.material.relativePermittivity': d('Relative permittivity of a custom material.', '1'),
  'scene.imports.material.conductivitySpm': d('Conductivity of a custom material.', 'S/m'),
  'scene.imports.roofs': d('Add a flat roof on every footprint.', undefined, true),
  'scene.imports.mesh': d(
    'A mesh file, relative to the scenario file, by its extension: Wavefront OBJ (.obj), PLY (.ply, ASCII or binary) or binary glTF 2.0 (.glb); one wall per triangle.',
  ),
  'scene.imports.unit': d('Length unit of the mesh file (glTF 2.0 is metres by its specification).', undefined, 'm'),
  'scene.imports.upAxis': d(
    'Up axis of the mesh file ("y" maps (x, y, z) to (x, -z, y)); a .glb defaults to "y", as the glTF 2.0 specification fixes.',
    undefined,
    'z',
  ),
  'scene.imports.offsetM': d('Shift added after scaling and turning.', 'm', [0, 0, 0]),
  'scene.walls': d('Planar walls (3-D polygons) or vertical wall segments (2-D).'),
  'scene.walls.vertices': d('Corners [[x, y, z], ...] (at least 3, coplanar) or the two ends [[x, y], [x, y]].', 'm'),
  'scene.walls.material': d('A named material (ITU-R P.2040-3 Table 3, or metal) or { relativePermittivity, conductivitySpm }.', undefined, DEFAULT_MATERIAL),
  'scene.walls.material.relativePermittivity': d('Relative permittivity of a custom material.', '1'),
  'scene.walls.material.conductivitySpm': d('Conductivity of a custom material.', 'S/m'),
  'scene.walls.reflectionLossDb': d('A fixed reflection loss replacing the Fresnel coefficient.', 'dB'),
  'scene.walls.thicknessM': d('Thickness of the wall as a slab (ITU-R P.2040): given, waves pass through it; absent, the wall is opaque.', 'm'),
  'scene.walls.scatteringCoefficient': d(
    'Scattering coefficient S of this wall under scene.diffuse (diffuse power S^2 of the reflected power, specular reduced by 1 - S^2).',
    '1',
    'diffuse.materials, else diffuse.scatteringCoefficient',
  ),
  'scene.scatterers': d('Point scatterers (single bounce, bistatic radar equation).'),
  'scene.scatterers.position': d('Position of the scatterer.', 'm'),
  'scene.scatterers.rcsM2': d('Radar cross-section sigma.', 'm^2'),
  'scene.blockers': d('Boxes and cylinders that attenuate the paths crossing them.'),
  'scene.blockers.shape': d('"box" or "cylinder".'),
  'scene.blockers.min': d('Lowest corner of a box.', 'm'),
  'scene.blockers.max': d('Highest corner of a box.', 'm'),
  'scene.blockers.lossDb': d('A fixed loss while a path crosses the blocker; absent: knife-edge diffraction (ITU-R P.526).', 'dB'),
  'scene.blockers.base': d("Centre of a cylinder's base.", 'm'),
  'scene.blockers.radiusM': d('Radius of a cylinder.', 'm'),
  'scene.blockers.heightM': d('Height of a cylinder.', 'm'),
  'scene.diffraction': d('Trace edge-diffracted paths (uniform theory of diffraction) around the wedges of the walls.', undefined, false),
  'scene.diffuse': d(
    'Diffuse scattering from rough walls, first order, one weak path per wall tile (docs/conventions.md, "Diffuse scattering"); absent: none.',
  ),
  'scene.diffuse.tileM': d('Largest side of a tile: each 3-D wall is cut into a grid of cells at most this size, clipped to the wall.', 'm'),
  'scene.diffuse.maxPathsPerWall': d('Keep at most this many tiles per wall, the strongest first.', '1', DEFAULT_DIFFUSE_PATHS_PER_WALL),
  'scene.diffuse.scatteringCoefficient': d("Scattering coefficient S of walls without their own or their material's.", '1', DEFAULT_SCATTERING_COEFFICIENT),
  'scene.diffuse.alphaR': d(`Directivity exponent of the directive lobe about the specular direction, integer 1 to ${MAX_ALPHA_R}.`, '1', DEFAULT_ALPHA_R),
  'scene.diffuse.pattern': d(
    '"directive" (lobe ((1 + cos psi_R) / 2)^alphaR about the specular direction) or "lambertian" (cos theta_s).',
    undefined,
    'directive',
  ),
  'scene.diffuse.materials': d('Scattering coefficient S per named material (walls of that material without their own).', '1'),
  'scene.method': d(
    '"image": every reflection path by the image method; "launch": ray launching with reception spheres, each path refined by the image method (may miss a few; docs/conventions.md, "Ray launching").',
    undefined,
    'image',
  ),
  'scene.launch': d('Settings of ray launching (used with method "launch").'),
  'scene.launch.rays': d(
    'Least number of rays: the geodesic sphere with at least this many (10 N^2 + 2); 2-D scenes: exactly this many. Not with angularSpacingDeg.',
    '1',
  ),
  'scene.launch.angularSpacingDeg': d('Largest angle between neighbouring rays. Not with rays.', 'deg', DEFAULT_LAUNCH_SPACING_DEG),
  'scene.launch.maxBounces': d(`Highest number of wall reflections per launched path, 1 to ${LAUNCH_MAX_BOUNCES}; absent: maxReflectionOrder.`, '1'),
  'scene.maxReflectionOrder': d(`Highest number of wall reflections per path, 0 to ${MAX_REFLECTION_ORDER}.`, '1', DEFAULT_REFLECTION_ORDER),
  'scene.maxPaths': d('Keep at most this many paths (strongest first); absent: no limit.', '1'),
  'scene.dynamicRangeDb': d('Drop paths more than this far below the strongest; absent: no limit.', 'dB'),
  'scene.gasAttenuationDbPerKm': d('Gas absorption over the unfolded path length.', 'dB/km', 0),
  'scene.atmosphere': d('Gas absorption by ITU-R P.676-13 Annex 1 (line by line) at the carrier, instead of gasAttenuationDbPerKm.'),
  'scene.atmosphere.method': d('"p676-13-line-by-line".'),
  'scene.atmosphere.dryPressureHpa': d('Dry-air pressure p (ITU-R P.676 reference atmosphere at sea level).', 'hPa', 1013.25),
  'scene.atmosphere.temperatureK': d('Temperature T (ITU-R P.676 reference atmosphere at sea level).', 'K', 288.15),
  'scene.atmosphere.waterVapourDensityGm3': d('Water-vapour density rho (ITU-R P.676 reference atmosphere at sea level).', 'g/m^3', 7.5),
  paths: d('Explicit paths (or give a scene).'),
  'paths.id': d('Stable id of the path (keys its random streams); default "paths[i]".'),
  'paths.aodDeg': d('Direction of departure [azimuth, elevation], global frame.', 'deg'),
  'paths.aoaDeg': d('Direction of arrival [azimuth, elevation], global frame.', 'deg'),
  'paths.delayS': d('Propagation delay tau.', 's'),
  'paths.powerDb': d('Mean power E|rho|^2, absolute.', 'dB'),
  'paths.phaseDeg': d('arg(rho) at t = 0 (static and geometric fading).', 'deg', 0),
  'paths.dopplerHz': d('Signed Doppler shift of the path.', 'Hz', 0),
  'paths.maxDopplerHz': d("Maximum Doppler of the path's spread (replaces the speeds for its correlation).", 'Hz'),
  'paths.cluster': d("This path's own cluster (replaces clusters for it)."),
  'paths.kind': d('Descriptive (printed by pathweave paths --json); ignored.'),
  'paths.interactions': d('Descriptive (printed by pathweave paths --json); ignored.'),
  'paths.interactions.type': d('Descriptive; ignored.'),
  'paths.interactions.object': d('Descriptive; ignored.'),
  'paths.interactions.point': d('Descriptive; ignored.', 'm'),
  'paths.lengthM': d('Descriptive (unfolded length); ignored.', 'm'),
  'paths.aodLocalDeg': d('Descriptive (departure in the array frame); ignored.', 'deg'),
  'paths.aoaLocalDeg': d('Descriptive (arrival in the array frame); ignored.', 'deg'),
  'paths.blockageDb': d('Descriptive (blocker loss); ignored.', 'dB'),
  clusters: d('Widen every path into a cluster of sub-paths (3GPP TR 38.901 cluster spreads).'),
  'cluster.preset': d('A TR 38.901 Table 7.5-6 preset whose spreads apply where no key is given.'),
  'cluster.method': d('How sub-path offsets are drawn; default "offsets-38901" with a preset, else "gaussian".'),
  'cluster.subPaths': d('Sub-paths per cluster (20 for "offsets-38901").', '1', 20),
  'cluster.azimuthSpreadDepartureDeg': d('Azimuth spread at departure.', 'deg', 0),
  'cluster.elevationSpreadDepartureDeg': d('Elevation spread at departure.', 'deg', 0),
  'cluster.azimuthSpreadArrivalDeg': d('Azimuth spread at arrival.', 'deg', 0),
  'cluster.elevationSpreadArrivalDeg': d('Elevation spread at arrival.', 'deg', 0),
  'cluster.delaySpreadS': d('Delay spread of the sub-paths.', 's', 0),
  coverage: d(
    'A grid of receiver points evaluated by pathweave coverage (ignored by generate): point (row, column) = origin + column uStepM u + row vStepM v.',
  ),
  'coverage.origin': d('Grid point (row 0, column 0), [x, y, z] (z = 0 when given as [x, y]).', 'm'),
  'coverage.columns': d('Points along uAxis.', '1'),
  'coverage.rows': d('Points along vAxis (rows are what --shard splits).', '1'),
  'coverage.stepM': d('Spacing of the points along both axes (or give uStepM and vStepM).', 'm'),
  'coverage.uStepM': d('Spacing of the points along uAxis.', 'm'),
  'coverage.vStepM': d('Spacing of the points along vAxis.', 'm'),
  'coverage.uAxis': d('Direction of the columns, made a unit vector; default east.', '1', [1, 0, 0]),
  'coverage.vAxis': d('Direction of the rows, made a unit vector; default north (with east: a horizontal plane at the height of origin).', '1', [0, 1, 0]),
  fading: d('How the path gains evolve over the subframes.'),
  'fading.model': d('"static", "gauss-markov" (AR(1), Clarke/Jakes alpha), "ar" (AR(p)), "sum-of-sinusoids" or "geometric".'),
  'fading.speedMps': d("Speed of the one moving end for the Doppler spread; default the terminals' speeds.", 'm/s'),
  'fading.order': d('Order p of the AR model.', '1', AR_DEFAULT_ORDER),
  'fading.sinusoids': d('Sinusoids of sum-of-sinusoids (and of the diffuse part of geometric), at least 8.', '1', SOS_DEFAULT_SINUSOIDS),
  'fading.ricianKDb': d('Rician K factor of the geometric model (specular over diffuse power).', 'dB'),
  'fading.normalize': d("Scale each user's total path power to 1.", undefined, SCENARIO_DEFAULTS.normalize),
  'fading.xprDb': d('Cross-polar ratio of stochastic paths and cluster sub-paths (turns polarised ports on).', 'dB'),
  seed: d('Seed of every random stream, 0 <= seed < 2^53.', '1'),
  precision: d('Complex sample type of the tensors.', undefined, SCENARIO_DEFAULTS.precision),
};

/** The documentation key of a dotted key path (shared parts under "terminal." and "cluster."). */
function docKey(path: string): string {
  for (const t of TERMINAL) if (path.startsWith(`${t}.`)) return `terminal.${path.slice(t.length + 1)}`;
  for (const c of CLUSTER) if (path.startsWith(`${c}.`)) return `cluster.${path.slice(c.length + 1)}`;
  return path;
}

/** Add description, unit and default to every property of a JSON Schema node, and the material names. */
function annotate(node: unknown, path: string): void {
  if (node === null || typeof node !== 'object') return;
  const n = node as Record<string, unknown>;
  const properties = n.properties as Record<string, Record<string, unknown>> | undefined;
  if (properties !== undefined) {
    for (const [key, child] of Object.entries(properties)) {
      const at = path === '' ? key : `${path}.${key}`;
      const doc = KEY_DOCS[docKey(at)];
      if (doc === undefined) throw new Error(`scenarioJsonSchema(): no documentation for key ${at}`);
      const described = doc.unit !== undefined && doc.unit !== '1' ? `${doc.description} Unit: ${doc.unit}.` : doc.description;
      // A key of another variant (array kind, fading model), refused in this one.
      Object.assign(child, { description: child.not !== undefined ? `${described} Not allowed in this variant.` : described });
      if (doc.unit !== undefined) child.unit = doc.unit;
      if (doc.default !== undefined) child.default = doc.default;
      if (at === 'scene.walls') {
        // A material given by name: one of the table's names (the scene validation names them too).
        const material = ((child.items as Record<string, unknown>).properties as Record<string, Record<string, unknown>>).material!;
        for (const option of material.anyOf as Record<string, unknown>[]) if (option.type === 'string') option.enum = [...MATERIAL_NAMES];
      }
      annotate(child, at);
    }
  }
  for (const key of ['items', 'anyOf', 'oneOf', 'allOf', 'prefixItems']) {
    const v = n[key];
    if (Array.isArray(v)) for (const x of v) annotate(x, path);
    else annotate(v, path);
  }
}

/**
 * The JSON Schema (draft 2020-12) of scenario files, for editors: every key with a
 * description, the unit of every number (`unit`, also in the description) and the default of
 * optional keys; material names as an enum.
 * @example scenarioJsonSchema().type // "object"
 */
export function scenarioJsonSchema(): Record<string, unknown> {
  const schema = z.toJSONSchema(scenarioSchema, { target: 'draft-2020-12' }) as Record<string, unknown>;
  annotate(schema, '');
  return { $id: 'https://pathweave.invalid/scenario.schema.json', title: 'pathweave scenario', ...schema };
}
