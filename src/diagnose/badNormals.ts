/**
 * Based on: glTF 2.0 specification, section 3.7.2.1 (NORMAL: normalized XYZ vertex normals)
 * and section 3.7.4 (with a positive-determinant transform, front faces wind counterclockwise),
 * so the face normal from the winding is cross(p1 - p0, p2 - p0).
 */
import { assert } from '../mesh/errors.js';
import { GEOMETRY_DEGENERATE_RELATIVE, UNIT_LENGTH_TOLERANCE, ZERO_LENGTH } from '../mesh/tolerances.js';
import { MAX_LISTED, type Finding } from './finding.js';

/** What findBadNormals found, in vertices. */
export interface BadNormals {
  /** Vertices with at least one of the problems below (each vertex counts once). */
  count: number;
  /** Normals of length <= ZERO_LENGTH (no direction at all). */
  zero: number;
  /** Normals that are not zero but whose length differs from 1 by more than UNIT_LENGTH_TOLERANCE, or that are not finite. */
  nonUnit: number;
  /** Normals pointing away from the face (dot with the face normal < 0) on more than half of the corners that use them. */
  flipped: number;
}

/**
 * Finds the vertices whose stored normal is bad. Three kinds:
 * - zero: length <= ZERO_LENGTH;
 * - nonUnit: otherwise, | |n| - 1 | > UNIT_LENGTH_TOLERANCE, NaN and infinite normals included
 *   (they are counted by countInvalidVertices as well);
 * - flipped: a non-zero finite normal with dot(n, face normal) < 0 on MORE than half of the
 *   corners that use the vertex, the face normal being cross(p1 - p0, p2 - p0) of the triangle
 *   as wound. Corners of triangles whose face normal is zero or not finite (degenerate
 *   geometry) have no face direction and take no part in that vote; a vertex no triangle uses
 *   (or only degenerate ones) is never flipped. A dot of exactly 0 is not "away".
 * A non-unit normal can also be flipped (it is counted in both), `count` counts each vertex once.
 * `unitTolerance` is the unit-length tolerance for the normals' encoding (unitLengthTolerance
 * in src/mesh/tolerances.ts; default: float's UNIT_LENGTH_TOLERANCE). `positionHalfStep` is
 * the rounding of the positions' encoding (componentHalfStep; 0 for float): a triangle whose
 * face normal is within what that rounding can make of it takes no part in the flipped vote.
 * Returns the counts, in vertices. When `marks` is given (length >= vertexCount), marks[v] is
 * set to 1 for each bad vertex and 0 otherwise (pictures colour the triangles that use them).
 * Preconditions: indices hold 3 * triangleCount entries, each < vertexCount; positions and
 * normals hold 3 floats per vertex.
 */
export function findBadNormals(
  indices: Uint32Array,
  positions: Float32Array,
  normals: Float32Array,
  triangleCount: number,
  vertexCount: number,
  unitTolerance: number = UNIT_LENGTH_TOLERANCE,
  positionHalfStep = 0,
  marks: Uint8Array | null = null,
): BadNormals {
  // The one pass checks the same contract (and words it the same way).
  return findDegenerateGeometryAndBadNormals(indices, positions, normals, triangleCount, vertexCount, unitTolerance, positionHalfStep, null, marks).badNormals;
}

/** The per-vertex verdicts of findBadNormals from the flipped-vote balance (see findDegenerateGeometryAndBadNormals). */
function judgeNormals(balance: Int32Array, normals: Float32Array, vertexCount: number, unitTolerance: number, marks: Uint8Array | null): BadNormals {
  let count = 0, zero = 0, nonUnit = 0, flipped = 0;
  for (let v = 0; v < vertexCount; v++) {
    const nx = normals[v * 3], ny = normals[v * 3 + 1], nz = normals[v * 3 + 2];
    const len = Math.sqrt(nx * nx + ny * ny + nz * nz);
    if (marks) marks[v] = 0;
    if (len <= ZERO_LENGTH) {
      zero++;
      count++;
      if (marks) marks[v] = 1;
      continue;
    }
    let bad = false;
    if (!(Math.abs(len - 1) <= unitTolerance)) {
      nonUnit++;
      bad = true;
    }
    if (len - len === 0 && balance[v] > 0) {
      flipped++;
      bad = true;
    }
    if (bad) {
      count++;
      if (marks) marks[v] = 1;
    }
  }
  return { count, zero, nonUnit, flipped };
}

/** What findDegenerateGeometryAndBadNormals found. */
export interface GeometryFindings {
  degenerate: Finding;
  badNormals: BadNormals;
}

/**
 * findDegenerateGeometry (with its default epsilon, GEOMETRY_DEGENERATE_RELATIVE) and
 * findBadNormals in one pass over the triangles, which reads each triangle's corners once for
 * both: the same results, marks and preconditions as the two calls.
 */
export function findDegenerateGeometryAndBadNormals(
  indices: Uint32Array,
  positions: Float32Array,
  normals: Float32Array,
  triangleCount: number,
  vertexCount: number,
  unitTolerance: number = UNIT_LENGTH_TOLERANCE,
  positionHalfStep = 0,
  degenerateMarks: Uint8Array | null = null,
  badNormalMarks: Uint8Array | null = null,
): GeometryFindings {
  assert(!badNormalMarks || badNormalMarks.length >= vertexCount, 'marks must hold one entry per vertex');
  assert(!degenerateMarks || degenerateMarks.length >= triangleCount, 'marks must hold one entry per triangle');
  assert(indices.length >= triangleCount * 3, 'indices must hold 3 entries per triangle');
  assert(positions.length >= vertexCount * 3, 'positions must hold 3 floats per vertex');
  assert(normals.length >= vertexCount * 3, 'normals must hold 3 floats per vertex');
  const epsilon = GEOMETRY_DEGENERATE_RELATIVE;
  const balance = new Int32Array(vertexCount);
  const triangles: number[] = [];
  let count = 0;
  for (let t = 0; t < triangleCount; t++) {
    const i0 = indices[t * 3], i1 = indices[t * 3 + 1], i2 = indices[t * 3 + 2];
    const x0 = positions[i0 * 3], y0 = positions[i0 * 3 + 1], z0 = positions[i0 * 3 + 2];
    const e1x = positions[i1 * 3] - x0, e1y = positions[i1 * 3 + 1] - y0, e1z = positions[i1 * 3 + 2] - z0;
    const e2x = positions[i2 * 3] - x0, e2y = positions[i2 * 3 + 1] - y0, e2z = positions[i2 * 3 + 2] - z0;
    // Face normal (the cross product both checks use).
    const cx = e1y * e2z - e1z * e2y, cy = e1z * e2x - e1x * e2z, cz = e1x * e2y - e1y * e2x;
    const f2 = cx * cx + cy * cy + cz * cz;
    // The flipped vote: +1 per corner whose normal faces away from the face normal, -1 per
    // corner that does not (away * 2 > votes exactly when the balance ends positive). A zero,
    // NaN or infinite face normal has no direction to vote with; with quantized positions,
    // rounding each corner by up to sqrt(3) half steps moves the cross product by up to
    // 2 * sqrt(3) * h * (|e1| + |e2|) (first order), and a face normal shorter than that has no
    // reliable direction and does not vote.
    let votes = f2 > 0 && f2 !== Infinity;
    if (votes && positionHalfStep > 0) {
      const bound = 2 * Math.sqrt(3) * positionHalfStep * (Math.sqrt(e1x * e1x + e1y * e1y + e1z * e1z) + Math.sqrt(e2x * e2x + e2y * e2y + e2z * e2z));
      votes = !(f2 <= bound * bound);
    }
    if (votes) {
      const d0 = normals[i0 * 3] * cx + normals[i0 * 3 + 1] * cy + normals[i0 * 3 + 2] * cz;
      const d1 = normals[i1 * 3] * cx + normals[i1 * 3 + 1] * cy + normals[i1 * 3 + 2] * cz;
      const d2 = normals[i2 * 3] * cx + normals[i2 * 3 + 1] * cy + normals[i2 * 3 + 2] * cz;
      balance[i0] += d0 < 0 ? 1 : -1;
      balance[i1] += d1 < 0 ? 1 : -1;
      balance[i2] += d2 < 0 ? 1 : -1;
    }
    // The test of findDegenerateGeometry.
    let degenerate = i0 === i1 || i0 === i2 || i1 === i2;
    if (!degenerate) {
      const cross = Math.sqrt(f2);
      const scale = e1x * e1x + e1y * e1y + e1z * e1z + e2x * e2x + e2y * e2y + e2z * e2z;
      degenerate = !(cross > epsilon * scale);
    }
    if (degenerateMarks) degenerateMarks[t] = degenerate ? 1 : 0;
    if (!degenerate) continue;
    if (count < MAX_LISTED) triangles.push(t);
    count++;
  }
  return { degenerate: { count, triangles }, badNormals: judgeNormals(balance, normals, vertexCount, unitTolerance, badNormalMarks) };
}
