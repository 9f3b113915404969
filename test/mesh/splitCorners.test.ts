// Re-indexing by per-corner values: a vertex is duplicated only where its corners differ.
import { describe, expect, it } from 'vitest';
import { splitByCornerValues } from '../../src/mesh/splitCorners.js';

describe('splitByCornerValues', () => {
  it('keepsSharedValuesAndSplitsDifferentOnes', () => {
    // Two triangles share vertices 1 and 2; vertex 2's corners carry different values.
    //   corners: (0,1,2) values a a a | (1,3,2) values a b c
    const indices = new Uint32Array([0, 1, 2, 1, 3, 2]);
    const values = new Float32Array([1, 1, 1, 1, 2, 3].flatMap((x) => [x, 0]));
    const s = splitByCornerValues(values, 2, indices, 4);
    expect(Array.from(s.sourceVertex)).toEqual([0, 1, 2, 3, 2]);
    expect(Array.from(s.indices)).toEqual([0, 1, 2, 1, 3, 4]);
    expect(Array.from(s.values)).toEqual([1, 0, 1, 0, 1, 0, 2, 0, 3, 0]);
  });

  it('growsPastItsFirstCapacityForFourWideValues', () => {
    // Three vertices used by 1000 triangles whose corners all differ: 2997 new vertices, more
    // than the initial room (1024), so the storage must grow and keep every value.
    const triangles = 1000;
    const indices = new Uint32Array(triangles * 3);
    const values = new Float32Array(triangles * 12);
    for (let c = 0; c < triangles * 3; c++) {
      indices[c] = c % 3;
      values[c * 4] = c; values[c * 4 + 3] = 1;
    }
    const s = splitByCornerValues(values, 4, indices, 3);
    expect(s.sourceVertex.length).toBe(triangles * 3);
    for (let c = 0; c < triangles * 3; c++) {
      const o = s.indices[c];
      expect(s.sourceVertex[o]).toBe(c % 3);
      expect(s.values[o * 4]).toBe(c);
    }
  });

  it('unusedVerticesKeepTheirIndex', () => {
    const s = splitByCornerValues(new Float32Array(9), 3, new Uint32Array([1, 2, 3]), 5);
    expect(Array.from(s.sourceVertex)).toEqual([0, 1, 2, 3, 4]);
    expect(Array.from(s.used)).toEqual([0, 1, 1, 1, 0]);
  });
});
