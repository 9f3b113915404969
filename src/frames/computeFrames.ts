/**
 * Based on: the library contract in DESIGN.md; dispatches to the MikkTSpace method (Mikkelsen
 * 2008) or Lengyel's method (2001) and re-indexes so vertices split only where frames differ.
 */
import { SLOT_CORNER_FRAME, SLOT_LENGYEL_UNDEFINED, threadArena } from '../mesh/arena.js';
import { assert } from '../mesh/errors.js';
import type { FrameInput, FrameOptions, FrameResult } from '../mesh/types.js';
import { computeLengyelTangents } from './lengyel.js';
import { computeMikktspaceFrames } from './mikktspace.js';
import { splitByCornerFrames } from './split.js';

/**
 * Computes tangent frames for a triangle mesh.
 * Returns tangents (4 floats per output vertex, xyz unit, w = +1 | -1), a triangle list over
 * the output vertices, per output vertex the input vertex it copies and, per corner of that
 * list, whether the method defined no tangent there (the fallback was written). `mikktspace`
 * (default) splits a vertex where its corners' frames differ (mirror seams); `lengyel` gives
 * one frame per input vertex and never splits. `uvOrigin` defaults to 'top-left' (glTF);
 * frames are solved with v measured upward either way. Degenerate input never throws: it
 * gets the documented fallback and is counted in `stats`.
 * Preconditions: positions and normals hold 3 floats per vertex and uvs 2, for the same
 * vertex count; indices (if given) are a multiple of 3 and below that count; faces (if given)
 * hold one entry per triangle.
 */
export function computeFrames(input: FrameInput, options: FrameOptions = {}): FrameResult {
  assert(input !== null && typeof input === 'object', 'computeFrames needs an object { positions, normals, uvs, indices? }');
  assert(options !== null && typeof options === 'object', 'options must be an object');
  const { positions, normals, uvs } = input;
  assert(positions instanceof Float32Array, 'positions must be a Float32Array');
  assert(normals instanceof Float32Array, 'normals must be a Float32Array');
  assert(uvs instanceof Float32Array, 'uvs must be a Float32Array');
  assert(input.indices == null || input.indices instanceof Uint32Array, 'indices must be a Uint32Array (or absent)');
  assert(input.faces == null || input.faces instanceof Uint32Array, 'faces must be a Uint32Array (or absent)');
  const method = options.method ?? 'mikktspace';
  const uvOrigin = options.uvOrigin ?? 'top-left';
  const weight = options.weight ?? 'derivative';
  assert(weight === 'derivative' || weight === 'angle' || weight === 'area' || weight === 'uniform', `unknown weight ${String(weight)}`);
  assert(method === 'mikktspace' || method === 'lengyel', `unknown method ${String(method)}`);
  assert(uvOrigin === 'top-left' || uvOrigin === 'bottom-left', `unknown uvOrigin ${String(uvOrigin)}`);
  assert(positions.length % 3 === 0, 'positions must hold 3 floats per vertex');
  const vertexCount = positions.length / 3;
  assert(normals.length === vertexCount * 3, 'normals must hold 3 floats per vertex');
  assert(uvs.length === vertexCount * 2, 'uvs must hold 2 floats per vertex');
  let indices = input.indices ?? null;
  if (!indices) {
    assert(vertexCount % 3 === 0, 'a non-indexed mesh needs a multiple of 3 vertices');
    indices = new Uint32Array(vertexCount);
    for (let i = 0; i < vertexCount; i++) indices[i] = i;
  }
  assert(indices.length % 3 === 0, 'indices must be a multiple of 3');
  // Indices at or past vertexCount are a contract breach too: the solvers check the range in
  // their first pass over the triangles, before any index is used.
  const triangleCount = indices.length / 3;
  const faces = input.faces ?? null;
  assert(!faces || faces.length === triangleCount, 'faces must hold one entry per triangle');
  const vSign = uvOrigin === 'bottom-left' ? 1 : -1;

  if (method === 'lengyel') {
    const tangents = new Float32Array(vertexCount * 4);
    const undefinedVertex = threadArena().u8(SLOT_LENGYEL_UNDEFINED, vertexCount);
    const s = computeLengyelTangents(tangents, undefinedVertex, indices, positions, normals, uvs, vSign, weight, triangleCount, vertexCount);
    const sourceVertex = new Uint32Array(vertexCount);
    for (let v = 0; v < vertexCount; v++) sourceVertex[v] = v;
    const undefinedCorners = new Uint8Array(indices.length);
    // Every corner of a vertex that took the fallback (none, usually: the array stays zero).
    // Only the 1s are written: the fresh array's zero pages stay untouched.
    if (s.fallbackTangents > 0) for (let c = 0; c < indices.length; c++) if (undefinedVertex[indices[c]] !== 0) undefinedCorners[c] = 1;
    return {
      tangents,
      indices: indices.slice(),
      sourceVertex,
      undefinedCorners,
      stats: {
        degenerateUvTriangles: s.degenerateUvTriangles,
        mirroredTriangles: s.mirroredTriangles,
        splitVertices: 0,
        fallbackTangents: s.fallbackTangents,
      },
    };
  }
  const cornerFrame = threadArena().u32(SLOT_CORNER_FRAME, triangleCount * 3);
  const undefinedCorners = new Uint8Array(triangleCount * 3);
  const s = computeMikktspaceFrames(cornerFrame, undefinedCorners, indices, positions, normals, uvs, faces, vSign, triangleCount, vertexCount);
  const split = splitByCornerFrames(cornerFrame, s.frames, indices, normals, vertexCount);
  return {
    tangents: split.tangents,
    indices: split.indices,
    sourceVertex: split.sourceVertex,
    undefinedCorners,
    stats: {
      degenerateUvTriangles: s.degenerateUvTriangles,
      mirroredTriangles: s.mirroredTriangles,
      splitVertices: split.sourceVertex.length - vertexCount,
      fallbackTangents: s.fallbackCorners,
    },
  };
}
