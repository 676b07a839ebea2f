/**
 * Pulse shapes usable in `coef` expressions. All take the time first and
 * return a real number; widths and times are in the case's time unit.
 *
 * @module
 */

/** Gaussian envelope exp(−(t−center)²/(2·width²)); width is the standard deviation. */
export function gauss(t: number, center: number, width: number): number {
  const u = (t - center) / width;
  return Math.exp(-0.5 * u * u);
}

/** Sine-squared window: sin²(π(t−start)/(stop−start)) on [start, stop], 0 outside. */
export function sinsq(t: number, start: number, stop: number): number {
  if (t < start || t > stop) return 0;
  const s = Math.sin(Math.PI * (t - start) / (stop - start));
  return s * s;
}

/**
 * Flat top with sine-squared ramps: rises over [start, start+ramp], holds 1,
 * falls over [stop−ramp, stop], and is 0 outside [start, stop].
 */
export function flattop(
  t: number,
  start: number,
  stop: number,
  ramp: number,
): number {
  if (t < start || t > stop) return 0;
  if (ramp <= 0) return 1;
  const rise = Math.min(1, (t - start) / ramp),
    fall = Math.min(1, (stop - t) / ramp);
  const s = Math.sin(0.5 * Math.PI * Math.min(rise, fall));
  return s * s;
}

/** Linear chirp cos(w0·t + rate·t²/2): instantaneous angular frequency w0 + rate·t. */
export function chirp(t: number, w0: number, rate: number): number {
  return Math.cos(w0 * t + 0.5 * rate * t * t);
}

/** Step: 1 for t ≥ at, 0 before. */
export function step(t: number, at: number): number {
  return t >= at ? 1 : 0;
}

/** Rectangular window: 1 on [start, stop), 0 elsewhere. */
export function box(t: number, start: number, stop: number): number {
  return t >= start && t < stop ? 1 : 0;
}

/** The pulse library by name, with each shape's parameter names (after t). */
export const PULSES: Record<
  string,
  { fn: (...args: number[]) => number; params: string[] }
> = {
  gauss: {
    fn: gauss as (...a: number[]) => number,
    params: ["center", "width"],
  },
  sinsq: { fn: sinsq as (...a: number[]) => number, params: ["start", "stop"] },
  flattop: {
    fn: flattop as (...a: number[]) => number,
    params: ["start", "stop", "ramp"],
  },
  chirp: { fn: chirp as (...a: number[]) => number, params: ["w0", "rate"] },
  step: { fn: step as (...a: number[]) => number, params: ["at"] },
  box: { fn: box as (...a: number[]) => number, params: ["start", "stop"] },
};
