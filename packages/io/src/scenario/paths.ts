/**
 * Printing path lists: a readable table, and the explicit-path JSON form of a scenario's `paths` (docs/conventions.md). Path
 * summaries hold their interactions as structured records; the text forms ("walls[3]",
 * "R:walls[3]") are rendered here, at the edge, by the geometry's label functions.
 */
import { interactionLabel, sceneObjectLabel } from '@pathweave/geometry';
import type { PathSummary } from './build.js';

/**
 * One interaction as printed: its type, the object as the scene names it, the point (m).
 * @example const hit: PathInteractionJson = { type: 'reflection', object: 'walls[0]', point: [5, 5, 0] };
 */
export interface PathInteractionJson {
  type: string;
  object: string;
  point: number[];
}

/**
 * A path summary as JSON: the explicit `paths` form of a scenario file (which a scenario accepts back), plus descriptive fields.
 * @example const los: PathSummaryJson = { id: 'los', kind: 'los', aodDeg: [0, 0], aoaDeg: [180, 0], delayS: 3.3e-8, powerDb: -81.4, phaseDeg: 12, dopplerHz: 0 };
 */
export interface PathSummaryJson {
  id: string;
  kind: string;
  aodDeg: [number, number];
  aoaDeg: [number, number];
  delayS: number;
  powerDb: number;
  phaseDeg: number;
  dopplerHz: number;
  maxDopplerHz?: number;
  interactions?: PathInteractionJson[];
  lengthM?: number;
  aodLocalDeg?: [number, number];
  aoaLocalDeg?: [number, number];
  blockageDb?: number;
}

/**
 * The paths as the JSON array `pathweave paths --json` prints.
 * @example pathsJson([summarizeTraced(traceScene({}, { position: [0, 0, 0] }, { position: [10, 0, 0] }, 28e9).paths[0]!)]) // [{ id: 'los', kind: 'los', aodDeg: [0, 0], aoaDeg: [180, 0], delayS: 3.3356e-8, powerDb: -81.391, phaseDeg: 7.392, dopplerHz: 0, interactions: [], lengthM: 10, aodLocalDeg: [0, 0], aoaLocalDeg: [180, 0], blockageDb: 0 }]
 */
export function pathsJson(paths: readonly PathSummary[]): PathSummaryJson[] {
  return paths.map((p) => ({
    id: p.id,
    kind: p.kind,
    aodDeg: p.aodDeg,
    aoaDeg: p.aoaDeg,
    delayS: p.delayS,
    powerDb: p.powerDb,
    phaseDeg: p.phaseDeg,
    dopplerHz: p.dopplerHz,
    ...(p.maxDopplerHz !== undefined ? { maxDopplerHz: p.maxDopplerHz } : {}),
    ...(p.interactions !== undefined ? { interactions: p.interactions.map(interactionJson) } : {}),
    ...(p.lengthM !== undefined ? { lengthM: p.lengthM } : {}),
    ...(p.aodLocalDeg !== undefined ? { aodLocalDeg: p.aodLocalDeg, aoaLocalDeg: p.aoaLocalDeg } : {}),
    ...(p.blockageDb !== undefined ? { blockageDb: p.blockageDb } : {}),
  }));
}

/**
 * An interaction of a path summary in its printed form (the object as the scene file names it).
 * @example interactionJson({ type: 'scatter', object: { kind: 'scatterer', index: 2 }, point: [4, 1, 0] }) // { type: 'scatter', object: 'scatterers[2]', point: [4, 1, 0] }
 */
export function interactionJson(i: NonNullable<PathSummary['interactions']>[number]): PathInteractionJson {
  return { type: i.type, object: sceneObjectLabel(i.object), point: i.point };
}

/**
 * Path summaries as a dataset's side file stores them: every field of the summary in its own
 * order, the interactions in their printed form.
 * @example sideFilePaths([summarizeTraced(traceScene({ walls: [{ vertices: [[0, 5], [20, 5]] }], lineOfSight: false }, { position: [0, 0, 0] }, { position: [10, 0, 0] }, 28e9).paths[0]!)])[0]!.interactions // [{ type: 'reflection', object: 'walls[0]', point: [5, 5, 0] }]
 */
export function sideFilePaths(paths: readonly PathSummary[]): (Omit<PathSummary, 'interactions'> & { interactions?: PathInteractionJson[] })[] {
  // The spread keeps the key order of the summary, so the file's text is that of the summary.
  return paths.map((p) => {
    if (p.interactions === undefined) {
      const { interactions: _absent, ...rest } = p;
      return rest;
    }
    return { ...p, interactions: p.interactions.map(interactionJson) };
  });
}

/**
 * A fixed-width table of paths (delay in ns, length in m, power in dB, angles in degrees).
 * @example pathsTable([summarizeTraced(traceScene({}, { position: [0, 0, 0] }, { position: [10, 0, 0] }, 28e9).paths[0]!)]) // "#  kind  interactions  delay ns  length m  power dB  AoD az ..." then "0  los   direct  33.356  10.000  -81.39  0.00  0.00  180.00  0.00  0.00" (padded columns)
 */
export function pathsTable(paths: readonly PathSummary[]): string {
  const header = ['#', 'kind', 'interactions', 'delay ns', 'length m', 'power dB', 'AoD az', 'AoD el', 'AoA az', 'AoA el', 'Doppler Hz'];
  const rows = paths.map((p, i) => [
    String(i),
    p.kind,
    p.interactions !== undefined ? (p.interactions.length === 0 ? 'direct' : p.interactions.map(interactionLabel).join(' > ')) : p.id,
    (p.delayS * 1e9).toFixed(3),
    ((p.lengthM ?? p.delayS * 299_792_458) as number).toFixed(3),
    p.powerDb.toFixed(2),
    p.aodDeg[0].toFixed(2),
    p.aodDeg[1].toFixed(2),
    p.aoaDeg[0].toFixed(2),
    p.aoaDeg[1].toFixed(2),
    p.dopplerHz.toFixed(2),
  ]);
  const widths = header.map((h, c) => Math.max(h.length, ...rows.map((r) => r[c]!.length)));
  const line = (cells: string[]): string => cells.map((cell, c) => (c <= 2 ? cell.padEnd(widths[c]!) : cell.padStart(widths[c]!))).join('  ');
  return [line(header), line(widths.map((w) => '-'.repeat(w))), ...rows.map(line)].join('\n');
}
