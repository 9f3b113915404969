/**
 * TANGENT deltas for morph targets that carry NORMAL deltas.
 * Based on: glTF 2.0 specification, 3.7.2.2 (morph targets: a target's attributes are
 * displacements added to the base attributes; TANGENT displacements are VEC3, the base's w is
 * not morphed), with the frames of each fully morphed shape computed by the same method as
 * the base.
 *
 * For target k the morphed shape is: positions = base + dPOSITION, normals =
 * normalize(base + dNORMAL), texture coordinates = base + dTEXCOORD (of the frame set, when the
 * target has one; the normal texture's transform applied after). The morphed shape is solved
 * over the same triangles, and each output vertex of the base takes the morphed frame of the
 * first triangle corner that uses it (corner order), so the target keeps the base's vertex
 * layout exactly even where the morphed shape alone would split differently. The delta is
 * morphed tangent xyz minus the base tangent xyz as written (after any quantization), so the
 * fully weighted target reproduces the morphed frame's direction. Output vertices that no
 * triangle uses get a zero delta.
 */
import { computeFrames } from '../frames/computeFrames.js';
import type { FrameMethod, TangentWeight } from '../mesh/types.js';
import { applyUvTransform, type UvTransform } from '../mesh/uvTransform.js';
import { ZERO_LENGTH } from '../mesh/tolerances.js';

/** The base shape as the frame solve read it (one entry per solve input vertex). */
export interface MorphBase {
  positions: Float32Array;
  normals: Float32Array;
  /** Untransformed texture coordinates of the frame set. */
  uvs: Float32Array;
  /** Triangle list over the solve input vertices. */
  indices: Uint32Array;
  faces: Uint32Array | null;
  /** Output triangle list of the base solve (same triangles, output vertex indices). */
  outIndices: Uint32Array;
  /** Base tangents as written, decoded to float: 4 per output vertex. */
  outTangents: Float32Array;
  /** Number of output vertices. */
  outCount: number;
}

/** One target's displacements per solve input vertex (null when the target lacks that attribute). */
export interface MorphDeltas {
  positions: Float32Array | null;
  normals: Float32Array | null;
  uvs: Float32Array | null;
}

/** How the base was solved. */
export interface MorphSolveOptions {
  method: FrameMethod;
  weight: TangentWeight;
  /** Texture transform applied to the uvs before the solve, or null. */
  transform: UvTransform | null;
}

/**
 * Computes the TANGENT delta (3 floats per output vertex) of one morph target, or returns
 * null when the target has no NORMAL displacement (no delta is generated then).
 * Preconditions: arrays of `base` and `deltas` hold one element per solve input vertex;
 * outIndices has as many entries as indices.
 */
export function morphTangentDelta(base: MorphBase, deltas: MorphDeltas, options: MorphSolveOptions): Float32Array | null {
  if (!deltas.normals) return null;
  const n = base.positions.length / 3;
  const positions = new Float32Array(n * 3);
  const normals = new Float32Array(n * 3);
  const uvs = new Float32Array(n * 2);
  const dp = deltas.positions;
  const dn = deltas.normals;
  const du = deltas.uvs;
  for (let i = 0; i < n * 3; i++) positions[i] = dp ? base.positions[i] + dp[i] : base.positions[i];
  for (let v = 0; v < n; v++) {
    const x = base.normals[3 * v] + dn[3 * v];
    const y = base.normals[3 * v + 1] + dn[3 * v + 1];
    const z = base.normals[3 * v + 2] + dn[3 * v + 2];
    const l = Math.sqrt(x * x + y * y + z * z);
    if (l > ZERO_LENGTH && Number.isFinite(l)) {
      normals[3 * v] = x / l; normals[3 * v + 1] = y / l; normals[3 * v + 2] = z / l;
    } else {
      normals[3 * v] = base.normals[3 * v]; normals[3 * v + 1] = base.normals[3 * v + 1]; normals[3 * v + 2] = base.normals[3 * v + 2];
    }
  }
  for (let i = 0; i < n * 2; i++) uvs[i] = du ? base.uvs[i] + du[i] : base.uvs[i];
  if (options.transform) applyUvTransform(uvs, uvs, n, options.transform);
  const morphed = computeFrames(
    { positions, normals, uvs, indices: base.indices, faces: base.faces },
    { method: options.method, weight: options.weight, uvOrigin: 'top-left' },
  );
  const out = new Float32Array(base.outCount * 3);
  const done = new Uint8Array(base.outCount);
  const corners = base.outIndices.length;
  const mt = morphed.tangents;
  const bt = base.outTangents;
  for (let c = 0; c < corners; c++) {
    const o = base.outIndices[c];
    if (done[o]) continue;
    done[o] = 1;
    const m = morphed.indices[c] * 4;
    out[3 * o] = mt[m] - bt[4 * o];
    out[3 * o + 1] = mt[m + 1] - bt[4 * o + 1];
    out[3 * o + 2] = mt[m + 2] - bt[4 * o + 2];
  }
  return out;
}
