/**
 * Based on: the report schema in DESIGN.md ("{count, triangles: [first 1000 indices]}").
 * The shape every triangle-list diagnostic returns, and the cap on listed indices.
 */

/** How many triangle indices a finding lists at most (DESIGN.md report schema: the first 1000). */
export const MAX_LISTED = 1000;

/**
 * A triangle-list finding: `count` flagged triangles in all, `triangles` the first
 * MAX_LISTED of their indices (positions in the triangle list), ascending.
 */
export interface Finding {
  count: number;
  triangles: number[];
}

/**
 * Builds a finding from per-triangle marks: counts the non-zero entries of
 * marks[0 .. triangleCount) and lists the first MAX_LISTED of their indices, ascending.
 * Preconditions: marks.length >= triangleCount.
 */
export function findingFromMarks(marks: Uint8Array, triangleCount: number): Finding {
  const triangles: number[] = [];
  let count = 0;
  for (let t = 0; t < triangleCount; t++) {
    if (marks[t] === 0) continue;
    if (count < MAX_LISTED) triangles.push(t);
    count++;
  }
  return { count, triangles };
}

/**
 * Bits naming the kinds of finding a triangle can carry, for per-triangle marks that pictures
 * colour (one bit per kind, OR-ed together).
 */
export const FINDING_DEGENERATE_UV = 1;
export const FINDING_DEGENERATE_GEOMETRY = 2;
export const FINDING_INVALID_VALUES = 4;
export const FINDING_BAD_NORMALS = 8;
export const FINDING_UV_OVERLAP = 16;
export const FINDING_TANGENT_MISMATCH = 32;
