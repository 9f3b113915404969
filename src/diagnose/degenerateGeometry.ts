/**
 * Based on: the triangle area as half the length of the cross product of two edges (vector
 * algebra); a triangle with repeated indices or (near) zero area has no face normal.
 */
import { assert } from '../mesh/errors.js';
import { GEOMETRY_DEGENERATE_RELATIVE } from '../mesh/tolerances.js';
import { MAX_LISTED, type Finding } from './finding.js';

/**
 * Finds the triangles with no usable area: two or three equal indices, or positions that are
 * coincident or colinear. With e1 = p1 - p0 and e2 = p2 - p0 (float64 differences of the
 * stored float32 values), a triangle is degenerate when
 *     |cross(e1, e2)| <= epsilon * (|e1|^2 + |e2|^2)
 * (scale free: about the sine of the smallest corner angle; default
 * GEOMETRY_DEGENERATE_RELATIVE). Positions that are exactly colinear as float32 values give
 * a cross product of exactly zero and are always caught; points that are colinear only
 * before rounding to float32 are caught when their rounding stays within epsilon. A triangle
 * with a NaN or infinite position counts as degenerate too (it has no usable area; the
 * vertex is also counted by countInvalidVertices).
 * Returns the count and the first MAX_LISTED triangle indices, ascending. When `marks` is given
 * (length >= triangleCount) marks[t] is set to 1 for each degenerate triangle and 0 otherwise.
 * Preconditions: indices hold 3 * triangleCount entries, each < positions.length / 3; epsilon >= 0.
 */
export function findDegenerateGeometry(
  indices: Uint32Array,
  positions: Float32Array,
  triangleCount: number,
  epsilon: number = GEOMETRY_DEGENERATE_RELATIVE,
  marks: Uint8Array | null = null,
): Finding {
  assert(indices.length >= triangleCount * 3, 'indices must hold 3 entries per triangle');
  assert(epsilon >= 0 && Number.isFinite(epsilon), 'epsilon must be a finite number >= 0');
  assert(!marks || marks.length >= triangleCount, 'marks must hold one entry per triangle');
  const triangles: number[] = [];
  let count = 0;
  for (let t = 0; t < triangleCount; t++) {
    const i0 = indices[t * 3], i1 = indices[t * 3 + 1], i2 = indices[t * 3 + 2];
    let degenerate = i0 === i1 || i0 === i2 || i1 === i2;
    if (!degenerate) {
      const x0 = positions[i0 * 3], y0 = positions[i0 * 3 + 1], z0 = positions[i0 * 3 + 2];
      const e1x = positions[i1 * 3] - x0, e1y = positions[i1 * 3 + 1] - y0, e1z = positions[i1 * 3 + 2] - z0;
      const e2x = positions[i2 * 3] - x0, e2y = positions[i2 * 3 + 1] - y0, e2z = positions[i2 * 3 + 2] - z0;
      const cx = e1y * e2z - e1z * e2y, cy = e1z * e2x - e1x * e2z, cz = e1x * e2y - e1y * e2x;
      const cross = Math.sqrt(cx * cx + cy * cy + cz * cz);
      const scale = e1x * e1x + e1y * e1y + e1z * e1z + e2x * e2x + e2y * e2y + e2z * e2z;
      degenerate = !(cross > epsilon * scale);
    }
    if (marks) marks[t] = degenerate ? 1 : 0;
    if (!degenerate) continue;
    if (count < MAX_LISTED) triangles.push(t);
    count++;
  }
  return { count, triangles };
}
