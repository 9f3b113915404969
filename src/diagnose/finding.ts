/**
 * Based on: the report schema in DESIGN.md ("{count, triangles: [first 1000 indices]}").
 * The shape every triangle-list diagnostic returns, the cap on listed indices, and where a
 * listed triangle or vertex lies (object-space centroids and positions, OBJ source lines).
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

/** Significant digits of an object-space location in the report (float32 holds about 7). */
export const LOCATION_DIGITS = 7;

/** (x, y, z) rounded to LOCATION_DIGITS significant digits, or null when one is NaN or infinite. */
function point(x: number, y: number, z: number): number[] | null {
  if (x - x !== 0 || y - y !== 0 || z - z !== 0) return null;
  // toPrecision is exact decimal rounding of the float64 value (ECMAScript Number.prototype.toPrecision); + 0 turns -0 into 0.
  return [Number(x.toPrecision(LOCATION_DIGITS)) + 0, Number(y.toPrecision(LOCATION_DIGITS)) + 0, Number(z.toPrecision(LOCATION_DIGITS)) + 0];
}

/**
 * The object-space centroid (mean of the three corner positions, as stored: before any node
 * transform) of each listed triangle, parallel to `triangles`; null for a triangle with a NaN
 * or infinite corner. Preconditions: each listed triangle t has 3 entries in `indices` from
 * 3t, each below positions.length / 3.
 */
export function triangleCentroids(triangles: readonly number[], indices: Uint32Array, positions: Float32Array): (number[] | null)[] {
  const out: (number[] | null)[] = [];
  for (const t of triangles) {
    const a = indices[t * 3] * 3, b = indices[t * 3 + 1] * 3, c = indices[t * 3 + 2] * 3;
    out.push(point(
      (positions[a] + positions[b] + positions[c]) / 3,
      (positions[a + 1] + positions[b + 1] + positions[c + 1]) / 3,
      (positions[a + 2] + positions[b + 2] + positions[c + 2]) / 3,
    ));
  }
  return out;
}

/** The object-space position of each listed vertex, parallel to `vertices`; null where not finite. */
export function vertexPositions(vertices: readonly number[], positions: Float32Array): (number[] | null)[] {
  const out: (number[] | null)[] = [];
  for (const v of vertices) out.push(point(positions[v * 3], positions[v * 3 + 1], positions[v * 3 + 2]));
  return out;
}

/** Where a listed triangle lies: centroids, and the source lines of their faces when known (OBJ). */
export interface TriangleLocations {
  centroids: (number[] | null)[];
  lines?: number[];
}

/**
 * The locations of `triangles`: their centroids and, with `faceLines` (per triangle, the
 * 1-based source line of its face; OBJ), their lines. Cost: linear in the listed triangles.
 */
export function locateTriangles(
  triangles: readonly number[], indices: Uint32Array, positions: Float32Array, faceLines: Uint32Array | null,
): TriangleLocations {
  const out: TriangleLocations = { centroids: triangleCentroids(triangles, indices, positions) };
  if (faceLines) out.lines = triangles.map((t) => faceLines[t]);
  return out;
}

/**
 * A per-vertex finding: `count` flagged vertices, the first MAX_LISTED of them (ascending),
 * and the triangles that use at least one of them (`triangleCount` in all, the first
 * MAX_LISTED listed, ascending).
 */
export interface VertexFinding {
  count: number;
  vertices: number[];
  triangleCount: number;
  triangles: number[];
}

/**
 * Builds a vertex finding from per-vertex marks (non-zero = flagged) over vertexCount vertices
 * and the triangle list. Preconditions: marks.length >= vertexCount; indices hold
 * 3 * triangleCount entries below vertexCount.
 */
export function vertexFindingFromMarks(marks: Uint8Array, vertexCount: number, indices: Uint32Array, triangleCount: number): VertexFinding {
  const vertices: number[] = [];
  let count = 0;
  for (let v = 0; v < vertexCount; v++) {
    if (marks[v] === 0) continue;
    if (count < MAX_LISTED) vertices.push(v);
    count++;
  }
  const triangles: number[] = [];
  let triangleHits = 0;
  if (count > 0) {
    for (let t = 0; t < triangleCount; t++) {
      if (marks[indices[t * 3]] === 0 && marks[indices[t * 3 + 1]] === 0 && marks[indices[t * 3 + 2]] === 0) continue;
      if (triangleHits < MAX_LISTED) triangles.push(t);
      triangleHits++;
    }
  }
  return { count, vertices, triangleCount: triangleHits, triangles };
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
