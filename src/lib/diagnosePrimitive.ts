/**
 * Runs the diagnostics of src/diagnose over one solved primitive and fills its report.
 */
import {
  compareStoredTangents,
  countInvalidVertices,
  markNonFiniteVertices,
  findBadNormals,
  findDegenerateGeometry,
  findDegenerateUvTriangles,
  findUvOverlaps,
  isStoredTangentSetValid,
} from '../diagnose/index.js';
import { findingFromMarks } from '../diagnose/finding.js';
import { SLOT_STACKED, threadArena } from '../mesh/arena.js';
import { FLOAT_TANGENT_VALIDITY, UNIT_LENGTH_TOLERANCE, type TangentValidityTolerances } from '../mesh/tolerances.js';
import type { PrimitiveReport } from '../report/types.js';

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
  report.degenerateUv = findDegenerateUvTriangles(indices, uvs, triangleCount, input.uvEpsilon, marks ? marks.degenerateUv : null);
  report.degenerateGeometry = findDegenerateGeometry(indices, positions, triangleCount, undefined, marks?.degenerateGeometry ?? null);
  report.invalidValues = { count: countInvalidVertices(vertexCount, positions, normals, uvs, storedTangents) };
  if (marks?.invalidValues) {
    const bad = new Uint8Array(vertexCount);
    markNonFiniteVertices(bad, positions, 3, vertexCount);
    if (normals) markNonFiniteVertices(bad, normals, 3, vertexCount);
    markNonFiniteVertices(bad, uvs, 2, vertexCount);
    if (storedTangents) markNonFiniteVertices(bad, storedTangents, 4, vertexCount);
    trianglesOfVertices(marks.invalidValues, indices, bad, triangleCount);
  }
  const unitTolerance = input.normalUnitTolerance ?? UNIT_LENGTH_TOLERANCE;
  const validity = input.tangentValidity ?? FLOAT_TANGENT_VALIDITY;
  const badNormalVertices = marks?.badNormals && normals ? new Uint8Array(vertexCount) : null;
  report.badNormals = { count: normals ? findBadNormals(indices, positions, normals, triangleCount, vertexCount, unitTolerance, input.positionHalfStep ?? 0, badNormalVertices).count : 0 };
  if (marks?.badNormals) {
    if (badNormalVertices) trianglesOfVertices(marks.badNormals, indices, badNormalVertices, triangleCount);
    else marks.badNormals.fill(0, 0, triangleCount);
  }
  const stacked = threadArena().u8(SLOT_STACKED, triangleCount);
  report.uvOverlap = findUvOverlaps(indices, uvs, triangleCount, marks ? marks.overlap : null, null, { stacked, touching: input.uvTouching });
  report.stackedShells = findingFromMarks(stacked, triangleCount);
  let valid = false;
  if (marks?.tangentMismatch) marks.tangentMismatch.fill(0, 0, triangleCount);
  if (storedTangents) {
    const corners = marks?.tangentMismatch ? new Uint8Array(input.computedIndices.length) : null;
    const c = compareStoredTangents(
      storedTangents, input.computedTangents, input.sourceVertex, input.computedIndices, input.computedUndefined, normals,
      vertexCount, input.toleranceDeg, validity, corners,
    );
    if (corners && marks?.tangentMismatch) {
      for (let k = 0; k < corners.length; k++) if (corners[k]) marks.tangentMismatch[(k / 3) | 0] = 1;
    }
    report.storedTangents = {
      invalid: c.invalid,
      undefinedFrames: c.undefinedFrames,
      meanAngleDeg: c.meanAngleDeg,
      p95AngleDeg: c.p95AngleDeg,
      maxAngleDeg: c.maxAngleDeg,
      signMismatch: c.signMismatch,
      compared: c.compared,
      mismatched: c.mismatched,
    };
    valid = isStoredTangentSetValid(storedTangents, normals, vertexCount, validity);
  }
  return { storedTangentsValid: valid };
}
