// Compaction of an indexed primitive to the vertices its indices reference.
import { describe, expect, it } from 'vitest';
import { compactIndices, compactPrimitive, createCompactScratch } from '../../src/mesh/compact.js';
import type { AttributeData, PrimitiveData } from '../../src/mesh/asset.js';

function attr(values: number[], itemSize: number): AttributeData {
  return { array: Float32Array.from(values), itemSize, type: itemSize === 1 ? 'SCALAR' : `VEC${itemSize}`, componentType: 5126, normalized: false };
}

describe('compactIndices', () => {
  it('keeps the referenced vertices in their original order and renumbers the indices', () => {
    // 10 vertices; the triangles name 7, 2, 5 and 5, 2, 9: referenced {2, 5, 7, 9}.
    const c = compactIndices(createCompactScratch(), Uint32Array.from([7, 2, 5, 5, 2, 9]), 10)!;
    expect(Array.from(c.vertices)).toEqual([2, 5, 7, 9]);
    expect(Array.from(c.indices)).toEqual([2, 0, 1, 1, 0, 3]);
  });

  it('returns null when every vertex is used, and a reused scratch forgets the previous call', () => {
    const s = createCompactScratch();
    expect(compactIndices(s, Uint32Array.from([0, 1, 2, 2, 1, 3]), 4)).toBeNull();
    const c = compactIndices(s, Uint32Array.from([3, 1, 3]), 4)!;
    expect(Array.from(c.vertices)).toEqual([1, 3]);
    expect(Array.from(c.indices)).toEqual([1, 0, 1]);
  });
});

describe('compactPrimitive', () => {
  it('gathers attributes and morph targets; targets sharing one decoded array share one copy', () => {
    const pos = attr([0, 0, 0, 1, 1, 1, 2, 2, 2, 3, 3, 3], 3);
    const delta = attr([0, 0, 10, 0, 0, 11, 0, 0, 12, 0, 0, 13], 3);
    const p: PrimitiveData = {
      mesh: 0, primitive: 0, meshName: null, material: null, mode: 4,
      attributes: { POSITION: pos }, indices: Uint32Array.from([3, 1, 2]),
      targets: [{ POSITION: delta }, { POSITION: delta }], faces: null,
    };
    const c = compactPrimitive(createCompactScratch(), p);
    expect(Array.from(c.attributes.POSITION.array)).toEqual([1, 1, 1, 2, 2, 2, 3, 3, 3]);
    expect(Array.from(c.indices!)).toEqual([2, 0, 1]);
    expect(Array.from(c.targets[0].POSITION.array)).toEqual([0, 0, 11, 0, 0, 12, 0, 0, 13]);
    expect(c.targets[1].POSITION).toBe(c.targets[0].POSITION);
    // Non-indexed: nothing to compact.
    const plain = { ...p, indices: null };
    expect(compactPrimitive(createCompactScratch(), plain)).toBe(plain);
  });
});
