// Types of bench/scenes.mjs for the TypeScript tests that import it (the benchmark itself is plain JavaScript).
import type { Wall } from '@pathweave/geometry';

/** A scene of our own for the tracer benchmark, with its two terminals. */
export interface BenchScene {
  scene: { walls: Wall[]; maxReflectionOrder: number };
  transmitter: [number, number, number];
  receiver: [number, number, number];
}
export function streetGrid(options?: { n?: number; blockM?: number; streetM?: number; ground?: boolean }): BenchScene;
export function triangulatedHall(triangles?: number): BenchScene;
