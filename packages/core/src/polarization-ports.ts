/**
 * Polarised ports and the 2x2 polarimetric transfer of each path (docs/deployments.md).
 *
 * Basis: the (theta_hat, phi_hat) basis of geometry's polarization.ts, taken at the departure
 * direction on the transmit side and at the arrival direction on the receive side.
 * Layouts (complex interleaved re/im):
 *   transfer T per path      [L, 2, 2] (8 L values): [tt, tp, pt, pp], row = arrival component,
 *                            column = departure component (the tracer's `polarimetric`);
 *   port field components    [P, 2] (real): [f_theta, f_phi] of each port of a terminal;
 *   port coupling            [Pr, Pt] complex: c_(a,b) = f_rx(a)^T T f_tx(b).
 * A path's contribution to H entry (receive port a of element m, transmit port b of element n)
 * is rho_l r_rx,m r_tx,n c_(a,b), rho_l the path's amplitude without polarisation.
 */
import { directionBasis, terminalFieldVector, type Mat3, type Vec3 } from '@pathweave/geometry';
import type { RandomStream } from './random.js';
import { PathSetFrame, TracedTimeline, type PathTimeline } from './timeline.js';

/**
 * A timeline that also knows each path's polarimetric transfer.
 * @example
 * const identity: PolarimetricSource = { polarimetricAt: (_t, out) => out.set([1, 0, 0, 0, 0, 0, 1, 0]) };
 * const t = new Float64Array(8);
 * identity.polarimetricAt(0, t);
 * t // Float64Array [1, 0, 0, 0, 0, 0, 1, 0]
 */
export interface PolarimetricSource {
  /** Fill `out` (8 L values, layout above) with every path's transfer at time t (seconds). */
  polarimetricAt(timeS: number, out: Float64Array): void;
}

/**
 * True when a timeline provides polarimetric transfers.
 * @example isPolarimetricSource(new ExplicitTimeline([])) // false
 */
export function isPolarimetricSource(t: PathTimeline): t is PathTimeline & PolarimetricSource {
  return t.polarimetricAt !== undefined;
}

/**
 * The identity transfer (co-polar, no cross-polar coupling) for L paths.
 * @example identityTransfers(1) // Float64Array [1, 0, 0, 0, 0, 0, 1, 0]
 */
export function identityTransfers(L: number, out: Float64Array = new Float64Array(8 * L)): Float64Array {
  out.fill(0);
  for (let l = 0; l < L; l++) {
    out[8 * l] = 1;
    out[8 * l + 6] = 1;
  }
  return out;
}

/**
 * A cross-polar transfer with random initial phases, in the form of 3GPP TR 38.901 section 7.5,
 * steps 9 to 11 (from memory, M): [[e^(j Phi_tt), k^-1/2 e^(j Phi_tp)], [k^-1/2 e^(j Phi_pt), e^(j Phi_pp)]],
 * k = 10^(xprDb / 10), the four phases uniform on (-pi, pi) drawn from `stream` in the order
 * tt, tp, pt, pp. Written at out[offset .. offset + 8).
 * @example
 * const T = xprTransfer(new Float64Array(8), 0, 10, new RandomStream(1, 'xpr'));
 * [0, 1, 2, 3].map((e) => Math.hypot(T[2 * e]!, T[2 * e + 1]!)) // [1, 0.3162, 0.3162, 1]: |tt|, |tp|, |pt|, |pp| at XPR 10 dB
 */
export function xprTransfer(out: Float64Array, offset: number, xprDb: number, stream: RandomStream): Float64Array {
  if (!Number.isFinite(xprDb)) throw new RangeError(`xprTransfer(): xprDb must be a finite number, got ${xprDb}`);
  const cross = 10 ** (-xprDb / 20);
  for (let e = 0; e < 4; e++) {
    const phase = Math.PI * (2 * stream.nextUniform() - 1);
    const m = e === 0 || e === 3 ? 1 : cross;
    out[offset + 2 * e] = m * Math.cos(phase);
    out[offset + 2 * e + 1] = m * Math.sin(phase);
  }
  return out;
}

const basisScratch = new Float64Array(6);
const fieldScratch: Vec3 = [0, 0, 0];

/**
 * The (theta, phi) components of each port's radiated field along unit direction u:
 * the port's local polarisation vector rotated by `rotation`, projected perpendicular to u and
 * normalised (geometry's terminalFieldVector, as the tracer does for single-polarised arrays).
 * Writes [f_theta(0), f_phi(0), f_theta(1), ...] into `out` (2 P values).
 * @example portFieldComponents(new Float64Array(2), [[0, 0, 1]], identity(), [1, 0, 0]) // [1, 0]
 */
export function portFieldComponents(out: Float64Array, portsLocal: readonly Readonly<Vec3>[], rotation: Mat3, u: Readonly<Vec3>): Float64Array {
  directionBasis(basisScratch, u);
  const b = basisScratch;
  for (let p = 0; p < portsLocal.length; p++) {
    const f = terminalFieldVector(fieldScratch, portsLocal[p]!, rotation, u);
    out[2 * p] = f[0] * b[0]! + f[1] * b[1]! + f[2] * b[2]!;
    out[2 * p + 1] = f[0] * b[3]! + f[1] * b[4]! + f[2] * b[5]!;
  }
  return out;
}

/**
 * Port coupling c_(a,b) = f_rx(a)^T T f_tx(b) for one path: T at transfers[8 l ..], rxFields
 * [Pr, 2], txFields [Pt, 2]; writes [Pr, Pt] complex into `out`.
 * @example portCoupling(new Float64Array(2), Float64Array.of(1, 0), identityTransfers(1), 0, Float64Array.of(1, 0), 1, 1) // Float64Array [1, 0]: theta to theta through T = I
 */
export function portCoupling(
  out: Float64Array,
  rxFields: Float64Array,
  transfers: Float64Array,
  l: number,
  txFields: Float64Array,
  Pr: number,
  Pt: number,
): Float64Array {
  const o = 8 * l;
  const ttr = transfers[o]!,
    tti = transfers[o + 1]!,
    tpr = transfers[o + 2]!,
    tpi = transfers[o + 3]!;
  const ptr = transfers[o + 4]!,
    pti = transfers[o + 5]!,
    ppr = transfers[o + 6]!,
    ppi = transfers[o + 7]!;
  for (let a = 0; a < Pr; a++) {
    const rt = rxFields[2 * a]!,
      rp = rxFields[2 * a + 1]!;
    for (let b = 0; b < Pt; b++) {
      const st = txFields[2 * b]!,
        sp = txFields[2 * b + 1]!;
      const i = 2 * (a * Pt + b);
      out[i] = rt * (ttr * st + tpr * sp) + rp * (ptr * st + ppr * sp);
      out[i + 1] = rt * (tti * st + tpi * sp) + rp * (pti * st + ppi * sp);
    }
  }
  return out;
}

/**
 * A traced timeline whose frames carry each path's amplitude without polarisation (spreading,
 * blockage, gas, carrier phase, visibility fade) and whose `polarimetricAt` gives the tracer's
 * whole-path transfer T; the terminals' own polarisation then enters through the ports.
 * The tracer's amplitude includes F = r^T T t for the trace polarisations (the arrays'
 * `polarization`, vertical by default); dividing by F (complex division, relative accuracy
 * kept) removes it. Which paths exist and their pruning therefore follow the power between
 * those trace polarisations; a path with F = 0 exactly is dropped by the tracer.
 * @example
 * const still = (position: Vec3) => ({ motion: new Motion(position) });
 * const timeline = new PolarimetricTracedTimeline({}, still([0, 0, 0]), still([10, 0, 0]), 28e9, 0, 1e-3);
 * const t = new Float64Array(8);
 * timeline.polarimetricAt(0, t);
 * [timeline.ids, t] // [['los'], Float64Array [1, 0, 0, 0, 0, 0, -1, 0]]: the direct path's transfer
 */
export class PolarimetricTracedTimeline extends TracedTimeline implements PolarimetricSource {
  override frameAt(timeS: number, frame: PathSetFrame): void {
    super.frameAt(timeS, frame);
    const a = frame.amplitude;
    this.ids.forEach((id, l) => {
      if (frame.visibility[l] === 0) return;
      const p = this.tracedAt(timeS, id);
      if (p === undefined) return;
      const [fr, fi] = p.polarizationFactor;
      const d = fr * fr + fi * fi;
      const xr = a[2 * l]!,
        xi = a[2 * l + 1]!;
      a[2 * l] = (xr * fr + xi * fi) / d;
      a[2 * l + 1] = (xi * fr - xr * fi) / d;
    });
  }

  polarimetricAt(timeS: number, out: Float64Array): void {
    identityTransfers(this.ids.length, out);
    this.ids.forEach((id, l) => {
      const p = this.tracedAt(timeS, id);
      if (p === undefined) return;
      const T = p.polarimetric;
      const o = 8 * l;
      out[o] = T[0][0][0];
      out[o + 1] = T[0][0][1];
      out[o + 2] = T[0][1][0];
      out[o + 3] = T[0][1][1];
      out[o + 4] = T[1][0][0];
      out[o + 5] = T[1][0][1];
      out[o + 6] = T[1][1][0];
      out[o + 7] = T[1][1][1];
    });
  }

  /** The traced path whose factors the frame at t uses: the update holding t, else the next one (fading in). */
  private tracedAt(timeS: number, id: string): import('@pathweave/geometry').TracedPath | undefined {
    const times = this.epochTimesS;
    if (times.length === 1) return this.epochs[0]!.get(id);
    const updateS = times[1]!;
    const e = Math.min(times.length - 1, Math.max(0, Math.floor(timeS / updateS + 1e-12)));
    return this.epochs[e]!.get(id) ?? this.epochs[e + 1]?.get(id);
  }
}
