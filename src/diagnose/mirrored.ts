/**
 * Based on: the per-triangle UV-delta solve (Lengyel 2001; METHODS.md): the sign of the UV
 * determinant, measured with v upward, is the triangle's UV orientation; a negative one is a
 * mirrored triangle and gets handedness w = -1 (MikkTSpace, Mikkelsen 2008: "orientation
 * preserving" when det > 0).
 */
import { assert } from '../mesh/errors.js';
import { UV_DEGENERATE_RELATIVE } from '../mesh/tolerances.js';

/**
 * Marks the mirrored triangles: those whose UV determinant, measured with v upward, is negative
 * (det = du1 * dv2 - du2 * dv1 with every dv multiplied by `vSign`: -1 for glTF's top-left
 * origin, +1 for a bottom-left origin as in OBJ). Degenerate-UV triangles (the test of
 * findDegenerateUvTriangles with the same `epsilon`, NaN UVs included) are neither mirrored
 * nor counted. This is the same count src/frames reports as `mirroredTriangles`.
 * When `marks` is given (length >= triangleCount), marks[t] is set to 1 for each mirrored
 * triangle and 0 otherwise (for tinting them in a picture). Returns the number of mirrored triangles.
 * Preconditions: indices hold 3 * triangleCount entries, each < uvs.length / 2; vSign is +1 or -1.
 */
export function markMirroredTriangles(
  marks: Uint8Array | null,
  indices: Uint32Array,
  uvs: Float32Array,
  triangleCount: number,
  vSign: number,
  epsilon: number = UV_DEGENERATE_RELATIVE,
): number {
  assert(indices.length >= triangleCount * 3, 'indices must hold 3 entries per triangle');
  assert(vSign === 1 || vSign === -1, 'vSign must be +1 or -1');
  assert(!marks || marks.length >= triangleCount, 'marks must hold one entry per triangle');
  let mirrored = 0;
  for (let t = 0; t < triangleCount; t++) {
    const i0 = indices[t * 3], i1 = indices[t * 3 + 1], i2 = indices[t * 3 + 2];
    const u0 = uvs[i0 * 2], v0 = uvs[i0 * 2 + 1];
    const du1 = uvs[i1 * 2] - u0, dv1 = vSign * (uvs[i1 * 2 + 1] - v0);
    const du2 = uvs[i2 * 2] - u0, dv2 = vSign * (uvs[i2 * 2 + 1] - v0);
    const det = du1 * dv2 - du2 * dv1;
    const scale = du1 * du1 + dv1 * dv1 + du2 * du2 + dv2 * dv2;
    const isMirrored = det < 0 && -det > epsilon * scale;
    if (marks) marks[t] = isMirrored ? 1 : 0;
    if (isMirrored) mirrored++;
  }
  return mirrored;
}

/**
 * Counts the mirrored triangles (see markMirroredTriangles): negative UV orientation measured
 * with v upward, degenerate-UV triangles excluded. `vSign` is -1 for glTF (top-left origin)
 * and +1 for a bottom-left origin.
 * Preconditions: as markMirroredTriangles.
 */
export function countMirroredTriangles(
  indices: Uint32Array,
  uvs: Float32Array,
  triangleCount: number,
  vSign: number,
  epsilon: number = UV_DEGENERATE_RELATIVE,
): number {
  return markMirroredTriangles(null, indices, uvs, triangleCount, vSign, epsilon);
}

/**
 * Counts the vertices a frame solve added along mirror seams. Output vertices at positions
 * >= inputVertexCount are the ones splitting added (computeFrames keeps the first frame of
 * input vertex v at output vertex v and appends the others); each of them counts when its
 * handedness w differs from the w of output vertex sourceVertex[o], the vertex it was split
 * from. Splits that only change the tangent direction (same w) are not mirror-seam splits.
 * Returns that count, in [0, sourceVertex.length - inputVertexCount].
 * Preconditions: tangents hold 4 floats per output vertex (sourceVertex.length of them);
 * sourceVertex[o] < inputVertexCount <= sourceVertex.length.
 */
export function countMirrorSeamSplits(
  sourceVertex: Uint32Array,
  tangents: Float32Array,
  inputVertexCount: number,
): number {
  const outputCount = sourceVertex.length;
  assert(inputVertexCount <= outputCount, 'there are fewer output vertices than input vertices');
  assert(tangents.length >= outputCount * 4, 'tangents must hold 4 floats per output vertex');
  let splits = 0;
  for (let o = inputVertexCount; o < outputCount; o++) {
    const s = sourceVertex[o];
    if (tangents[o * 4 + 3] !== tangents[s * 4 + 3]) splits++;
  }
  return splits;
}
