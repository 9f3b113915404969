// The computeFrames contract (DESIGN.md, library contract): an index at or past the vertex
// count is a caller's breach, answered by a TanframeError 'invalid-argument' from either
// method wherever the bad index sits, before any result is made.
import { describe, expect, it } from 'vitest';
import { computeFrames } from '../../src/frames/computeFrames.js';
import { TanframeError } from '../../src/mesh/errors.js';
import type { FrameMethod } from '../../src/mesh/types.js';

// A unit square of two triangles in z = 0 (4 vertices), UVs equal to xy:
//   3 --- 2
//   |  /  |
//   0 --- 1
const positions = new Float32Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0]);
const normals = new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]);
const uvs = new Float32Array([0, 0, 1, 0, 1, 1, 0, 1]);
const METHODS: FrameMethod[] = ['mikktspace', 'lengyel'];

function thrown(indices: Uint32Array, method: FrameMethod): unknown {
  try {
    computeFrames({ positions, normals, uvs, indices }, { method });
  } catch (e) {
    return e;
  }
  return null;
}

describe('computeFrames index range', () => {
  it('anIndexPastTheVertexCountThrowsInvalidArgumentInEveryPositionForBothMethods', () => {
    for (const method of METHODS) {
      // The bad index (4 = vertexCount, or far past it) first, in the middle, and last.
      for (const bad of [
        [4, 1, 2, 0, 2, 3],
        [0, 1, 2, 0, 0xffffffff, 3],
        [0, 1, 2, 0, 2, 4],
      ]) {
        const e = thrown(new Uint32Array(bad), method);
        expect(e, `${method} ${bad.join(',')}`).toBeInstanceOf(TanframeError);
        expect((e as TanframeError).code).toBe('invalid-argument');
        expect((e as TanframeError).message).toMatch(/index is out of range/);
      }
    }
  });

  it('theLastValidIndexIsAccepted', () => {
    for (const method of METHODS) {
      const r = computeFrames({ positions, normals, uvs, indices: new Uint32Array([0, 1, 2, 0, 2, 3]) }, { method, uvOrigin: 'bottom-left' });
      // UVs equal xy: the tangent is +X everywhere with w = +1 (dP/du = +X, dP/dv = +Y).
      for (let v = 0; v < r.tangents.length / 4; v++) {
        expect(r.tangents[v * 4]).toBeCloseTo(1, 6);
        expect(r.tangents[v * 4 + 3]).toBe(1);
      }
    }
  });
});
