/**
 * The single-triangle worked check of the per-triangle UV-delta solve, for both methods.
 *
 *   v
 *   ^  P2 (0,1,0)
 *   |  |\
 *   |  | \
 *   |  P0--P1 (1,0,0)      N = (0,0,1) at every corner
 *   +---------> u
 */
import { describe, expect, it } from 'vitest';
import { computeFrames } from '../../src/frames/computeFrames.js';
import type { FrameMethod, UvOrigin } from '../../src/mesh/types.js';

const positions = new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0]);
const normals = new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1]);
const plainUvs = new Float32Array([0, 0, 1, 0, 0, 1]);
const mirroredUvs = new Float32Array([1, 0, 0, 0, 1, 1]);
const EXACT = 1e-6;

interface Case {
  uvs: Float32Array;
  uvOrigin: UvOrigin;
  t: [number, number, number];
  w: number;
  label: string;
}

// Source: Lengyel 2001 worked formula, as stated in METHODS.md "Worked check (exact)":
// v upward gives t=(1,0,0), w=+1; mirrored u gives t=(-1,0,0), w=-1; the same numbers read
// as glTF coordinates (top-left origin) keep t and flip w.
const cases: Case[] = [
  { label: 'plain, bottom-left', uvs: plainUvs, uvOrigin: 'bottom-left', t: [1, 0, 0], w: 1 },
  { label: 'mirrored u, bottom-left', uvs: mirroredUvs, uvOrigin: 'bottom-left', t: [-1, 0, 0], w: -1 },
  { label: 'plain, top-left', uvs: plainUvs, uvOrigin: 'top-left', t: [1, 0, 0], w: -1 },
  { label: 'mirrored u, top-left', uvs: mirroredUvs, uvOrigin: 'top-left', t: [-1, 0, 0], w: 1 },
];

const methods: FrameMethod[] = ['lengyel', 'mikktspace'];

describe('Lengyel worked example (single triangle, exact)', () => {
  for (const method of methods) {
    for (const c of cases) {
      for (const indexed of [true, false]) {
        it(`${method}: ${c.label}${indexed ? '' : ', no index buffer'} gives t=(${c.t.join(',')}), w=${c.w}`, () => {
          const r = computeFrames(
            { positions, normals, uvs: c.uvs, indices: indexed ? new Uint32Array([0, 1, 2]) : null },
            { method, uvOrigin: c.uvOrigin },
          );
          // Shapes: three distinct vertices in, three out, nothing to split.
          expect(r.sourceVertex).toBeInstanceOf(Uint32Array);
          expect(Array.from(r.sourceVertex)).toEqual([0, 1, 2]);
          expect(r.indices).toBeInstanceOf(Uint32Array);
          expect(Array.from(r.indices)).toEqual([0, 1, 2]);
          expect(r.tangents).toBeInstanceOf(Float32Array);
          expect(r.tangents.length).toBe(12);
          expect(r.stats.splitVertices).toBe(0);
          expect(r.stats.degenerateUvTriangles).toBe(0);
          expect(r.stats.mirroredTriangles).toBe(c.w < 0 ? 1 : 0);
          for (let v = 0; v < 3; v++) {
            const tx = r.tangents[v * 4], ty = r.tangents[v * 4 + 1], tz = r.tangents[v * 4 + 2];
            expect(Math.abs(tx - c.t[0])).toBeLessThanOrEqual(EXACT);
            expect(Math.abs(ty - c.t[1])).toBeLessThanOrEqual(EXACT);
            expect(Math.abs(tz - c.t[2])).toBeLessThanOrEqual(EXACT);
            expect(r.tangents[v * 4 + 3]).toBe(c.w);
            // Source: glTF 2.0 spec (TANGENT): xyz unit; and orthogonal to N by construction (Gram-Schmidt).
            expect(Math.abs(Math.hypot(tx, ty, tz) - 1)).toBeLessThanOrEqual(EXACT);
            const d = tx * normals[v * 3] + ty * normals[v * 3 + 1] + tz * normals[v * 3 + 2];
            expect(Math.abs(d)).toBeLessThanOrEqual(EXACT);
          }
        });
      }
    }
  }

  it('the stored bitangent cross(N, t) * w points toward image-up in both conventions', () => {
    // Source: glTF 2.0 spec (TANGENT: bitangent = cross(normal, tangent.xyz) * w) and METHODS.md
    // glTF facts: image-up is increasing v for 'bottom-left' and decreasing v for 'top-left'.
    // The plain uvs put image-up along +y for 'bottom-left' (v grows with y) and along -y for
    // 'top-left' (v_gltf grows with y, so image-up is -y).
    for (const method of methods) {
      for (const [uvOrigin, upY] of [['bottom-left', 1], ['top-left', -1]] as const) {
        const r = computeFrames({ positions, normals, uvs: plainUvs }, { method, uvOrigin });
        for (let v = 0; v < 3; v++) {
          const tx = r.tangents[v * 4], ty = r.tangents[v * 4 + 1], w = r.tangents[v * 4 + 3];
          // cross((0,0,1), (tx,ty,tz)) = (-ty, tx, 0)
          const by = tx * w;
          expect(Math.abs(-ty * w)).toBeLessThanOrEqual(EXACT);
          expect(Math.abs(by - upY)).toBeLessThanOrEqual(EXACT);
        }
      }
    }
  });
});
