/**
 * Based on: our own choices for the pictures' colours (no published scale): the kinds of
 * finding of DESIGN.md `render` (degenerate UV, degenerate geometry, invalid values, bad
 * normals, partial UV overlap, tangent mismatch) and a heat scale for mismatch angles whose
 * zero is the same neutral grey as an unflagged surface.
 */
import {
  FINDING_BAD_NORMALS, FINDING_DEGENERATE_GEOMETRY, FINDING_DEGENERATE_UV, FINDING_INVALID_VALUES, FINDING_TANGENT_MISMATCH, FINDING_UV_OVERLAP,
} from '../diagnose/finding.js';

/**
 * The kinds of finding in the order a triangle with several takes its colour (first wins:
 * what breaks a file before what only looks wrong), with their legend labels.
 */
export const FINDING_KINDS: readonly { bit: number; label: string }[] = [
  { bit: FINDING_INVALID_VALUES, label: 'invalid values' },
  { bit: FINDING_DEGENERATE_GEOMETRY, label: 'degenerate geometry' },
  { bit: FINDING_BAD_NORMALS, label: 'bad normals' },
  { bit: FINDING_DEGENERATE_UV, label: 'degenerate UV' },
  { bit: FINDING_TANGENT_MISMATCH, label: 'tangent mismatch' },
  { bit: FINDING_UV_OVERLAP, label: 'partial UV overlap' },
];

/** sRGB colours (0..1) of each kind, by bit. */
const KIND_COLOURS: Record<number, [number, number, number]> = {
  [FINDING_INVALID_VALUES]: [0.85, 0.1, 0.75],
  [FINDING_DEGENERATE_GEOMETRY]: [0.9, 0.15, 0.1],
  [FINDING_BAD_NORMALS]: [0.1, 0.35, 0.95],
  [FINDING_DEGENERATE_UV]: [1.0, 0.6, 0.0],
  [FINDING_TANGENT_MISMATCH]: [0.0, 0.75, 0.75],
  [FINDING_UV_OVERLAP]: [0.55, 0.85, 0.1],
};

/** The sRGB colour (0..1) of a kind of finding (one bit of FINDING_KINDS). */
export function findingColour(bit: number): [number, number, number] {
  return KIND_COLOURS[bit] ?? [0, 0, 0];
}

/** The neutral surface grey (sRGB 0..1): unflagged triangles and a mismatch of 0 degrees. */
export const NEUTRAL_GREY = 0.72;

/** Heat-scale stops: angle in degrees, sRGB colour. Our own scale: grey, then yellow, orange, red, deep magenta. */
const HEAT: readonly [number, number, number, number][] = [
  [0, NEUTRAL_GREY, NEUTRAL_GREY, NEUTRAL_GREY],
  [0.5, 0.93, 0.88, 0.45],
  [2, 0.98, 0.62, 0.12],
  [5, 0.86, 0.2, 0.12],
  [10, 0.55, 0.0, 0.45],
];

/** Angles the mismatch legend names, in degrees (the last is "and more"). */
export const HEAT_LEGEND_DEG: readonly number[] = [0, 0.5, 2, 5, 10];

let HEAT_LINEAR: [number, number, number, number][] | null = null;

/** sRGB (0..1) -> linear, IEC 61966-2-1 (kept here so the palette stands alone). */
function toLinear(c: number): number {
  return c <= 0.04045 ? c / 12.92 : Math.pow((c + 0.055) / 1.055, 2.4);
}

/**
 * Writes the heat-scale colour of a mismatch angle in LINEAR light into out[0..2]: the stops of
 * mismatchColour linearised, interpolated in linear light between them (the stops themselves are
 * the same colours; table built on first use).
 */
export function mismatchColourLinear(out: Float64Array, angleDeg: number): void {
  let H = HEAT_LINEAR;
  if (!H) H = HEAT_LINEAR = HEAT.map((h) => [h[0], toLinear(h[1]), toLinear(h[2]), toLinear(h[3])]);
  interpolateStops(out, H, angleDeg);
}

/** Writes the heat-scale sRGB colour (0..1) of a mismatch angle in degrees into out[0..2]; beyond the last stop it stays at the top. */
export function mismatchColour(out: Float64Array, angleDeg: number): void {
  interpolateStops(out, HEAT, angleDeg);
}

/** Writes into out[0..2] the colour of `angleDeg` between the stops [angle, r, g, b] around it, held at the first and last stop. */
function interpolateStops(out: Float64Array, stops: readonly (readonly number[])[], angleDeg: number): void {
  let k = 1;
  while (k < stops.length - 1 && angleDeg > stops[k][0]) k++;
  const a = stops[k - 1], b = stops[k];
  let f = (angleDeg - a[0]) / (b[0] - a[0]);
  if (!(f > 0)) f = 0;
  if (f > 1) f = 1;
  out[0] = a[1] + (b[1] - a[1]) * f;
  out[1] = a[2] + (b[2] - a[2]) * f;
  out[2] = a[3] + (b[3] - a[3]) * f;
}
