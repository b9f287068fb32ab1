/**
 * Beam space: DFT codebooks for ULAs and UPAs, the beam-space channel and beam-pair search.
 *
 * Conventions (docs/conventions.md): H = sum rho a_r a_t^H with a_r = r_rx(u_arr), a_t = conj(r_tx(u_dep)),
 * r_n(u) = exp(+j k0 dot(u, p_n)) for isotropic elements. A transmit codebook column is the
 * matched precoder a_t(u_b) / sqrt(Nt); a receive codebook column is the matched combiner
 * a_r(u_b) / sqrt(Nr), and the combiner output is w^H y.
 *
 * Layouts (row-major, complex interleaved re/im):
 *   codebook weights   [N, B]         column b (stride B) is beam b
 *   channel H          [K, Nr, Nt]    one subframe of the frequency-domain tensor
 *   beam-space channel [K, Br, Bt]    W^H H[k] F
 *   ULA beam b (along local +y, spacing d wavelengths, oversampling O, B = O N beams):
 *     spatial frequency psi_b = pi (2 b / (O N) - 1) = 2 pi d u_b, u_b the direction cosine on local y,
 *     transmit weight n = exp(-j psi_b (n - (N - 1) / 2)) / sqrt(N) (element offsets centred, docs/conventions.md)
 *   UPA (rows along local +z, columns along +y, element n = row C + column): the Kronecker
 *   product of a row codebook (on u_z) and a column codebook (on u_y), beam b = bRow Bc + bColumn.
 */
import type { ChannelGenerator } from '../channel.js';
import { checkInteger, checkLength, checkPositive, type ComplexArray } from './checks.js';
import { budgetNoisePowerW, dbmToWatts, type LinkBudget } from './link-budget.js';

/**
 * Which end a codebook serves.
 * @example ulaCodebook(2, { side: 'receive' satisfies CodebookSide }).weights // Float64Array [4.3e-17, 0.7071, 0.7071, 0, 4.3e-17, -0.7071, 0.7071, 0]: [N, B] complex, the responses towards u_y = -1 and 0
 */
export type CodebookSide = 'transmit' | 'receive';

/**
 * A set of unit-norm beam weight vectors.
 * @example
 * const book: Codebook = ulaCodebook(2);
 * [book.elements, book.beams, book.side, book.directionCosines] // [2, 2, 'transmit', Float64Array [-1, 0, 0, 0]]: beams towards u_y = -1 and 0
 */
export interface Codebook {
  /** Array elements N. */
  readonly elements: number;
  /** Number of beams B. */
  readonly beams: number;
  /** Transmit precoders (conj of the response) or receive combiners (the response). */
  readonly side: CodebookSide;
  /** Weights [N, B] complex interleaved, column b = beam b, each of unit norm. */
  readonly weights: Float64Array;
  /** Steering direction cosines per beam [B, 2]: (u_y, u_z) in the array's local frame. */
  readonly directionCosines: Float64Array;
}

/**
 * Options of the DFT codebooks.
 * @example ulaCodebook(4, { oversampling: 4, spacingWavelengths: 0.5 } satisfies CodebookOptions).beams // 16
 */
export interface CodebookOptions {
  /** Beams per element (oversampling factor O), integer >= 1. Default 1 (orthogonal beams). */
  oversampling?: number;
  /** Element spacing in wavelengths. Default 0.5. */
  spacingWavelengths?: number;
  /** Default 'transmit'. */
  side?: CodebookSide;
}

/**
 * DFT codebook of a ULA of N elements (module comment for the beams).
 * @example ulaCodebook(8).beams // 8; the Gram matrix of the columns is the identity
 * @example ulaCodebook(4, { oversampling: 2 }).directionCosines[2 * 4] // 0 (beam 4 is broadside)
 */
export function ulaCodebook(elements: number, options: CodebookOptions = {}): Codebook {
  const fn = 'ulaCodebook()';
  const { oversampling, spacing, side } = checkOptions(fn, elements, options);
  const beams = oversampling * elements;
  const weights = new Float64Array(2 * elements * beams);
  const directionCosines = new Float64Array(2 * beams);
  writeLinear(weights, elements, beams, side);
  for (let b = 0; b < beams; b++) directionCosines[2 * b] = ((2 * b) / beams - 1) / (2 * spacing);
  return { elements, beams, side, weights, directionCosines };
}

/**
 * Options of the UPA codebook: oversampling may differ along rows and columns.
 * @example upaCodebook(2, 4, { oversampling: [1, 2] } satisfies UpaCodebookOptions).beams // 16: 2 x 8 beams
 */
export interface UpaCodebookOptions extends Omit<CodebookOptions, 'oversampling'> {
  /** O, or [O_rows, O_columns]. Default 1. */
  oversampling?: number | readonly [number, number];
}

/**
 * DFT codebook of a UPA of rows x columns elements: Kronecker product of a row codebook
 * (direction cosine u_z) and a column codebook (u_y), beam b = bRow Bc + bColumn.
 * @example upaCodebook(2, 4).beams // 8
 */
export function upaCodebook(rows: number, columns: number, options: UpaCodebookOptions = {}): Codebook {
  const fn = 'upaCodebook()';
  const o = options.oversampling ?? 1;
  const [oRows, oColumns] = typeof o === 'number' ? [o, o] : o;
  const r = checkOptions(fn, rows, { ...options, oversampling: oRows });
  const c = checkOptions(fn, columns, { ...options, oversampling: oColumns });
  const Br = r.oversampling * rows,
    Bc = c.oversampling * columns;
  const rowWeights = new Float64Array(2 * rows * Br);
  const columnWeights = new Float64Array(2 * columns * Bc);
  writeLinear(rowWeights, rows, Br, r.side);
  writeLinear(columnWeights, columns, Bc, c.side);
  const elements = rows * columns,
    beams = Br * Bc;
  const weights = new Float64Array(2 * elements * beams);
  const directionCosines = new Float64Array(2 * beams);
  for (let er = 0; er < rows; er++) {
    for (let ec = 0; ec < columns; ec++) {
      const n = er * columns + ec;
      for (let br = 0; br < Br; br++) {
        const ar = rowWeights[2 * (er * Br + br)]!,
          ai = rowWeights[2 * (er * Br + br) + 1]!;
        for (let bc = 0; bc < Bc; bc++) {
          const cr = columnWeights[2 * (ec * Bc + bc)]!,
            ci = columnWeights[2 * (ec * Bc + bc) + 1]!;
          const i = 2 * (n * beams + br * Bc + bc);
          weights[i] = ar * cr - ai * ci;
          weights[i + 1] = ar * ci + ai * cr;
        }
      }
    }
  }
  for (let br = 0; br < Br; br++) {
    for (let bc = 0; bc < Bc; bc++) {
      const b = br * Bc + bc;
      directionCosines[2 * b] = ((2 * bc) / Bc - 1) / (2 * c.spacing);
      directionCosines[2 * b + 1] = ((2 * br) / Br - 1) / (2 * r.spacing);
    }
  }
  return { elements, beams, side: r.side, weights, directionCosines };
}

/**
 * Beam b of a codebook as a vector of N complex weights (a copy).
 * @example codebookColumn(ulaCodebook(2), 1) // [1/sqrt2, 0, 1/sqrt2, 0] (broadside)
 */
export function codebookColumn(codebook: Codebook, beam: number, out = new Float64Array(2 * codebook.elements)): Float64Array {
  const fn = 'codebookColumn()';
  if (!Number.isInteger(beam) || beam < 0 || beam >= codebook.beams)
    throw new RangeError(`${fn}: beam must be an integer in [0, ${codebook.beams}), got ${beam}`);
  checkLength(fn, 'out', out, 2 * codebook.elements, `[${codebook.elements}] complex`);
  for (let n = 0; n < codebook.elements; n++) {
    out[2 * n] = codebook.weights[2 * (n * codebook.beams + beam)]!;
    out[2 * n + 1] = codebook.weights[2 * (n * codebook.beams + beam) + 1]!;
  }
  return out;
}

/**
 * Beam-space channel W^H H[k] F for every subcarrier: H [K, Nr, Nt], W a receive codebook of
 * Nr elements, F a transmit codebook of Nt elements; out [K, Bw, Bf].
 * @example
 * const W = ulaCodebook(1, { side: 'receive' }), F = ulaCodebook(2); // 1 receive beam; transmit beams towards u_y = -1 and 0
 * beamspaceChannel(Float64Array.of(1, 0, 1, 0), 1, W, F) // Float64Array [8.7e-17, 0, 1.4142, 0]: [1, 1, 2], H = [1, 1] falls in the broadside beam
 */
export function beamspaceChannel(H: ComplexArray, subcarriers: number, W: Codebook, F: Codebook, out?: Float64Array): Float64Array {
  const fn = 'beamspaceChannel()';
  checkInteger(fn, 'subcarriers', subcarriers, 1);
  const Nr = W.elements,
    Nt = F.elements,
    Bw = W.beams,
    Bf = F.beams,
    K = subcarriers;
  checkLength(fn, 'H', H, 2 * K * Nr * Nt, `[${K}, ${Nr}, ${Nt}] complex interleaved (Nr from W, Nt from F)`);
  const result = out ?? new Float64Array(2 * K * Bw * Bf);
  checkLength(fn, 'out', result, 2 * K * Bw * Bf, `[${K}, ${Bw}, ${Bf}] complex interleaved`);
  const HF = new Float64Array(2 * Nr * Bf);
  for (let k = 0; k < K; k++) {
    multiplyHF(HF, H, 2 * k * Nr * Nt, F, Nr);
    const dst = 2 * k * Bw * Bf;
    for (let bw = 0; bw < Bw; bw++) {
      for (let bf = 0; bf < Bf; bf++) {
        let re = 0,
          im = 0;
        for (let r = 0; r < Nr; r++) {
          const wr = W.weights[2 * (r * Bw + bw)]!,
            wi = -W.weights[2 * (r * Bw + bw) + 1]!; // conj(w)
          const gr = HF[2 * (r * Bf + bf)]!,
            gi = HF[2 * (r * Bf + bf) + 1]!;
          re += wr * gr - wi * gi;
          im += wr * gi + wi * gr;
        }
        result[dst + 2 * (bw * Bf + bf)] = re;
        result[dst + 2 * (bw * Bf + bf) + 1] = im;
      }
    }
  }
  return result;
}

/**
 * Effective scalar channel w^H H[k] f per subcarrier; w (Nr complex) and f (Nt complex) are
 * weight vectors, for example codebook columns. out [K] complex.
 * @example effectiveChannel(Float64Array.of(2, 0), 1, Float64Array.of(0, 1), Float64Array.of(1, 0)) // [0, -2]
 */
export function effectiveChannel(
  H: ComplexArray,
  subcarriers: number,
  w: Float64Array,
  f: Float64Array,
  out = new Float64Array(2 * subcarriers),
): Float64Array {
  const fn = 'effectiveChannel()';
  checkInteger(fn, 'subcarriers', subcarriers, 1);
  if (!(w instanceof Float64Array) || w.length < 2 || w.length % 2 !== 0)
    throw new RangeError(`${fn}: w must be a Float64Array of Nr complex weights, got ${w instanceof Float64Array ? w.length : String(w)} values`);
  if (!(f instanceof Float64Array) || f.length < 2 || f.length % 2 !== 0)
    throw new RangeError(`${fn}: f must be a Float64Array of Nt complex weights, got ${f instanceof Float64Array ? f.length : String(f)} values`);
  const Nr = w.length / 2,
    Nt = f.length / 2,
    K = subcarriers;
  checkLength(fn, 'H', H, 2 * K * Nr * Nt, `[${K}, ${Nr}, ${Nt}] complex interleaved`);
  checkLength(fn, 'out', out, 2 * K, `[${K}] complex`);
  for (let k = 0; k < K; k++) {
    let re = 0,
      im = 0;
    for (let r = 0; r < Nr; r++) {
      let gr = 0,
        gi = 0;
      for (let t = 0; t < Nt; t++) {
        const i = 2 * ((k * Nr + r) * Nt + t);
        const hr = H[i]!,
          hi = H[i + 1]!,
          fr = f[2 * t]!,
          fi = f[2 * t + 1]!;
        gr += hr * fr - hi * fi;
        gi += hr * fi + hi * fr;
      }
      const wr = w[2 * r]!,
        wi = -w[2 * r + 1]!;
      re += wr * gr - wi * gi;
      im += wr * gi + wi * gr;
    }
    out[2 * k] = re;
    out[2 * k + 1] = im;
  }
  return out;
}

/**
 * The best beam pair of one subframe.
 * @example bestBeamPair(Float64Array.of(1, 0, 1, 0), 1, ulaCodebook(1, { side: 'receive' }), ulaCodebook(2)) // { receiveBeam: 0, transmitBeam: 1, gain: 2, meanGain: 2 }: the broadside beam
 */
export interface BeamPair {
  /** Receive beam index (column of W). */
  receiveBeam: number;
  /** Transmit beam index (column of F). */
  transmitBeam: number;
  /** sum_k |w^H H[k] f|^2 of the pair. */
  gain: number;
  /** gain / K: the mean beamformed power gain per subcarrier. */
  meanGain: number;
  /** With a link budget: P_t meanGain / (k T B F), all power on the one beam (unit-norm w keeps the noise at k T B F). */
  snr?: number;
  /** 10 log10(snr). */
  snrDb?: number;
}

/**
 * Exhaustive beam-pair search plan: max over (w, f) in W x F of sum_k |w^H H[k] f|^2, with
 * scratch owned by the plan so a search per subframe allocates nothing but its result.
 * @example
 * const plan = new BeamSearch(ulaCodebook(1, { side: 'receive' }), ulaCodebook(2), 1);
 * plan.search(Float64Array.of(1, 0, -1, 0)).transmitBeam // 0: the beam towards u_y = -1 (phases 0 and pi)
 * plan.gains // Float64Array [2, 0]
 */
export class BeamSearch {
  /** Subcarriers K. */
  readonly subcarriers: number;
  private readonly hf: Float64Array; // [Nr, Bf]
  private readonly table: Float64Array; // [Bw, Bf] summed |.|^2
  private readonly transmitW: number | undefined;
  private readonly noiseW: number | undefined;

  constructor(
    readonly receiveCodebook: Codebook,
    readonly transmitCodebook: Codebook,
    subcarriers: number,
    budget?: LinkBudget,
  ) {
    checkInteger('BeamSearch()', 'subcarriers', subcarriers, 1);
    this.subcarriers = subcarriers;
    this.hf = new Float64Array(2 * receiveCodebook.elements * transmitCodebook.beams);
    this.table = new Float64Array(receiveCodebook.beams * transmitCodebook.beams);
    if (budget !== undefined) {
      this.noiseW = budgetNoisePowerW(budget);
      this.transmitW = dbmToWatts(budget.transmitPowerDbm);
    }
  }

  /** Beamformed gains sum_k |w^H H[k] f|^2 of the last search, [Bw, Bf] (a view, overwritten by the next search). */
  get gains(): Float64Array {
    return this.table;
  }

  /** Search one subframe H [K, Nr, Nt] starting at `offset` in `H` (so a slice needs no copy). */
  search(H: ComplexArray, offset = 0): BeamPair {
    const fn = 'BeamSearch.search()';
    const W = this.receiveCodebook,
      F = this.transmitCodebook;
    const Nr = W.elements,
      Nt = F.elements,
      Bw = W.beams,
      Bf = F.beams,
      K = this.subcarriers;
    checkInteger(fn, 'offset', offset, 0);
    if (!(H instanceof Float32Array || H instanceof Float64Array) || offset + 2 * K * Nr * Nt > H.length) {
      throw new RangeError(
        `${fn}: H must hold ${2 * K * Nr * Nt} numbers from offset ${offset} ([${K}, ${Nr}, ${Nt}] complex interleaved), got ${H instanceof Float32Array || H instanceof Float64Array ? H.length - offset : String(H)}`,
      );
    }
    const table = this.table,
      HF = this.hf;
    table.fill(0);
    for (let k = 0; k < K; k++) {
      multiplyHF(HF, H, offset + 2 * k * Nr * Nt, F, Nr);
      for (let bw = 0; bw < Bw; bw++) {
        for (let bf = 0; bf < Bf; bf++) {
          let re = 0,
            im = 0;
          for (let r = 0; r < Nr; r++) {
            const wr = W.weights[2 * (r * Bw + bw)]!,
              wi = -W.weights[2 * (r * Bw + bw) + 1]!;
            const gr = HF[2 * (r * Bf + bf)]!,
              gi = HF[2 * (r * Bf + bf) + 1]!;
            re += wr * gr - wi * gi;
            im += wr * gi + wi * gr;
          }
          table[bw * Bf + bf] = table[bw * Bf + bf]! + re * re + im * im;
        }
      }
    }
    let best = 0;
    for (let i = 1; i < table.length; i++) if (table[i]! > table[best]!) best = i;
    const gain = table[best]!;
    const pair: BeamPair = { receiveBeam: Math.floor(best / Bf), transmitBeam: best % Bf, gain, meanGain: gain / K };
    if (this.noiseW !== undefined && this.transmitW !== undefined) {
      pair.snr = (this.transmitW * pair.meanGain) / this.noiseW;
      pair.snrDb = 10 * Math.log10(pair.snr);
    }
    return pair;
  }
}

/**
 * The best beam pair of one subframe H [K, Nr, Nt] (see BeamSearch).
 * @example bestBeamPair(Float64Array.of(1, 0, -1, 0), 1, ulaCodebook(1, { side: 'receive' }), ulaCodebook(2)) // { receiveBeam: 0, transmitBeam: 0, gain: 2, meanGain: 2 }: H = [1, -1] is beam 0 (u_y = -1)
 */
export function bestBeamPair(H: ComplexArray, subcarriers: number, W: Codebook, F: Codebook, budget?: LinkBudget): BeamPair {
  return new BeamSearch(W, F, subcarriers, budget).search(H);
}

/**
 * Best beam pair per subframe.
 * @example
 * const track: BeamTrack = { first: 0, receiveBeam: Int32Array.of(0, 0), transmitBeam: Int32Array.of(3, 4),
 *   gain: Float64Array.of(7.9, 7.6), meanGain: Float64Array.of(0.62, 0.59) };
 */
export interface BeamTrack {
  /** First subframe tracked. */
  first: number;
  receiveBeam: Int32Array;
  transmitBeam: Int32Array;
  gain: Float64Array;
  meanGain: Float64Array;
  /** Only with a link budget. */
  snrDb?: Float64Array;
}

/**
 * Track the best beam pair over subframes [first, first + count) of a frequency-domain
 * ChannelGenerator (pulled one subframe at a time, so memory stays at one subframe), or of a
 * tensor [S, K, Nr, Nt] given with its shape.
 * @example
 * const W = ulaCodebook(1, { side: 'receive' }), F = ulaCodebook(2);
 * trackBeamPairs({ tensor: Float64Array.of(1, 0, 1, 0, 1, 0, -1, 0), shape: [2, 1, 1, 2] }, W, F).transmitBeam // Int32Array [1, 0]: H = [1, 1], then [1, -1]
 */
export function trackBeamPairs(
  source: ChannelGenerator | { tensor: ComplexArray; shape: readonly [number, number, number, number] },
  W: Codebook,
  F: Codebook,
  budget?: LinkBudget,
  first = 0,
  count?: number,
): BeamTrack {
  const fn = 'trackBeamPairs()';
  let S: number, K: number, Nr: number, Nt: number;
  let read: (s: number) => { data: ComplexArray; offset: number };
  if ('fill' in source) {
    if (source.spec.grid.domain !== 'frequency')
      throw new RangeError(`${fn}: the generator must have a frequency-domain grid, got '${source.spec.grid.domain}'`);
    if (source.shape.length !== 4) throw new RangeError(`${fn}: the generator must have no symbol axis, got shape [${source.shape.join(', ')}]`);
    [S, K, Nr, Nt] = source.shape as [number, number, number, number];
    const one = source.allocate(1);
    read = (s) => ({ data: source.fill(one, s, 1), offset: 0 });
  } else {
    if (source.shape.length !== 4) throw new RangeError(`${fn}: the generator must have no symbol axis, got shape [${source.shape.join(', ')}]`);
    [S, K, Nr, Nt] = source.shape as [number, number, number, number];
    [S, K, Nr, Nt].forEach((v, i) => checkInteger(fn, `shape[${i}]`, v, 1));
    checkLength(fn, 'tensor', source.tensor, 2 * S * K * Nr * Nt, `[${S}, ${K}, ${Nr}, ${Nt}] complex interleaved`);
    read = (s) => ({ data: source.tensor, offset: 2 * s * K * Nr * Nt });
  }
  if (W.elements !== Nr) throw new RangeError(`${fn}: the receive codebook must have Nr = ${Nr} elements, got ${W.elements}`);
  if (F.elements !== Nt) throw new RangeError(`${fn}: the transmit codebook must have Nt = ${Nt} elements, got ${F.elements}`);
  const n = count ?? S - first;
  checkInteger(fn, 'first', first, 0);
  checkInteger(fn, 'count', n, 1);
  if (first + n > S) throw new RangeError(`${fn}: subframes [${first}, ${first + n}) lie outside [0, ${S})`);
  const search = new BeamSearch(W, F, K, budget);
  const track: BeamTrack = { first, receiveBeam: new Int32Array(n), transmitBeam: new Int32Array(n), gain: new Float64Array(n), meanGain: new Float64Array(n) };
  if (budget !== undefined) track.snrDb = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const { data, offset } = read(first + i);
    const pair = search.search(data, offset);
    track.receiveBeam[i] = pair.receiveBeam;
    track.transmitBeam[i] = pair.transmitBeam;
    track.gain[i] = pair.gain;
    track.meanGain[i] = pair.meanGain;
    if (track.snrDb !== undefined) track.snrDb[i] = pair.snrDb!;
  }
  return track;
}

/** HF[r, bf] = sum_t H[r, t] F[t, bf] for one subcarrier starting at `offset`. */
function multiplyHF(HF: Float64Array, H: ComplexArray, offset: number, F: Codebook, Nr: number): void {
  const Nt = F.elements,
    Bf = F.beams,
    Fw = F.weights;
  for (let r = 0; r < Nr; r++) {
    for (let bf = 0; bf < Bf; bf++) {
      let re = 0,
        im = 0;
      for (let t = 0; t < Nt; t++) {
        const hr = H[offset + 2 * (r * Nt + t)]!,
          hi = H[offset + 2 * (r * Nt + t) + 1]!;
        const fr = Fw[2 * (t * Bf + bf)]!,
          fi = Fw[2 * (t * Bf + bf) + 1]!;
        re += hr * fr - hi * fi;
        im += hr * fi + hi * fr;
      }
      HF[2 * (r * Bf + bf)] = re;
      HF[2 * (r * Bf + bf) + 1] = im;
    }
  }
}

/**
 * Weights of a linear DFT codebook into out [N, B]: element n, beam b gets
 * exp(-+j psi_b (n - (N - 1) / 2)) / sqrt(N), psi_b = pi (2 b / B - 1), minus for transmit.
 * The phase is formed from the exact integer product (2b - B)(2n - N + 1) so no recurrence drifts.
 */
function writeLinear(out: Float64Array, N: number, B: number, side: CodebookSide): void {
  const sign = side === 'transmit' ? -1 : 1;
  const norm = 1 / Math.sqrt(N);
  for (let n = 0; n < N; n++) {
    for (let b = 0; b < B; b++) {
      const phase = (sign * Math.PI * ((2 * b - B) * (2 * n - N + 1))) / (2 * B);
      out[2 * (n * B + b)] = norm * Math.cos(phase);
      out[2 * (n * B + b) + 1] = norm * Math.sin(phase);
    }
  }
}

function checkOptions(fn: string, elements: number, options: CodebookOptions): { oversampling: number; spacing: number; side: CodebookSide } {
  checkInteger(fn, 'elements', elements, 1);
  const oversampling = options.oversampling ?? 1;
  checkInteger(fn, 'oversampling', oversampling, 1);
  const spacing = options.spacingWavelengths ?? 0.5;
  checkPositive(fn, 'spacingWavelengths', spacing);
  const side = options.side ?? 'transmit';
  if (side !== 'transmit' && side !== 'receive') throw new RangeError(`${fn}: side must be 'transmit' or 'receive', got ${String(side)}`);
  return { oversampling, spacing, side };
}
