/**
 * Runs the diagnostics of src/diagnose over one solved primitive and fills its report.
 */
import {
  compareStoredTangents,
  findDegenerateGeometry,
  findDegenerateGeometryAndBadNormals,
  findDegenerateUvTriangles,
  findUvOverlaps,
  isStoredTangentSetValid,
  isStoredTangentValid,
  locateTriangles,
  markInvalidVertices,
  vertexFindingFromMarks,
  vertexPositions,
} from '../diagnose/index.js';
import { findingFromMarks, type Finding } from '../diagnose/finding.js';
import { SLOT_DEGENERATE_UV, SLOT_STACKED, threadArena } from '../mesh/arena.js';
import { FLOAT_TANGENT_VALIDITY, UNIT_LENGTH_TOLERANCE, UV_DEGENERATE_RELATIVE, type TangentValidityTolerances } from '../mesh/tolerances.js';
import type { PrimitiveReport, TriangleFinding, VertexFindingReport } from '../report/types.js';

/** What the diagnostics read. Arrays are the primitive's decoded input, before any split. */
export interface DiagnoseInput {
  indices: Uint32Array;
  positions: Float32Array;
  normals: Float32Array | null;
  uvs: Float32Array;
  storedTangents: Float32Array | null;
  vertexCount: number;
  triangleCount: number;
  computedTangents: Float32Array;
  computedIndices: Uint32Array;
  /** Per corner of computedIndices, 1 where the solve defined no tangent (FrameResult.undefinedCorners). */
  computedUndefined: Uint8Array;
  sourceVertex: Uint32Array;
  uvEpsilon: number;
  toleranceDeg: number;
  /** Unit-length tolerance of the NORMAL accessor's encoding (unitLengthTolerance); default float. */
  normalUnitTolerance?: number;
  /** Validity tolerances of the TANGENT and NORMAL encodings (tangentValidityTolerances); default float. */
  tangentValidity?: TangentValidityTolerances;
  /** Half a step of the POSITION encoding (componentHalfStep); default 0 (float). */
  positionHalfStep?: number;
  /** Touching tolerance of the TEXCOORD encoding for UV overlaps (uvOverlapAbsolute); default float's. */
  uvTouching?: number;
  /**
   * Per-triangle marks to fill for pictures (1 flagged, 0 not; triangleCount entries each),
   * or null/absent when no picture is wanted. The optional ones are filled when given: a
   * triangle is marked for invalid values or bad normals when one of its corners' vertices is.
   */
  marks?: {
    degenerateUv: Uint8Array;
    overlap: Uint8Array;
    degenerateGeometry?: Uint8Array;
    invalidValues?: Uint8Array;
    badNormals?: Uint8Array;
    /** Triangles with a corner whose stored tangent is mismatched (triangle order of computedIndices). */
    tangentMismatch?: Uint8Array;
  } | null;
  /** OBJ: per triangle, the source line of its face (PrimitiveData.faceLines); null or absent for glTF. */
  faceLines?: Uint32Array | null;
  /**
   * The vertex number the report gives each vertex (the accessor element it was read from,
   * PrimitiveData.compactedFrom); null or absent: vertices are numbered as given.
   */
  vertexNumbers?: Uint32Array | null;
}

/** Sets out[t] = 1 for each triangle with a corner whose vertex is marked in vertexMarks, else 0. */
function trianglesOfVertices(out: Uint8Array, indices: Uint32Array, vertexMarks: Uint8Array, triangleCount: number): void {
  for (let t = 0; t < triangleCount; t++) {
    out[t] = vertexMarks[indices[t * 3]] | vertexMarks[indices[t * 3 + 1]] | vertexMarks[indices[t * 3 + 2]];
  }
}

/** Verdicts the caller acts on. */
export interface DiagnoseVerdict {
  /** Every stored tangent is finite, unit, orthogonal to its normal, with w = +1 | -1. */
  storedTangentsValid: boolean;
}

/**
 * Fills the finding fields of `report` (degenerate UV and geometry, invalid values, bad
 * normals, partial UV overlap, stored-vs-recomputed tangents) and the stacked-shell note from
 * `input`, judging unit length and orthogonality with the tolerances of the attributes' encodings. Returns the verdicts.
 * Precondition: computedTangents / computedIndices come from solving this same primitive and
 * sourceVertex maps each output vertex to an input vertex.
 */
export function diagnosePrimitive(report: PrimitiveReport, input: DiagnoseInput): DiagnoseVerdict {
  const { indices, positions, normals, uvs, storedTangents, vertexCount, triangleCount } = input;
  const marks = input.marks ?? null;
  const lines = input.faceLines ?? null;
  // Where each listed triangle and vertex lies (object-space centroids and positions, OBJ lines).
  const located = (f: Finding): TriangleFinding => ({ ...f, ...locateTriangles(f.triangles, indices, positions, lines) });
  const vertexFinding = (vertexMarks: Uint8Array): VertexFindingReport => {
    const f = vertexFindingFromMarks(vertexMarks, vertexCount, indices, triangleCount);
    const where = locateTriangles(f.triangles, indices, positions, lines);
    const numbers = input.vertexNumbers ?? null;
    const listed = numbers ? f.vertices.map((v) => numbers[v]) : f.vertices;
    return { count: f.count, vertices: listed, positions: vertexPositions(f.vertices, positions), triangleCount: f.triangleCount, triangles: f.triangles, ...where };
  };
  const unitTolerance = input.normalUnitTolerance ?? UNIT_LENGTH_TOLERANCE;
  const validity = input.tangentValidity ?? FLOAT_TANGENT_VALIDITY;
  const badNormal = new Uint8Array(vertexCount);
  // With normals, degenerate geometry and bad normals come from one pass over the triangles.
  const degenerateGeometry = normals
    ? findDegenerateGeometryAndBadNormals(
      indices, positions, normals, triangleCount, vertexCount, unitTolerance, input.positionHalfStep ?? 0, marks?.degenerateGeometry ?? null, badNormal,
    ).degenerate
    : findDegenerateGeometry(indices, positions, triangleCount, undefined, marks?.degenerateGeometry ?? null);
  const invalid = new Uint8Array(vertexCount);
  markInvalidVertices(invalid, vertexCount, positions, normals, uvs, storedTangents);
  // The UV-overlap check finds the triangles without UV area as it goes: with the default
  // epsilon those are the degenerate-UV triangles, so that pass is not made twice.
  const uvTestShared = input.uvEpsilon === UV_DEGENERATE_RELATIVE;
  const degenerateUv = uvTestShared ? (marks ? marks.degenerateUv : threadArena().u8(SLOT_DEGENERATE_UV, triangleCount)) : null;
  const stacked = threadArena().u8(SLOT_STACKED, triangleCount);
  const uvOverlap = findUvOverlaps(indices, uvs, triangleCount, marks ? marks.overlap : null, null, { stacked, touching: input.uvTouching, degenerate: degenerateUv });
  // The report's fields in their usual order.
  report.degenerateUv = located(degenerateUv
    ? findingFromMarks(degenerateUv, triangleCount)
    : findDegenerateUvTriangles(indices, uvs, triangleCount, input.uvEpsilon, marks ? marks.degenerateUv : null));
  report.degenerateGeometry = located(degenerateGeometry);
  report.invalidValues = vertexFinding(invalid);
  if (marks?.invalidValues) trianglesOfVertices(marks.invalidValues, indices, invalid, triangleCount);
  report.badNormals = vertexFinding(badNormal);
  if (marks?.badNormals) trianglesOfVertices(marks.badNormals, indices, badNormal, triangleCount);
  report.uvOverlap = located(uvOverlap);
  report.stackedShells = findingFromMarks(stacked, triangleCount);
  let valid = false;
  if (marks?.tangentMismatch) marks.tangentMismatch.fill(0, 0, triangleCount);
  if (storedTangents) {
    const corners = new Uint8Array(input.computedIndices.length);
    const c = compareStoredTangents(
      storedTangents, input.computedTangents, input.sourceVertex, input.computedIndices, input.computedUndefined, normals,
      vertexCount, input.toleranceDeg, validity, corners,
    );
    // Corner c of the solve's triangle list belongs to triangle floor(c / 3), the same triangle
    // of the input list (the solve keeps the triangle order).
    const mismatchedTriangles = new Uint8Array(triangleCount);
    for (let k = 0; k < corners.length; k++) if (corners[k]) mismatchedTriangles[(k / 3) | 0] = 1;
    const invalidTangent = new Uint8Array(vertexCount);
    for (let v = 0; v < vertexCount; v++) if (!isStoredTangentValid(storedTangents, normals, v, validity)) invalidTangent[v] = 1;
    if (marks?.tangentMismatch) marks.tangentMismatch.set(mismatchedTriangles.subarray(0, triangleCount));
    report.storedTangents = {
      invalid: c.invalid,
      undefinedFrames: c.undefinedFrames,
      meanAngleDeg: c.meanAngleDeg,
      p95AngleDeg: c.p95AngleDeg,
      maxAngleDeg: c.maxAngleDeg,
      signMismatch: c.signMismatch,
      compared: c.compared,
      mismatched: c.mismatched,
      mismatchedTriangles: located(findingFromMarks(mismatchedTriangles, triangleCount)),
      invalidVertices: vertexFinding(invalidTangent),
    };
    valid = isStoredTangentSetValid(storedTangents, normals, vertexCount, validity);
  }
  return { storedTangentsValid: valid };
}
