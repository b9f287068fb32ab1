/**
 * The dataset layout: one table of every array a run writes (name, dtype, units, axes, whether
 * it carries the subframe axis) and the list of root attributes. generate writes from it,
 * merge concatenates by it, inspect and plot read by its names (docs/datasets.md lists it for
 * users).
 *
 * Axis names: S subframes, U users (only with `receivers`), N symbols per subframe (only with a
 * symbol axis), K subcarriers, T taps, Nr and Nt ports, L paths (the largest path count over
 * the users), E geometry updates (only when the traced geometry moves), 2 an [azimuth,
 * elevation] or 3 an [x, y, z] component. An axis in the table marked `?` appears only when
 * its condition holds (U, N, E).
 */
import type { DType } from '../formats/sink.js';

/**
 * One array of the dataset layout.
 * @example const row: DatasetArray = { name: 'gains', dtype: 'complex128', units: '1', axes: ['S', 'U?', 'N?', 'L'], perSubframe: true };
 */
export interface DatasetArray {
  /** Name in the container ("/" separates groups). */
  name: string;
  dtype: DType | 'tensor';
  /** Physical unit (the HDF5 `units` attribute). */
  units: string;
  /** Axis names in storage order (module comment); `?` marks an axis that may be absent. */
  axes: readonly string[];
  /** True when axis 0 is the subframe axis (merge concatenates these along it). */
  perSubframe: boolean;
}

/**
 * Every array a run may write, in the order generate writes them. `tensor` stands for the
 * run's precision (complex64 or complex128).
 * @example DATASET_ARRAYS.filter((a) => a.perSubframe).length // 16: H and h, gains, subframe times and 12 ground-truth arrays
 */
export const DATASET_ARRAYS: readonly DatasetArray[] = Object.freeze([
  { name: 'H', dtype: 'tensor', units: '1', axes: ['S', 'U?', 'N?', 'K', 'Nr', 'Nt'], perSubframe: true },
  { name: 'h', dtype: 'tensor', units: '1', axes: ['S', 'U?', 'N?', 'T', 'Nr', 'Nt'], perSubframe: true },
  { name: 'gains', dtype: 'complex128', units: '1', axes: ['S', 'U?', 'N?', 'L'], perSubframe: true },
  { name: 'frequenciesHz', dtype: 'float64', units: 'Hz', axes: ['K'], perSubframe: false },
  { name: 'tapDelaysS', dtype: 'float64', units: 's', axes: ['T'], perSubframe: false },
  { name: 'subframeTimesS', dtype: 'float64', units: 's', axes: ['S'], perSubframe: true },
  { name: 'paths/delayS', dtype: 'float64', units: 's', axes: ['U?', 'E?', 'L'], perSubframe: false },
  { name: 'paths/powerDb', dtype: 'float64', units: 'dB', axes: ['U?', 'E?', 'L'], perSubframe: false },
  { name: 'paths/aodDeg', dtype: 'float64', units: 'deg', axes: ['U?', 'E?', 'L', '2'], perSubframe: false },
  { name: 'paths/aoaDeg', dtype: 'float64', units: 'deg', axes: ['U?', 'E?', 'L', '2'], perSubframe: false },
  { name: 'paths/kind', dtype: 'string', units: '1', axes: ['U?', 'L'], perSubframe: false },
  { name: 'paths/id', dtype: 'string', units: '1', axes: ['U?', 'L'], perSubframe: false },
  { name: 'paths/epochTimesS', dtype: 'float64', units: 's', axes: ['E'], perSubframe: false },
  { name: 'truth/transmitterPosition', dtype: 'float64', units: 'm', axes: ['S', '3'], perSubframe: true },
  { name: 'truth/transmitterVelocity', dtype: 'float64', units: 'm/s', axes: ['S', '3'], perSubframe: true },
  { name: 'truth/transmitterOrientationDeg', dtype: 'float64', units: 'deg', axes: ['S', '3'], perSubframe: true },
  { name: 'truth/receiverPosition', dtype: 'float64', units: 'm', axes: ['S', 'U?', '3'], perSubframe: true },
  { name: 'truth/receiverVelocity', dtype: 'float64', units: 'm/s', axes: ['S', 'U?', '3'], perSubframe: true },
  { name: 'truth/receiverOrientationDeg', dtype: 'float64', units: 'deg', axes: ['S', 'U?', '3'], perSubframe: true },
  { name: 'truth/lineOfSight', dtype: 'uint8', units: '1', axes: ['S', 'U?'], perSubframe: true },
  { name: 'truth/delayS', dtype: 'float64', units: 's', axes: ['S', 'U?', 'L'], perSubframe: true },
  { name: 'truth/powerDb', dtype: 'float64', units: 'dB', axes: ['S', 'U?', 'L'], perSubframe: true },
  { name: 'truth/dopplerHz', dtype: 'float64', units: 'Hz', axes: ['S', 'U?', 'L'], perSubframe: true },
  { name: 'truth/aodDeg', dtype: 'float64', units: 'deg', axes: ['S', 'U?', 'L', '2'], perSubframe: true },
  { name: 'truth/aoaDeg', dtype: 'float64', units: 'deg', axes: ['S', 'U?', 'L', '2'], perSubframe: true },
] satisfies DatasetArray[]);

const BY_NAME = new Map(DATASET_ARRAYS.map((a) => [a.name, a]));

/**
 * The table row of an array name (undefined for a name the layout does not know).
 * @example datasetArray('truth/dopplerHz')?.units // "Hz"
 */
export function datasetArray(name: string): DatasetArray | undefined {
  return BY_NAME.get(name);
}

/**
 * The unit of an array of the layout ("1" for a name it does not know).
 * @example [unitsOf('paths/aodDeg'), unitsOf('nothing')] // ['deg', '1']
 */
export function unitsOf(name: string): string {
  return BY_NAME.get(name)?.units ?? '1';
}

/**
 * Root attributes of every written file, in the order generate sets them (`tensorSha256` only
 * when a checksum was computed).
 * @example DATASET_ATTRIBUTES.map((a) => a.name).slice(0, 3) // ['scenario', 'pathweaveVersion', 'seed']
 */
export const DATASET_ATTRIBUTES: readonly { name: string; dtype: 'string' | 'int64' | 'int32'; optional?: true }[] = Object.freeze([
  { name: 'scenario', dtype: 'string' },
  { name: 'pathweaveVersion', dtype: 'string' },
  { name: 'seed', dtype: 'int64' },
  { name: 'subframeRange', dtype: 'string' },
  { name: 'subframesTotal', dtype: 'int64' },
  { name: 'tensorSha256', dtype: 'string', optional: true },
  { name: 'kernel', dtype: 'string' },
  { name: 'formatVersion', dtype: 'int32' },
] as const);

/**
 * Which optional axes a run has.
 * @example const axes: LayoutAxes = { users: 2, symbols: 14, epochs: undefined };
 */
export interface LayoutAxes {
  /** U when the scenario has `receivers`, else undefined. */
  users: number | undefined;
  /** N when there is a symbol axis, else undefined. */
  symbols: number | undefined;
  /** E when the path table carries geometry updates, else undefined. */
  epochs: number | undefined;
}

/**
 * The shape of a layout array for the given axis lengths; optional axes without a length are left out.
 * @example arrayShape('gains', { S: 4, L: 8 }, { users: 2, symbols: undefined, epochs: undefined }) // [4, 2, 8]
 */
export function arrayShape(name: string, sizes: Partial<Record<'S' | 'K' | 'T' | 'Nr' | 'Nt' | 'L', number>>, axes: LayoutAxes): number[] {
  const row = BY_NAME.get(name);
  if (row === undefined) throw new RangeError(`arrayShape(): "${name}" is not an array of the dataset layout`);
  const shape: number[] = [];
  for (const axis of row.axes) {
    if (axis === 'U?') {
      if (axes.users !== undefined) shape.push(axes.users);
    } else if (axis === 'N?') {
      if (axes.symbols !== undefined) shape.push(axes.symbols);
    } else if (axis === 'E?' || axis === 'E') {
      if (axes.epochs !== undefined) shape.push(axes.epochs);
    } else if (axis === '2' || axis === '3') shape.push(Number(axis));
    else {
      const n = sizes[axis as keyof typeof sizes];
      if (n === undefined) throw new RangeError(`arrayShape(): "${name}" needs the length of axis ${axis}`);
      shape.push(n);
    }
  }
  return shape;
}
