/**
 * `lengyel` with derivative weighting against three's BufferGeometry.computeTangents, an
 * independent implementation of the same published method.
 *
 * Source: three BufferGeometry.computeTangents (npm `three`, node_modules/three/src/core/
 * BufferGeometry.js, read for this check). What it computes, per indexed triangle (a, b, c):
 *   sdir = (e1 * duv2.y - e2 * duv1.y) / det,  tdir = (e2 * duv1.x - e1 * duv2.x) / det
 * with e1 = B - A, e2 = C - A, det = duv1.x * duv2.y - duv2.x * duv1.y, skipped only when
 * 1 / det is not finite. It adds the unnormalised sdir / tdir to all three corners (tan1 /
 * tan2), then per vertex: t = normalize(tan1 - n * dot(n, tan1)) (Gram-Schmidt) and
 * w = dot(cross(n, tan1), tan2) < 0 ? -1 : +1. Output: a `tangent` attribute, itemSize 4,
 * x y z w per vertex, one per input vertex (no splitting).
 *
 * Conventions compared with ours:
 * - sdir / tdir are Lengyel's T / B (METHODS.md) and the sum is unnormalised: our
 *   `weight: 'derivative'`.
 * - three measures w with cross(n, tan1) (the raw sum), we with cross(N, t) (after
 *   Gram-Schmidt); cross(n, tan1 - n * k) = cross(n, tan1) - k * cross(n, n) = cross(n, tan1),
 *   and normalising scales by a positive number, so the sign is the same.
 * - three reads v exactly as stored (v growing in the direction the numbers grow): that is our
 *   `uvOrigin: 'bottom-left'`. On glTF-convention uvs ('top-left') three's w is the opposite
 *   of the glTF TANGENT w, which the last test shows rather than hides.
 * - Neither splits vertices, so our `lengyel` result must have sourceVertex = identity and the
 *   input's own triangle list.
 */
import { BufferAttribute, BufferGeometry } from 'three';
import { describe, expect, it } from 'vitest';
import { computeFrames } from '../../src/frames/computeFrames.js';
import { mirroredSheet, noisyScan, sphere, torus } from '../helpers/surfaces.js';
import type { UvOrigin } from '../../src/mesh/types.js';

/** Per-component agreement with three: both work in float64 on float32 input, store float32. */
const COMPONENT_TOL = 1e-4;

interface Mesh {
  name: string;
  positions: Float32Array;
  normals: Float32Array;
  uvs: Float32Array;
  indices: Uint32Array;
}

function threeTangents(m: Mesh): Float32Array {
  const g = new BufferGeometry();
  g.setAttribute('position', new BufferAttribute(m.positions, 3));
  g.setAttribute('normal', new BufferAttribute(m.normals, 3));
  g.setAttribute('uv', new BufferAttribute(m.uvs, 2));
  g.setIndex(new BufferAttribute(m.indices, 1));
  g.computeTangents();
  const attr = g.getAttribute('tangent');
  expect(attr.itemSize).toBe(4);
  expect(attr.count).toBe(m.positions.length / 3);
  return Float32Array.from(attr.array as ArrayLike<number>);
}

function meshes(uvOrigin: UvOrigin): Mesh[] {
  return [
    sphere({ n: 16, uvOrigin }),
    torus({ n: 16, uvOrigin }),
    noisyScan({ n: 40, seed: 7, uvOrigin }),
    // Mirrored UVs: the left half has u = |s|, with the seam written once per side.
    mirroredSheet({ n: 16, uvOrigin, seam: 'split' }),
  ];
}

describe('lengyel (derivative weighting) agrees with three BufferGeometry.computeTangents', () => {
  for (const m of meshes('bottom-left')) {
    it(`${m.name}: same tangent to ${COMPONENT_TOL} per component and the same w at every vertex`, () => {
      const nv = m.positions.length / 3;
      const r = computeFrames(m, { method: 'lengyel', weight: 'derivative', uvOrigin: 'bottom-left' });
      // Per input vertex, no splitting.
      expect(r.sourceVertex.length).toBe(nv);
      let identity = true;
      for (let v = 0; v < nv; v++) if (r.sourceVertex[v] !== v) { identity = false; break; }
      expect(identity).toBe(true);
      expect(r.indices).toEqual(m.indices);
      expect(r.tangents.length).toBe(nv * 4);

      // Source: three BufferGeometry.computeTangents.
      const ref = threeTangents(m);
      let maxDiff = 0, worst = -1, wDiff = 0, firstW = '', minusW = 0;
      for (let v = 0; v < nv; v++) {
        for (let k = 0; k < 3; k++) {
          const d = Math.abs(r.tangents[v * 4 + k] - ref[v * 4 + k]);
          if (!(d <= maxDiff)) { maxDiff = d; worst = v; }
        }
        if (r.tangents[v * 4 + 3] !== ref[v * 4 + 3]) {
          if (wDiff++ === 0) firstW = `vertex ${v}: ours w ${r.tangents[v * 4 + 3]}, three w ${ref[v * 4 + 3]}`;
        }
        if (ref[v * 4 + 3] < 0) minusW++;
      }
      const at = worst >= 0
        ? `vertex ${worst}: ours (${Array.from(r.tangents.subarray(worst * 4, worst * 4 + 4)).map((x) => x.toFixed(6)).join(',')}) ` +
          `three (${Array.from(ref.subarray(worst * 4, worst * 4 + 4)).map((x) => x.toFixed(6)).join(',')})`
        : 'all components bitwise equal after float32 storage';
      console.log(`[three] ${m.name}: ${nv} vertices, ${m.indices.length / 3} triangles, max component difference ` +
        `${maxDiff.toExponential(3)} (${at}); w differences ${wDiff}; three w = -1 at ${minusW} vertices`);
      expect(firstW).toBe('');
      expect(wDiff).toBe(0);
      expect(maxDiff).toBeLessThanOrEqual(COMPONENT_TOL);
    });
  }

  it('on glTF-convention uvs (top-left) three, reading v as stored, gives the opposite w and the same tangent', () => {
    // Source: three BufferGeometry.computeTangents reads v as stored; METHODS.md glTF facts:
    // v_gltf = 1 - v negates every dv, so t is unchanged and w flips.
    for (const m of meshes('top-left')) {
      const nv = m.positions.length / 3;
      const r = computeFrames(m, { method: 'lengyel', weight: 'derivative', uvOrigin: 'top-left' });
      const ref = threeTangents(m);
      let maxDiff = 0, sameW = 0;
      for (let v = 0; v < nv; v++) {
        for (let k = 0; k < 3; k++) maxDiff = Math.max(maxDiff, Math.abs(r.tangents[v * 4 + k] - ref[v * 4 + k]));
        if (r.tangents[v * 4 + 3] !== -ref[v * 4 + 3]) sameW++;
      }
      console.log(`[three] ${m.name} top-left: max component difference ${maxDiff.toExponential(3)}, vertices where w is not opposite: ${sameW}`);
      expect(sameW).toBe(0);
      expect(maxDiff).toBeLessThanOrEqual(COMPONENT_TOL);
    }
  });
});
