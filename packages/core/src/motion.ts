/**
 * Terminal motion: a constant velocity from a start position, or timed waypoints
 * (piecewise-linear position; the terminal holds its first position before the first waypoint
 * and its last one after the last). Waypoints may carry an orientation, interpolated linearly
 * in yaw, pitch and roll (the shorter way round), so a handset can turn in a hand.
 */
import type { Orientation, Vec3 } from '@pathweave/geometry';

/**
 * A timed waypoint.
 * @example const turn: Waypoint = { t: 2, position: [10, 0, 1.5], orientation: { yawDeg: 90 } };
 */
export interface Waypoint {
  /** Time, seconds; strictly increasing along a trajectory. */
  t: number;
  position: Vec3;
  /** Orientation of the array at that time (degrees); absent: the array's own orientation. */
  orientation?: Orientation | undefined;
}

/**
 * How a terminal moves over time.
 * @example
 * const walk = new Motion([0, 0, 0], [0, 0, 0], [{ t: 0, position: [0, 0, 1.5] }, { t: 10, position: [14, 0, 1.5] }]);
 * walk.positionAt(2.5) // [3.5, 0, 1.5]
 * walk.positionAt(20) // [14, 0, 1.5]: holds the last waypoint
 */
export class Motion {
  /** True when the position changes over time. */
  readonly moves: boolean;
  /** True when the orientation changes over time. */
  readonly turns: boolean;
  private readonly start: Vec3;
  private readonly velocity: Vec3;
  private readonly waypoints: readonly Waypoint[] | undefined;

  /**
   * @param position start position (ignored when a trajectory is given)
   * @param velocity constant velocity, m/s
   * @param trajectory timed waypoints (at least 2, times increasing)
   * @param orientation the array's own orientation, used where waypoints give none
   */
  constructor(
    position: Vec3,
    velocity: Vec3 = [0, 0, 0],
    trajectory?: readonly Waypoint[],
    private readonly orientation: Orientation = {},
  ) {
    this.start = [...position];
    this.velocity = [...velocity];
    if (trajectory !== undefined) {
      if (trajectory.length < 2) throw new RangeError(`Motion(): a trajectory needs at least 2 waypoints, got ${trajectory.length}`);
      for (let i = 1; i < trajectory.length; i++) {
        if (!(trajectory[i]!.t > trajectory[i - 1]!.t))
          throw new RangeError(`Motion(): waypoint times must increase, got ${trajectory[i - 1]!.t} then ${trajectory[i]!.t}`);
      }
      this.waypoints = trajectory.map((w) => ({ t: w.t, position: [...w.position] as Vec3, orientation: w.orientation }));
      this.moves = trajectory.some((w) => w.position.some((x, i) => x !== trajectory[0]!.position[i]));
      this.turns = trajectory.some((w) => w.orientation !== undefined);
    } else {
      this.waypoints = undefined;
      this.moves = velocity.some((v) => v !== 0);
      this.turns = false;
    }
  }

  private segment(t: number): { i: number; f: number } {
    const w = this.waypoints!;
    if (t <= w[0]!.t) return { i: 0, f: 0 };
    if (t >= w[w.length - 1]!.t) return { i: w.length - 2, f: 1 };
    let i = 0;
    while (w[i + 1]!.t < t) i++;
    return { i, f: (t - w[i]!.t) / (w[i + 1]!.t - w[i]!.t) };
  }

  /** Position at time t, metres. */
  positionAt(t: number, out: Vec3 = [0, 0, 0]): Vec3 {
    if (this.waypoints === undefined) {
      for (let k = 0; k < 3; k++) out[k] = this.start[k]! + this.velocity[k]! * t;
      return out;
    }
    const { i, f } = this.segment(t);
    const a = this.waypoints[i]!.position,
      b = this.waypoints[i + 1]!.position;
    for (let k = 0; k < 3; k++) out[k] = a[k]! + f * (b[k]! - a[k]!);
    return out;
  }

  /** Velocity at time t, m/s (zero outside the trajectory's time span). */
  velocityAt(t: number, out: Vec3 = [0, 0, 0]): Vec3 {
    if (this.waypoints === undefined) {
      out[0] = this.velocity[0];
      out[1] = this.velocity[1];
      out[2] = this.velocity[2];
      return out;
    }
    const w = this.waypoints;
    if (t < w[0]!.t || t >= w[w.length - 1]!.t) {
      out[0] = 0;
      out[1] = 0;
      out[2] = 0;
      return out;
    }
    const { i } = this.segment(t);
    const dt = w[i + 1]!.t - w[i]!.t;
    for (let k = 0; k < 3; k++) out[k] = (w[i + 1]!.position[k]! - w[i]!.position[k]!) / dt;
    return out;
  }

  /** Largest speed along the motion, m/s (for Doppler spreads). */
  maxSpeed(): number {
    if (this.waypoints === undefined) return Math.hypot(...this.velocity);
    let v = 0;
    for (let i = 1; i < this.waypoints.length; i++) {
      const a = this.waypoints[i - 1]!,
        b = this.waypoints[i]!;
      v = Math.max(v, Math.hypot(b.position[0] - a.position[0], b.position[1] - a.position[1], b.position[2] - a.position[2]) / (b.t - a.t));
    }
    return v;
  }

  /** Orientation at time t (degrees). */
  orientationAt(t: number): Orientation {
    if (!this.turns || this.waypoints === undefined) return this.orientation;
    const { i, f } = this.segment(t);
    const a = this.waypoints[i]!.orientation ?? this.orientation;
    const b = this.waypoints[i + 1]!.orientation ?? this.orientation;
    const lerp = (x = 0, y = 0): number => {
      let d = ((((y - x) % 360) + 540) % 360) - 180; // shorter way round
      if (d === -180) d = 180;
      return x + f * d;
    };
    return { yawDeg: lerp(a.yawDeg, b.yawDeg), pitchDeg: lerp(a.pitchDeg, b.pitchDeg), rollDeg: lerp(a.rollDeg, b.rollDeg) };
  }
}
