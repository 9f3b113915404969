/**
 * Based on: E. Lengyel, "Computing Tangent Space Basis Vectors for an Arbitrary Mesh" (2001):
 * per-triangle UV-delta solve, per-vertex accumulation, Gram-Schmidt against the vertex normal,
 * handedness from the accumulated bitangent.
 */
import type { TangentWeight } from '../mesh/types.js';
import { UV_DEGENERATE_RELATIVE, ZERO_LENGTH } from '../mesh/tolerances.js';
import { SLOT_LENGYEL_SUMS, threadArena } from '../mesh/arena.js';
import { writeFallbackTangent } from './fallback.js';
import { indexOutOfRange } from '../mesh/errors.js';

/** Counts a `lengyel` solve reports. */
export interface LengyelStats {
  degenerateUvTriangles: number;
  mirroredTriangles: number;
  fallbackTangents: number;
}

/**
 * Computes one tangent per input vertex with Lengyel's method.
 * `out` receives 4 floats per vertex (xyz unit, w = +1 | -1). `vSign` is +1 when v grows
 * upward (bottom-left origin) and -1 for glTF's top-left origin (every dv is negated, which
 * keeps t and flips w). `weight` selects how triangle tangents are summed: `derivative` adds
 * the unnormalised solutions; `angle`, `area` and `uniform` normalise them first and weight
 * by corner angle, triangle area or 1. Triangles with a degenerate UV determinant contribute
 * nothing; a vertex left without a direction gets the documented fallback and a 1 in
 * `undefinedVertex` (0 elsewhere).
 * Throws a TanframeError ('invalid-argument') before using an index >= vertexCount.
 * Preconditions: indices hold 3 * triangleCount entries; out.length >= 4 * vertexCount;
 * undefinedVertex.length >= vertexCount.
 */
export function computeLengyelTangents(
  out: Float32Array,
  undefinedVertex: Uint8Array,
  indices: Uint32Array,
  positions: Float32Array,
  normals: Float32Array,
  uvs: Float32Array,
  vSign: number,
  weight: TangentWeight,
  triangleCount: number,
  vertexCount: number,
): LengyelStats {
  const tan = threadArena().f64(SLOT_LENGYEL_SUMS, vertexCount * 6, 0); // T xyz, B xyz per vertex
  const useDerivative = weight === 'derivative';
  const useAngle = weight === 'angle';
  const useArea = weight === 'area';
  let degenerate = 0, mirrored = 0, fallback = 0;
  for (let t = 0; t < triangleCount; t++) {
    const i0 = indices[t * 3], i1 = indices[t * 3 + 1], i2 = indices[t * 3 + 2];
    if (!(i0 < vertexCount && i1 < vertexCount && i2 < vertexCount)) throw indexOutOfRange();
    const x0 = positions[i0 * 3], y0 = positions[i0 * 3 + 1], z0 = positions[i0 * 3 + 2];
    const e1x = positions[i1 * 3] - x0, e1y = positions[i1 * 3 + 1] - y0, e1z = positions[i1 * 3 + 2] - z0;
    const e2x = positions[i2 * 3] - x0, e2y = positions[i2 * 3 + 1] - y0, e2z = positions[i2 * 3 + 2] - z0;
    const u0 = uvs[i0 * 2], v0 = uvs[i0 * 2 + 1];
    const du1 = uvs[i1 * 2] - u0, dv1 = vSign * (uvs[i1 * 2 + 1] - v0);
    const du2 = uvs[i2 * 2] - u0, dv2 = vSign * (uvs[i2 * 2 + 1] - v0);
    const det = du1 * dv2 - du2 * dv1;
    const scale = du1 * du1 + dv1 * dv1 + du2 * du2 + dv2 * dv2;
    if (!(Math.abs(det) > UV_DEGENERATE_RELATIVE * scale)) {
      degenerate++;
      continue;
    }
    if (det < 0) mirrored++;
    const r = 1 / det;
    let tx = (dv2 * e1x - dv1 * e2x) * r, ty = (dv2 * e1y - dv1 * e2y) * r, tz = (dv2 * e1z - dv1 * e2z) * r;
    let bx = (du1 * e2x - du2 * e1x) * r, by = (du1 * e2y - du2 * e1y) * r, bz = (du1 * e2z - du2 * e1z) * r;
    if (!useDerivative) {
      const tl = Math.sqrt(tx * tx + ty * ty + tz * tz), bl = Math.sqrt(bx * bx + by * by + bz * bz);
      if (tl > ZERO_LENGTH) { tx /= tl; ty /= tl; tz /= tl; }
      if (bl > ZERO_LENGTH) { bx /= bl; by /= bl; bz /= bl; }
    }
    if (useDerivative || weight === 'uniform') {
      accumulate(tan, i0, tx, ty, tz, bx, by, bz, 1);
      accumulate(tan, i1, tx, ty, tz, bx, by, bz, 1);
      accumulate(tan, i2, tx, ty, tz, bx, by, bz, 1);
    } else if (useArea) {
      const cx = e1y * e2z - e1z * e2y, cy = e1z * e2x - e1x * e2z, cz = e1x * e2y - e1y * e2x;
      const area = 0.5 * Math.sqrt(cx * cx + cy * cy + cz * cz);
      accumulate(tan, i0, tx, ty, tz, bx, by, bz, area);
      accumulate(tan, i1, tx, ty, tz, bx, by, bz, area);
      accumulate(tan, i2, tx, ty, tz, bx, by, bz, area);
    } else if (useAngle) {
      const e3x = e2x - e1x, e3y = e2y - e1y, e3z = e2z - e1z;
      const l1 = Math.sqrt(e1x * e1x + e1y * e1y + e1z * e1z);
      const l2 = Math.sqrt(e2x * e2x + e2y * e2y + e2z * e2z);
      const l3 = Math.sqrt(e3x * e3x + e3y * e3y + e3z * e3z);
      const a0 = cornerAngle(e1x * e2x + e1y * e2y + e1z * e2z, l1 * l2);
      const a1 = cornerAngle(-(e1x * e3x + e1y * e3y + e1z * e3z), l1 * l3);
      const a2 = Math.max(0, Math.PI - a0 - a1);
      accumulate(tan, i0, tx, ty, tz, bx, by, bz, a0);
      accumulate(tan, i1, tx, ty, tz, bx, by, bz, a1);
      accumulate(tan, i2, tx, ty, tz, bx, by, bz, a2);
    }
  }
  for (let v = 0; v < vertexCount; v++) {
    const nx = normals[v * 3], ny = normals[v * 3 + 1], nz = normals[v * 3 + 2];
    const Tx = tan[v * 6], Ty = tan[v * 6 + 1], Tz = tan[v * 6 + 2];
    const d = nx * Tx + ny * Ty + nz * Tz;
    let tx = Tx - nx * d, ty = Ty - ny * d, tz = Tz - nz * d;
    const tl = Math.sqrt(tx * tx + ty * ty + tz * tz);
    if (!(tl > ZERO_LENGTH)) {
      writeFallbackTangent(out, v * 4, nx, ny, nz);
      undefinedVertex[v] = 1;
      fallback++;
      continue;
    }
    undefinedVertex[v] = 0;
    tx /= tl; ty /= tl; tz /= tl;
    // w = sign(dot(cross(N, t), B)); cross(N, t) is parallel to cross(N, T).
    const cx = ny * tz - nz * ty, cy = nz * tx - nx * tz, cz = nx * ty - ny * tx;
    const h = cx * tan[v * 6 + 3] + cy * tan[v * 6 + 4] + cz * tan[v * 6 + 5];
    out[v * 4] = tx; out[v * 4 + 1] = ty; out[v * 4 + 2] = tz; out[v * 4 + 3] = h < 0 ? -1 : 1;
  }
  return { degenerateUvTriangles: degenerate, mirroredTriangles: mirrored, fallbackTangents: fallback };
}

function accumulate(
  tan: Float64Array, v: number,
  tx: number, ty: number, tz: number, bx: number, by: number, bz: number, w: number,
): void {
  const o = v * 6;
  tan[o] += tx * w; tan[o + 1] += ty * w; tan[o + 2] += tz * w;
  tan[o + 3] += bx * w; tan[o + 4] += by * w; tan[o + 5] += bz * w;
}

function cornerAngle(dot: number, lengths: number): number {
  if (!(lengths > 0)) return 0;
  let c = dot / lengths;
  if (c > 1) c = 1; else if (c < -1) c = -1;
  return Math.acos(c);
}
