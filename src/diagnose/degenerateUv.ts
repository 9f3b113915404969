/**
 * Based on: the per-triangle UV-delta solve (Lengyel 2001): a triangle whose UV determinant
 * (twice its signed UV area) is zero has no tangent direction. Same test as src/frames.
 */
import { assert } from '../mesh/errors.js';
import { UV_DEGENERATE_RELATIVE } from '../mesh/tolerances.js';
import { MAX_LISTED, type Finding } from './finding.js';

/**
 * Finds the triangles whose texture coordinates give no tangent direction.
 * With e1 = uv1 - uv0, e2 = uv2 - uv0 and det = e1.u * e2.v - e2.u * e1.v (twice the signed
 * UV area), a triangle is degenerate when
 *     |det| <= epsilon * (|e1|^2 + |e2|^2)
 * which is the definition src/frames uses (UV_DEGENERATE_RELATIVE, the default epsilon): it is
 * scale free (the ratio is about the sine of the smallest UV corner angle), so it catches
 * identical UVs (det = 0 and the right side 0), two coincident corners and colinear corners,
 * while a thin sliver that still has a direction passes. A triangle with a NaN or infinite UV
 * is degenerate too (the comparison is written so that NaN fails it). The orientation of v
 * does not matter (only |det| is used). Differences are taken in float64 from the stored
 * float32 values.
 * Returns the count and the first MAX_LISTED triangle indices, ascending. When `marks` is given
 * (length >= triangleCount) marks[t] is set to 1 for each degenerate triangle and 0 otherwise.
 * Preconditions: indices hold 3 * triangleCount entries, each < uvs.length / 2; epsilon >= 0.
 */
export function findDegenerateUvTriangles(
  indices: Uint32Array,
  uvs: Float32Array,
  triangleCount: number,
  epsilon: number = UV_DEGENERATE_RELATIVE,
  marks: Uint8Array | null = null,
): Finding {
  assert(indices.length >= triangleCount * 3, 'indices must hold 3 entries per triangle');
  assert(epsilon >= 0 && Number.isFinite(epsilon), 'epsilon must be a finite number >= 0');
  assert(!marks || marks.length >= triangleCount, 'marks must hold one entry per triangle');
  const triangles: number[] = [];
  let count = 0;
  for (let t = 0; t < triangleCount; t++) {
    const i0 = indices[t * 3], i1 = indices[t * 3 + 1], i2 = indices[t * 3 + 2];
    const u0 = uvs[i0 * 2], v0 = uvs[i0 * 2 + 1];
    const du1 = uvs[i1 * 2] - u0, dv1 = uvs[i1 * 2 + 1] - v0;
    const du2 = uvs[i2 * 2] - u0, dv2 = uvs[i2 * 2 + 1] - v0;
    const det = du1 * dv2 - du2 * dv1;
    const scale = du1 * du1 + dv1 * dv1 + du2 * du2 + dv2 * dv2;
    const degenerate = !(Math.abs(det) > epsilon * scale);
    if (marks) marks[t] = degenerate ? 1 : 0;
    if (!degenerate) continue;
    if (count < MAX_LISTED) triangles.push(t);
    count++;
  }
  return { count, triangles };
}
