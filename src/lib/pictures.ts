/**
 * Based on: the report schema in DESIGN.md (findings per primitive). Picks what a primitive's
 * UV picture draws from the per-triangle marks of the diagnostics.
 */
import { assert } from '../mesh/errors.js';
import type { PrimitiveReport } from '../report/types.js';
import {
  MAX_PICTURE_TRIANGLES,
  PICTURE_DEGENERATE_UV,
  PICTURE_MIRRORED,
  PICTURE_OVERLAP,
  type UvPicture,
} from '../report/uvPicture.js';

/**
 * Whether a diagnosed primitive gets a picture: it has at least one finding —
 * degenerate UV or geometry triangles, invalid values, bad normals, partial UV overlaps, or
 * stored tangents that are invalid or disagree. Notes alone (mirrored triangles, stacked
 * shells) get none; a picture that is drawn still tints its mirrored triangles.
 * A normal-mapped primitive without stored tangents is not a finding for pictures (nothing
 * to see in its UVs).
 */
export function hasFindings(p: PrimitiveReport): boolean {
  const s = p.storedTangents;
  return (
    p.degenerateUv.count > 0 || p.degenerateGeometry.count > 0 || p.invalidValues.count > 0 || p.badNormals.count > 0 ||
    p.uvOverlap.count > 0 || (s !== null && (s.invalid > 0 || s.mismatched > 0 || s.signMismatch > 0))
  );
}

/**
 * Builds the picture data of one primitive from per-triangle marks (1 = flagged, 0 = not;
 * each array holds triangleCount entries). Triangles with a NaN or infinite UV are counted in
 * `nonFinite` and not drawn. When more than `cap` triangles could be drawn, the flagged ones
 * come first (ascending), then an even sample of the others (ascending), `cap` in all.
 * Returns the picture with `input` empty (the caller names the file); its typed arrays are
 * fresh (each owns its ArrayBuffer, so they can be transferred between threads).
 * Preconditions: indices hold 3 * triangleCount entries, each < uvs.length / 2; cap >= 0.
 */
export function buildUvPicture(
  head: { mesh: number; meshName: string | null; primitive: number; uvSet: number },
  indices: Uint32Array,
  uvs: Float32Array,
  triangleCount: number,
  degenerate: Uint8Array,
  mirrored: Uint8Array,
  overlap: Uint8Array,
  cap: number = MAX_PICTURE_TRIANGLES,
): UvPicture {
  assert(indices.length >= triangleCount * 3, 'indices must hold 3 entries per triangle');
  assert(degenerate.length >= triangleCount && mirrored.length >= triangleCount && overlap.length >= triangleCount, 'marks must hold one entry per triangle');
  assert(cap >= 0, 'cap must be >= 0');
  // Per triangle: its flag bits, or 0xff when it cannot be drawn.
  const bits = new Uint8Array(triangleCount);
  let nDegenerate = 0, nMirrored = 0, nOverlap = 0, nonFinite = 0, flagged = 0, plain = 0;
  for (let t = 0; t < triangleCount; t++) {
    let b = 0;
    if (degenerate[t]) { b |= PICTURE_DEGENERATE_UV; nDegenerate++; }
    if (mirrored[t]) { b |= PICTURE_MIRRORED; nMirrored++; }
    if (overlap[t]) { b |= PICTURE_OVERLAP; nOverlap++; }
    let finite = true;
    for (let k = 0; k < 3; k++) {
      const v = indices[t * 3 + k];
      const u0 = uvs[v * 2], v0 = uvs[v * 2 + 1];
      if (u0 - u0 !== 0 || v0 - v0 !== 0) finite = false;
    }
    if (!finite) {
      nonFinite++;
      bits[t] = 0xff;
      continue;
    }
    bits[t] = b;
    if (b) flagged++;
    else plain++;
  }
  const takeFlagged = Math.min(flagged, cap);
  const takePlain = Math.min(plain, cap - takeFlagged);
  const drawn = takeFlagged + takePlain;
  const outUv = new Float32Array(drawn * 6);
  const outFlags = new Uint8Array(drawn);
  const outIndex = new Uint32Array(drawn);
  let o = 0;
  for (let t = 0; t < triangleCount && o < takeFlagged; t++) {
    if (bits[t] !== 0xff && bits[t] !== 0) copyTriangle(outUv, outFlags, outIndex, o++, t, indices, uvs, bits[t]);
  }
  // Plain triangles: the k-th (0-based) is taken when floor((k + 1) * takePlain / plain) steps up,
  // which takes exactly takePlain of them, evenly spread.
  let k = 0;
  for (let t = 0; t < triangleCount && takePlain > 0; t++) {
    if (bits[t] !== 0) continue;
    if (Math.floor(((k + 1) * takePlain) / plain) > Math.floor((k * takePlain) / plain)) {
      copyTriangle(outUv, outFlags, outIndex, o++, t, indices, uvs, 0);
    }
    k++;
  }
  return {
    input: '',
    mesh: head.mesh,
    meshName: head.meshName,
    primitive: head.primitive,
    uvSet: head.uvSet,
    triangles: triangleCount,
    uvs: outUv,
    flags: outFlags,
    index: outIndex,
    degenerateUv: nDegenerate,
    mirrored: nMirrored,
    overlap: nOverlap,
    nonFinite,
  };
}

/** Writes triangle t's three UVs, its flags and its index at drawn position o. */
function copyTriangle(
  outUv: Float32Array, outFlags: Uint8Array, outIndex: Uint32Array, o: number,
  t: number, indices: Uint32Array, uvs: Float32Array, flags: number,
): void {
  for (let k = 0; k < 3; k++) {
    const v = indices[t * 3 + k];
    outUv[o * 6 + k * 2] = uvs[v * 2];
    outUv[o * 6 + k * 2 + 1] = uvs[v * 2 + 1];
  }
  outFlags[o] = flags;
  outIndex[o] = t;
}
