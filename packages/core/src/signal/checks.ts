/**
 * Argument checks shared by the signal modules (not exported from the package). Messages follow
 * the project's policy: `fnName(): what is wrong, got X`.
 */

/**
 * Complex interleaved samples, numpy complex64 or complex128 bytes.
 * @example const samples: ComplexArray = Float32Array.of(1, 0, 0, -1); // 1, then -j
 */
export type ComplexArray = Float32Array | Float64Array;

/** Throws unless `value` is an integer >= min. */
export function checkInteger(fn: string, name: string, value: number, min: number): void {
  if (!Number.isInteger(value) || value < min) throw new RangeError(`${fn}: ${name} must be an integer >= ${min}, got ${value}`);
}

/** Throws unless `value` is a finite number (the SNR, a frequency offset, ...). */
export function checkFinite(fn: string, name: string, value: number): void {
  if (typeof value !== 'number' || !Number.isFinite(value)) throw new RangeError(`${fn}: ${name} must be a finite number, got ${value}`);
}

/** Throws unless `value` is a finite number > 0. */
export function checkPositive(fn: string, name: string, value: number): void {
  if (typeof value !== 'number' || !Number.isFinite(value) || !(value > 0)) throw new RangeError(`${fn}: ${name} must be a finite number > 0, got ${value}`);
}

/** Throws unless `value` is a finite number >= 0. */
export function checkNonNegative(fn: string, name: string, value: number): void {
  if (typeof value !== 'number' || !Number.isFinite(value) || !(value >= 0)) throw new RangeError(`${fn}: ${name} must be a finite number >= 0, got ${value}`);
}

/** Throws unless `array` is a Float32Array or Float64Array. */
export function checkComplexArray(fn: string, name: string, array: unknown): asserts array is ComplexArray {
  if (!(array instanceof Float32Array || array instanceof Float64Array)) {
    const got = array === null ? 'null' : typeof array === 'object' ? (array as object).constructor.name : typeof array;
    throw new TypeError(`${fn}: ${name} must be a Float32Array or Float64Array (complex interleaved), got ${got}`);
  }
}

/**
 * Throws unless a [streams, samples] signal holds exactly 2 * streams * samples numbers; the
 * message says how many streams the array actually holds, the usual mistake.
 */
export function checkSignal(fn: string, name: string, x: unknown, streams: number, samples: number): asserts x is ComplexArray {
  checkComplexArray(fn, name, x);
  checkInteger(fn, 'samples', samples, 1);
  const expected = 2 * streams * samples;
  if (x.length !== expected) {
    const held = x.length / (2 * samples);
    throw new RangeError(
      `${fn}: ${name} must hold ${streams} streams of ${samples} samples (${expected} numbers, [streams, samples] complex interleaved), ` +
        `got ${x.length} numbers (${Number.isInteger(held) ? held : held.toFixed(3)} streams)`,
    );
  }
}

/** Throws unless `array` holds exactly `expected` numbers. */
export function checkLength(fn: string, name: string, array: unknown, expected: number, layout: string): asserts array is ComplexArray {
  checkComplexArray(fn, name, array);
  if (array.length !== expected) throw new RangeError(`${fn}: ${name} must hold ${expected} numbers (${layout}), got ${array.length}`);
}

/** A new array of the same element type as `like`. */
export function allocateLike(like: ComplexArray, length: number): ComplexArray {
  return like instanceof Float32Array ? new Float32Array(length) : new Float64Array(length);
}
