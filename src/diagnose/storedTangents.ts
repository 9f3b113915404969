/**
 * Based on: glTF 2.0 specification, section 3.7.2.1 (TANGENT: XYZ a normalized vertex tangent,
 * W = +1 or -1 the handedness; bitangent = cross(normal, tangent.xyz) * w), the angle between
 * two directions as atan2(|a x b|, a . b), accurate at small angles, and METHODS.md step 8
 * (corners where the standard method defines no tangent are left out of the statistics).
 */
import { assert } from '../mesh/errors.js';
import {
  DEFAULT_TANGENT_MISMATCH_DEG,
  FLOAT_TANGENT_VALIDITY,
  ZERO_LENGTH,
  type TangentValidityTolerances,
} from '../mesh/tolerances.js';

const DEG_PER_RAD = 180 / Math.PI;

/** What compareStoredTangents found. Angles are in degrees, statistics over triangle corners. */
export interface StoredTangentComparison {
  /** Input vertices whose stored tangent is invalid (see isStoredTangentValid); their corners are not compared. */
  invalid: number;
  /**
   * Corners left out because the recomputed frame is undefined there (the method's fallback:
   * no contributing triangle reaches the vertex), whatever the file stores.
   */
  undefinedFrames: number;
  /** Mean of the corner angles between stored and computed xyz; 0 when nothing was compared. */
  meanAngleDeg: number;
  /** 95th percentile (nearest rank) of the corner angles; 0 when nothing was compared. */
  p95AngleDeg: number;
  /** Largest corner angle; 0 when nothing was compared. */
  maxAngleDeg: number;
  /** Compared corners whose stored w and computed w have different signs. */
  signMismatch: number;
  /** Compared corners with an angle above the tolerance or a sign mismatch. */
  mismatched: number;
  /** Corners compared: a valid stored tangent and a defined recomputed frame. */
  compared: number;
}

/**
 * Whether the stored tangent of vertex v (stored[4v .. 4v+3]) is valid: all four values
 * finite, | |xyz| - 1 | <= tol.unitLength, w exactly +1 or -1, and, when the vertex
 * has a usable normal (finite, length > ZERO_LENGTH), |cos| of the angle between xyz and the
 * normal <= tol.orthogonalCosine. `tol` comes from the attributes' encodings
 * (tangentValidityTolerances in src/mesh/tolerances.ts; default: float). With `normals` null, or a zero or non-finite normal,
 * orthogonality is not judged (the normal is what is wrong; findBadNormals reports it).
 * Preconditions: stored holds 4 floats and normals (if given) 3 floats for vertex v.
 */
export function isStoredTangentValid(
  stored: Float32Array,
  normals: Float32Array | null,
  v: number,
  tol: TangentValidityTolerances = FLOAT_TANGENT_VALIDITY,
): boolean {
  const tx = stored[v * 4], ty = stored[v * 4 + 1], tz = stored[v * 4 + 2], tw = stored[v * 4 + 3];
  if (!(tw === 1 || tw === -1)) return false;
  const tl = Math.sqrt(tx * tx + ty * ty + tz * tz);
  if (!(Math.abs(tl - 1) <= tol.unitLength)) return false; // NaN and Infinity fail here
  if (!normals) return true;
  const nx = normals[v * 3], ny = normals[v * 3 + 1], nz = normals[v * 3 + 2];
  const nl = Math.sqrt(nx * nx + ny * ny + nz * nz);
  if (!(nl > ZERO_LENGTH) || nl === Infinity) return true;
  const cos = (nx * tx + ny * ty + nz * tz) / (nl * tl);
  return Math.abs(cos) <= tol.orthogonalCosine;
}

/**
 * Counts the input vertices in [0, vertexCount) whose stored tangent is invalid
 * (isStoredTangentValid), used or not by a triangle.
 * Preconditions: stored holds 4 floats and normals (if given) 3 floats per vertex.
 */
export function countInvalidStoredTangents(
  stored: Float32Array,
  normals: Float32Array | null,
  vertexCount: number,
  tol: TangentValidityTolerances = FLOAT_TANGENT_VALIDITY,
): number {
  assert(stored.length >= vertexCount * 4, 'stored tangents must hold 4 floats per vertex');
  assert(!normals || normals.length >= vertexCount * 3, 'normals must hold 3 floats per vertex');
  let invalid = 0;
  for (let v = 0; v < vertexCount; v++) if (!isStoredTangentValid(stored, normals, v, tol)) invalid++;
  return invalid;
}

/**
 * Whether every stored tangent in [0, vertexCount) is valid (isStoredTangentValid): the test
 * `bake --keep-existing` applies before keeping a primitive's stored tangents.
 * Preconditions: as countInvalidStoredTangents.
 */
export function isStoredTangentSetValid(
  stored: Float32Array,
  normals: Float32Array | null,
  vertexCount: number,
  tol: TangentValidityTolerances = FLOAT_TANGENT_VALIDITY,
): boolean {
  assert(stored.length >= vertexCount * 4, 'stored tangents must hold 4 floats per vertex');
  assert(!normals || normals.length >= vertexCount * 3, 'normals must hold 3 floats per vertex');
  for (let v = 0; v < vertexCount; v++) if (!isStoredTangentValid(stored, normals, v, tol)) return false;
  return true;
}

/**
 * Compares a primitive's stored tangents with recomputed frames, corner by corner.
 * `stored` holds 4 floats per INPUT vertex; `computed`, `computedIndices` and `sourceVertex`
 * are a frame solve's output (computeFrames: tangents per output vertex, the triangle list over
 * output vertices, and per output vertex the input vertex it copies). For each triangle corner
 * c, the stored tangent of input vertex sourceVertex[computedIndices[c]] is compared with the
 * computed tangent of output vertex computedIndices[c]:
 * - angle = the angle between the two xyz directions, in degrees in [0, 180] (w ignored);
 * - sign mismatch when the stored w and the computed w differ.
 * Statistics count CORNERS, not vertices (a vertex shared by six triangles weighs six times).
 * A corner is left out of them when:
 * - `undefinedCorners` (the solve's FrameResult.undefinedCorners, per corner of
 *   computedIndices; null when unknown) marks it: the method defines no tangent there and the
 *   file holds some implementation's default (METHODS.md step 8). Counted in `undefinedFrames`;
 * - else its stored tangent is invalid (isStoredTangentValid against `normals`, which may be
 *   null: not unit, not orthogonal to the normal, w not +-1, or not finite): it says nothing
 *   about the method (glTF 2.0 requires TANGENT xyz unit and w = +-1; the Khronos validator
 *   reports xyz with | |xyz| - 1 | > 0.00674 as non-unit and any other w as an invalid sign,
 *   read from the code of gltf-validator 2.0.0-dev.3.10, not from memory; the unit test here
 *   is isStoredTangentValid's, with `tol`: the tolerances of the encodings, from
 *   src/mesh/tolerances.ts, default float). Counted as
 *   `invalid`, which counts input VERTICES in [0, vertexCount), used by a triangle or not.
 * p95 is the nearest-rank 95th percentile of the sorted corner angles (float64). `mismatched`
 * counts the compared corners with angle > toleranceDeg or a sign mismatch. With nothing
 * compared the three angles are 0.
 * When `cornerMarks` is given (length >= computedIndices.length), cornerMarks[c] is set to 1 for
 * each mismatched corner and 0 otherwise.
 * Preconditions: stored holds 4 floats and normals (if given) 3 floats per input vertex;
 * computed holds 4 floats per output vertex; computedIndices < sourceVertex.length;
 * sourceVertex entries < vertexCount; undefinedCorners (if given) holds one entry per corner.
 */
export function compareStoredTangents(
  stored: Float32Array,
  computed: Float32Array,
  sourceVertex: Uint32Array,
  computedIndices: Uint32Array,
  undefinedCorners: Uint8Array | null,
  normals: Float32Array | null,
  vertexCount: number,
  toleranceDeg: number = DEFAULT_TANGENT_MISMATCH_DEG,
  tol: TangentValidityTolerances = FLOAT_TANGENT_VALIDITY,
  cornerMarks: Uint8Array | null = null,
): StoredTangentComparison {
  assert(!cornerMarks || cornerMarks.length >= computedIndices.length, 'cornerMarks must hold one entry per corner');
  if (cornerMarks) cornerMarks.fill(0, 0, computedIndices.length);
  assert(computed.length >= sourceVertex.length * 4, 'computed tangents must hold 4 floats per output vertex');
  assert(stored.length >= vertexCount * 4, 'stored tangents must hold 4 floats per vertex');
  assert(!normals || normals.length >= vertexCount * 3, 'normals must hold 3 floats per vertex');
  const cornerCount = computedIndices.length;
  assert(!undefinedCorners || undefinedCorners.length >= cornerCount, 'undefinedCorners must hold one entry per corner');
  const valid = new Uint8Array(vertexCount);
  let invalid = 0;
  for (let v = 0; v < vertexCount; v++) {
    if (isStoredTangentValid(stored, normals, v, tol)) valid[v] = 1;
    else invalid++;
  }
  const angles = new Float64Array(cornerCount);
  let compared = 0, undefinedFrames = 0, signMismatch = 0, mismatched = 0, sum = 0, max = 0;
  for (let c = 0; c < cornerCount; c++) {
    if (undefinedCorners && undefinedCorners[c]) {
      undefinedFrames++;
      continue;
    }
    const o = computedIndices[c];
    const v = sourceVertex[o];
    if (!valid[v]) continue;
    const sx = stored[v * 4], sy = stored[v * 4 + 1], sz = stored[v * 4 + 2], sw = stored[v * 4 + 3];
    const cx = computed[o * 4], cy = computed[o * 4 + 1], cz = computed[o * 4 + 2], cw = computed[o * 4 + 3];
    const xx = sy * cz - sz * cy, xy = sz * cx - sx * cz, xz = sx * cy - sy * cx;
    const angle = Math.atan2(Math.sqrt(xx * xx + xy * xy + xz * xz), sx * cx + sy * cy + sz * cz) * DEG_PER_RAD;
    angles[compared++] = angle;
    sum += angle;
    if (angle > max) max = angle;
    const signDiffers = (sw < 0) !== (cw < 0);
    if (signDiffers) signMismatch++;
    if (signDiffers || angle > toleranceDeg) {
      mismatched++;
      if (cornerMarks) cornerMarks[c] = 1;
    }
  }
  let p95 = 0;
  if (compared > 0) {
    const sorted = angles.subarray(0, compared).sort();
    p95 = sorted[Math.ceil(0.95 * compared) - 1];
  }
  return {
    invalid,
    undefinedFrames,
    meanAngleDeg: compared > 0 ? sum / compared : 0,
    p95AngleDeg: p95,
    maxAngleDeg: max,
    signMismatch,
    mismatched,
    compared,
  };
}
