/**
 * Cost growth of the diagnostics on hostile layouts (test/helpers/costGrowth.ts: x1 and x4):
 * near-stacked UV copies (offset by a little, so not exact copies) through a whole audit.
 */
import { describe, it } from 'vitest';
import { GltfBuilder, glbBytes } from '../helpers/gltfBuilder.js';
import { checkGrowth, costTask } from '../helpers/costGrowth.js';

/**
 * An 8 x 8 grid of quads (128 triangles, unwelded) copied `copies` times in one primitive,
 * copy k moved by (k * 1e-6, k * 0.7e-6) in UV and lifted by k * 1e-3 in z.
 */
function nearStackedGlb(copies: number): Uint8Array {
  const g = 8, perCopy = 2 * g * g, K = Math.ceil(copies), n = perCopy * K;
  const positions = new Float32Array(n * 9), normals = new Float32Array(n * 9), uvs = new Float32Array(n * 6);
  let v = 0;
  for (let k = 0; k < K; k++) {
    for (let j = 0; j < g; j++) {
      for (let i = 0; i < g; i++) {
        for (const [x, y] of [[i, j], [i + 1, j], [i + 1, j + 1], [i, j], [i + 1, j + 1], [i, j + 1]]) {
          positions[v * 3] = x; positions[v * 3 + 1] = y; positions[v * 3 + 2] = k * 1e-3;
          normals[v * 3 + 2] = 1;
          uvs[v * 2] = x / g + k * 1e-6; uvs[v * 2 + 1] = 1 - y / g + k * 0.7e-6;
          v++;
        }
      }
    }
  }
  const b = new GltfBuilder();
  b.addPrimitive({
    attributes: { POSITION: { array: positions, type: 'VEC3' }, NORMAL: { array: normals, type: 'VEC3' }, TEXCOORD_0: { array: uvs, type: 'VEC2' } },
    indices: Uint32Array.from({ length: n * 3 }, (_, i) => i),
  });
  const { json, bin } = b.build();
  return glbBytes(json, bin);
}

describe('diagnostics cost', () => {
  it('grows linearly with near-stacked UV copies', async () => {
    await checkGrowth({
      name: 'UV overlap of near-stacked copies',
      files: (scale) => ({ 'stacked.glb': nearStackedGlb(256 * scale) }),
      task: costTask('auditFile', 'stacked.glb', { allPrimitives: true }),
    });
  });
});
