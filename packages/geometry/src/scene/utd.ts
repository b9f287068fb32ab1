/**
 * Edge diffraction by the uniform theory of diffraction (UTD): the wedge diffraction
 * coefficients of Kouyoumjian and Pathak (Proc. IEEE 62(11), 1974) for a perfectly conducting
 * wedge, with Luebbers' heuristic (IEEE Trans. Antennas Propag. 32(1), 1984) for wedges of lossy
 * dielectric faces, and the Fresnel integrals they are built on.
 *
 * Wedge geometry (edge-fixed coordinates): the exterior of the wedge spans the angle n pi
 * (0 < n <= 2; n = 2 is a half-plane, a thin screen) measured about the edge from face 0 to face n.
 * phi' is the angle of the incident ray's source and phi that of the observation point, both
 * measured from face 0 through the exterior (0 <= phi, phi' <= n pi); beta0 is the angle between
 * the incident ray and the edge (Keller's cone: the diffracted ray makes the same angle).
 *
 *   D_{s,h} = -exp(-j pi / 4) / (2 n sqrt(2 pi k) sin beta0) *
 *             [ cot((pi + (phi - phi')) / 2n) F(k L a+(phi - phi'))
 *             + cot((pi - (phi - phi')) / 2n) F(k L a-(phi - phi'))
 *             + R0 cot((pi - (phi + phi')) / 2n) F(k L a-(phi + phi'))
 *             + Rn cot((pi + (phi + phi')) / 2n) F(k L a+(phi + phi')) ]
 *
 * with a+-(b) = 2 cos^2((2 n pi N+- - b) / 2), N+- the integers nearest to satisfying
 * 2 pi n N+- - b = +-pi, and the transition function F(X) = 2 j sqrt(X) exp(j X) *
 * int_sqrt(X)^inf exp(-j t^2) dt. For a perfect conductor R0 = Rn = -1 (soft, the field
 * component in the edge-fixed plane of incidence, parallel to the edge at normal incidence) and
 * R0 = Rn = +1 (hard, the component perpendicular to it): the Kouyoumjian-Pathak coefficients.
 * Luebbers replaces them by the reflection coefficients of each face, R0 evaluated at the angle
 * the incident ray makes with face 0 and Rn at the angle the diffracted ray makes with face n,
 * soft with the TE and hard with the TM coefficient (the TM sign convention of fresnel.ts, in
 * which a perfect conductor has Gamma_TM = +1, so the heuristic reduces to the exact PEC form).
 *
 * Time convention exp(+j omega t), as the rest of pathweave (a wave exp(-j k s)). For a point
 * source the distance parameter is L = s s' sin^2(beta0) / (s + s'), s' from the source to the
 * edge and s from the edge to the observer, and the diffracted field is
 *   E_d = E_i(Q) * D * sqrt(s' / (s (s + s'))) * exp(-j k s),
 * which is continuous with the geometric-optics fields across every shadow and reflection
 * boundary. Near a boundary (where the cotangent diverges) the product cot * F is replaced by its
 * limit n [sqrt(2 pi k L) sgn(eps) - 2 k L eps exp(j pi / 4)] exp(j pi / 4), eps the angular
 * distance to the boundary (Kouyoumjian and Pathak 1974); exactly on a boundary the side is the
 * one the tracer gives the geometric-optics ray (an edge-grazing direct ray is blocked, an
 * edge-grazing reflection is kept).
 *
 * Side-locked evaluation (`sides`): each boundary term can be held on the side it had when the
 * path was traced, its value then continued analytically across the boundary (sqrt(X) in F taken
 * with the sign of eps, which turns F into F - 2 sqrt(pi X) exp(j (X + pi / 4))). Between two
 * geometry updates the tracer's paths keep the geometric-optics set of the update, and a
 * diffracted path blended from its two updates' sides then adds up with the fading direct and
 * reflected paths to a field that stays continuous in time (timeline of core).
 */
import type { Complex } from './complex.js';

/**
 * The reflection coefficients of one wedge face used by Luebbers' heuristic: TE (soft) and TM
 * (hard), in the convention of fresnel.ts.
 * @example const pec: FaceReflection = { te: [-1, 0], tm: [1, 0] }; // a perfectly conducting face: the Kouyoumjian-Pathak coefficients
 */
export interface FaceReflection {
  te: Complex;
  tm: Complex;
}

/**
 * Geometry of one diffraction at a wedge, in edge-fixed coordinates (angles in radians).
 * @example const g: WedgeDiffractionGeometry = { n: 2, phiPrimeRad: Math.PI / 4, phiRad: 3 * Math.PI / 2, beta0Rad: Math.PI / 2, distanceParameterM: 10 }; // a half-plane, receiver in the shadow
 */
export interface WedgeDiffractionGeometry {
  /** Exterior wedge angle over pi, 0 < n <= 2 (2: a half-plane; 1.5: a right-angled corner). */
  n: number;
  /** Angle of the source from face 0, 0..n pi. */
  phiPrimeRad: number;
  /** Angle of the observer from face 0, 0..n pi. */
  phiRad: number;
  /** Angle between the incident ray and the edge, 0..pi (pi / 2 at normal incidence). */
  beta0Rad: number;
  /** L = s s' sin^2(beta0) / (s + s') for a point source, s sin^2(beta0) for a plane wave, metres. */
  distanceParameterM: number;
}

/**
 * The soft (Ds) and hard (Dh) diffraction coefficients, complex, in sqrt(metres).
 * @example const d: DiffractionCoefficients = { soft: [-0.01, 0.01], hard: [0.02, -0.01] };
 */
export interface DiffractionCoefficients {
  soft: Complex;
  hard: Complex;
  /** The side (+1 lit, -1 shadow) of the four boundaries, in the order of the module comment's terms (see `sides` of utdWedgeCoefficients). */
  sides?: [number, number, number, number];
}

const HALF_PI = Math.PI / 2;
const EPS = 1e-16;
const MAX_ITERATIONS = 300;
const SERIES_LIMIT = 1.5;

/**
 * The complementary Fresnel integrals (1/2 - C(x), 1/2 - S(x)) for x >= 0, with
 * C(x) = int_0^x cos(pi t^2 / 2) dt and S(x) = int_0^x sin(pi t^2 / 2) dt (A&S 7.3.1, 7.3.2):
 * the power series for x <= 1.5, else the continued fraction of the complementary error
 * function (Lentz's method, as in Numerical Recipes), which gives the complement directly and
 * keeps its relative accuracy for large x. Accuracy about 1e-15 absolute.
 * @example fresnelComplement(5) // [-0.0636312, 0.000808618]: C(5) = 0.5636312, S(5) = 0.4991914
 */
export function fresnelComplement(x: number): Complex {
  if (!(x >= 0) || !Number.isFinite(x)) throw new RangeError(`fresnelComplement(): x must be a finite number >= 0, got ${x}`);
  if (x <= SERIES_LIMIT) {
    const [c, s] = fresnelSeries(x);
    return [0.5 - c, 0.5 - s];
  }
  // h = continued fraction 1 / (b1 + a1 / (b2 + ...)) with b = 1 - j pi x^2, then
  // 1/2 - C + j (1/2 - S) = (1 + j) / 2 * exp(j pi x^2 / 2) * (x - j x) * h.
  const pix2 = Math.PI * x * x;
  let bRe = 1;
  const bIm = -pix2;
  let cRe = 1e300,
    cIm = 0;
  let den = bRe * bRe + bIm * bIm;
  let dRe = bRe / den,
    dIm = -bIm / den;
  let hRe = dRe,
    hIm = dIm;
  let n = -1;
  for (let k = 2; k <= MAX_ITERATIONS; k++) {
    n += 2;
    const a = -n * (n + 1);
    bRe += 4;
    // d = 1 / (a d + b)
    const tRe = a * dRe + bRe,
      tIm = a * dIm + bIm;
    den = tRe * tRe + tIm * tIm;
    dRe = tRe / den;
    dIm = -tIm / den;
    // c = b + a / c
    den = cRe * cRe + cIm * cIm;
    cRe = bRe + (a * cRe) / den;
    cIm = bIm - (a * cIm) / den;
    const delRe = cRe * dRe - cIm * dIm,
      delIm = cRe * dIm + cIm * dRe;
    const nhRe = hRe * delRe - hIm * delIm;
    hIm = hRe * delIm + hIm * delRe;
    hRe = nhRe;
    if (Math.abs(delRe - 1) + Math.abs(delIm) < EPS) break;
  }
  // (x - j x) h
  const gRe = x * (hRe + hIm),
    gIm = x * (hIm - hRe);
  const ph = pix2 / 2,
    ce = Math.cos(ph),
    se = Math.sin(ph);
  const eRe = ce * gRe - se * gIm,
    eIm = ce * gIm + se * gRe;
  return [0.5 * (eRe - eIm), 0.5 * (eRe + eIm)];
}

/**
 * Fresnel integrals C(x) and S(x) (A&S 7.3.1, 7.3.2), odd in x.
 * @example fresnelIntegrals(1) // [0.7798934, 0.4382591] (A&S Table 7.7)
 */
export function fresnelIntegrals(x: number): Complex {
  if (!Number.isFinite(x)) throw new RangeError(`fresnelIntegrals(): x must be finite, got ${x}`);
  const a = Math.abs(x);
  let c: number, s: number;
  if (a <= SERIES_LIMIT) [c, s] = fresnelSeries(a);
  else {
    const g = fresnelComplement(a);
    c = 0.5 - g[0];
    s = 0.5 - g[1];
  }
  return x < 0 ? [-c, -s] : [c, s];
}

/** Power series of C and S for 0 <= x <= 1.5 (A&S 7.3.11, 7.3.13). */
function fresnelSeries(x: number): Complex {
  if (x < 1e-150) return [x, 0];
  const fact = HALF_PI * x * x;
  let sumC = x,
    sumS = 0,
    term = x,
    sign = 1,
    odd = true,
    n = 3,
    sum = 0;
  for (let k = 1; k <= MAX_ITERATIONS; k++) {
    term *= fact / k;
    sum += (sign * term) / n;
    const test = Math.abs(sum) * EPS;
    if (odd) {
      sign = -sign;
      sumS = sum;
      sum = sumC;
    } else {
      sumC = sum;
      sum = sumS;
    }
    if (term < test) break;
    odd = !odd;
    n += 2;
  }
  return [sumC, sumS];
}

/**
 * The UTD transition function F(X) = 2 j sqrt(X) exp(j X) int_sqrt(X)^inf exp(-j t^2) dt,
 * X >= 0 (Kouyoumjian and Pathak 1974). F(0) = 0 and F tends to 1 as X grows.
 * @example utdTransition(1) // [0.8095, 0.2322]: |F(1)| = 0.8422, arg 16.0 degrees
 */
export function utdTransition(X: number): Complex {
  if (!(X >= 0) || !Number.isFinite(X)) throw new RangeError(`utdTransition(): X must be a finite number >= 0, got ${X}`);
  if (X === 0) return [0, 0];
  // int_sqrt(X)^inf exp(-j t^2) dt = sqrt(pi / 2) [(1/2 - C(u)) - j (1/2 - S(u))], u = sqrt(2 X / pi)
  const g = fresnelComplement(Math.sqrt((2 * X) / Math.PI));
  const m = 2 * Math.sqrt(X) * Math.sqrt(HALF_PI);
  // 2 j sqrt(X) sqrt(pi/2) * exp(jX) * (g0 - j g1)
  const iRe = m * g[1],
    iIm = m * g[0]; // j m (g0 - j g1) = m g1 + j m g0
  const c = Math.cos(X),
    s = Math.sin(X);
  return [iRe * c - iIm * s, iRe * s + iIm * c];
}

const SQRT_HALF = Math.SQRT1_2;

/**
 * cot((pi + sign beta) / 2n) F(k L a^sign(beta)), sign +1 or -1, with its limit at the boundary.
 * Writes [re, im] into out[0..1].
 */
function utdTerm(out: Float64Array, sign: number, beta: number, n: number, kL: number, reflectionBoundary: boolean, locked: number): number {
  const theta = (Math.PI + sign * beta) / (2 * n);
  const m = Math.round(theta / Math.PI);
  const eps = 2 * n * (theta - m * Math.PI); // the angular distance to the boundary
  // On the boundary itself the side must agree with the tracer's geometric-optics test: a
  // direct ray grazing an edge counts as blocked (shadow side, -1), a reflection point on the
  // edge (within the 1e-9 m tolerance of the image method) counts as inside its wall (lit, +1).
  const side = reflectionBoundary ? (eps > -1e-10 ? 1 : -1) : eps > 0 ? 1 : -1;
  if (Math.abs(eps) < 1e-7) {
    // n [sqrt(2 pi k L) sgn(eps) - 2 k L eps e^{j pi/4}] e^{j pi/4}
    const sg = locked !== 0 ? locked : side;
    const a = Math.sqrt(2 * Math.PI * kL) * sg;
    const b = 2 * kL * eps;
    // (a - b (c + j c)) (c + j c), c = 1/sqrt 2: = a c (1 + j) - b j
    out[0] = n * a * SQRT_HALF;
    out[1] = n * (a * SQRT_HALF - b);
    return side;
  }
  const N = Math.round((beta + sign * Math.PI) / (2 * Math.PI * n));
  const cs = Math.cos((2 * Math.PI * n * N - beta) / 2);
  const X = kL * 2 * cs * cs;
  const F = utdTransition(X);
  const cot = 1 / Math.tan(theta);
  out[0] = cot * F[0];
  out[1] = cot * F[1];
  if (locked !== 0 && locked !== side) {
    // continued from the other side: sqrt(X) changes sign with eps, F -> F - 2 sqrt(pi X) e^{j (X + pi/4)}
    const c = 2 * Math.sqrt(Math.PI * X) * cot,
      ph = X + Math.PI / 4;
    out[0] -= c * Math.cos(ph);
    out[1] -= c * Math.sin(ph);
  }
  return side;
}

const t1 = new Float64Array(2),
  t2 = new Float64Array(2),
  t3 = new Float64Array(2),
  t4 = new Float64Array(2);
const PEC_FACE: FaceReflection = { te: [-1, 0], tm: [1, 0] };

/**
 * UTD wedge diffraction coefficients Ds and Dh (sqrt(m)) at wavenumber k (rad/m): Kouyoumjian-
 * Pathak for perfectly conducting faces (the default), Luebbers' heuristic when the faces'
 * reflection coefficients are given (see the module comment for the angles they are taken at).
 * `sides` (+1, -1 or 0 = as the geometry gives, per boundary term) holds terms on a side; the
 * result's `sides` are the sides the geometry gives.
 * @example
 * // A half-plane (n = 2) at normal incidence far from the boundaries matches Keller's GTD
 * // coefficient -exp(-j pi/4) / (2 sqrt(2 pi k)) [sec((phi - phi')/2) -+ sec((phi + phi')/2)]:
 * utdWedgeCoefficients(2 * Math.PI, { n: 2, phiPrimeRad: Math.PI / 3, phiRad: 3 * Math.PI / 2, beta0Rad: Math.PI / 2, distanceParameterM: 1e4 }).soft // [0.15917, -0.15914] (GTD: [0.15915, -0.15915])
 */
export function utdWedgeCoefficients(
  k: number,
  g: WedgeDiffractionGeometry,
  face0: FaceReflection = PEC_FACE,
  faceN: FaceReflection = PEC_FACE,
  sides?: readonly number[],
): DiffractionCoefficients & { sides: [number, number, number, number] } {
  const { n, phiPrimeRad: pp, phiRad: p, beta0Rad: b0, distanceParameterM: L } = g;
  if (!(k > 0) || !Number.isFinite(k)) throw new RangeError(`utdWedgeCoefficients(): k must be a finite number > 0, got ${k}`);
  if (!(n > 0 && n <= 2)) throw new RangeError(`utdWedgeCoefficients(): n must be in (0, 2], got ${n}`);
  const tol = 1e-9;
  if (!(pp >= -tol && pp <= n * Math.PI + tol))
    throw new RangeError(`utdWedgeCoefficients(): phiPrimeRad must be in [0, n pi] = [0, ${n * Math.PI}], got ${pp}`);
  if (!(p >= -tol && p <= n * Math.PI + tol)) throw new RangeError(`utdWedgeCoefficients(): phiRad must be in [0, n pi] = [0, ${n * Math.PI}], got ${p}`);
  if (!(b0 > 0 && b0 < Math.PI)) throw new RangeError(`utdWedgeCoefficients(): beta0Rad must be in (0, pi), got ${b0}`);
  if (!(L > 0) || !Number.isFinite(L)) throw new RangeError(`utdWedgeCoefficients(): distanceParameterM must be a finite number > 0, got ${L}`);
  const kL = k * L;
  const s1 = utdTerm(t1, +1, p - pp, n, kL, false, sides?.[0] ?? 0);
  const s2 = utdTerm(t2, -1, p - pp, n, kL, false, sides?.[1] ?? 0);
  const s3 = utdTerm(t3, -1, p + pp, n, kL, true, sides?.[2] ?? 0);
  const s4 = utdTerm(t4, +1, p + pp, n, kL, true, sides?.[3] ?? 0);
  // -exp(-j pi/4) / (2 n sqrt(2 pi k) sin b0)
  const scale = -1 / (2 * n * Math.sqrt(2 * Math.PI * k) * Math.sin(b0));
  const preRe = scale * SQRT_HALF,
    preIm = -scale * SQRT_HALF;
  const combine = (r0: Complex, rn: Complex): Complex => {
    const sRe = t1[0]! + t2[0]! + (r0[0] * t3[0]! - r0[1] * t3[1]!) + (rn[0] * t4[0]! - rn[1] * t4[1]!);
    const sIm = t1[1]! + t2[1]! + (r0[0] * t3[1]! + r0[1] * t3[0]!) + (rn[0] * t4[1]! + rn[1] * t4[0]!);
    return [preRe * sRe - preIm * sIm, preRe * sIm + preIm * sRe];
  };
  return { soft: combine(face0.te, faceN.te), hard: combine(face0.tm, faceN.tm), sides: [s1, s2, s3, s4] };
}
