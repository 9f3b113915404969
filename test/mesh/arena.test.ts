// The per-thread scratch arena (src/mesh/arena.ts): slots grow geometrically and are handed out
// again without new memory, and nothing a solve returns lives in it.
import { describe, expect, it } from 'vitest';
import { Arena } from '../../src/mesh/arena.js';
import { computeFrames } from '../../src/frames/computeFrames.js';
import { findUvOverlaps } from '../../src/diagnose/uvOverlap.js';
import { noisyScan, sphere } from '../helpers/surfaces.js';

describe('Arena', () => {
  it('handsOutTheSameMemoryAgainWhenItFitsAndGrowsByDoubling', () => {
    const a = new Arena();
    const x = a.u32(0, 1000, 7);
    expect(x.length).toBe(1000);
    expect(x.every((v) => v === 7)).toBe(true);
    const first = a.allocatedBytes;
    expect(first).toBeGreaterThanOrEqual(4000);
    // A smaller or equal request of the same slot (any type) reuses the block.
    const y = a.f32(0, 500);
    expect(y.buffer).toBe(x.buffer);
    expect(a.allocatedBytes).toBe(first);
    // A larger one grows the block to at least twice its size.
    const z = a.u8(0, first + 1);
    expect(z.buffer.byteLength).toBeGreaterThanOrEqual(2 * first);
    expect(a.allocatedBytes).toBe(first + z.buffer.byteLength);
    // Another slot is other memory.
    expect(a.u32(1, 10).buffer).not.toBe(z.buffer);
  });

  it('growKeepsTheContentsAndFillsTheNewTail', () => {
    const a = new Arena();
    let x = a.u32(3, 4);
    x.set([1, 2, 3, 4]);
    x = a.growU32(3, x, 100_000, 9);
    expect(Array.from(x.subarray(0, 6))).toEqual([1, 2, 3, 4, 9, 9]);
    expect(x[99_999]).toBe(9);
    let f = a.f32(4, 2);
    f.set([0.5, -1]);
    f = a.growF32(4, f, 3, 2);
    expect(Array.from(f)).toEqual([0.5, -1, 2]);
  });

  it('trimLetsGoOfTheLargestBlocksFirst', () => {
    const a = new Arena();
    a.u8(0, 1 << 20); a.u8(1, 1 << 18); a.u8(2, 1 << 16);
    a.trim((1 << 18) + (1 << 16));
    expect(a.heldBytes()).toBe((1 << 18) + (1 << 16));
    a.trim(0);
    expect(a.heldBytes()).toBe(0);
  });
});

describe('results never live in the arena', () => {
  it('aSecondSolveOnThisThreadLeavesTheFirstResultAsItWas', () => {
    // Two different meshes solved one after the other: the first result (tangents, indices,
    // source vertices, undefined corners) must be unchanged by the second.
    const a = sphere({ n: 10 });
    const b = noisyScan({ n: 30 });
    for (const method of ['mikktspace', 'lengyel'] as const) {
      const r = computeFrames(a, { method, uvOrigin: a.uvOrigin });
      const copy = { t: r.tangents.slice(), i: r.indices.slice(), s: r.sourceVertex.slice(), u: r.undefinedCorners.slice() };
      computeFrames(b, { method, uvOrigin: b.uvOrigin });
      findUvOverlaps(b.indices, b.uvs, b.indices.length / 3);
      expect(r.tangents).toEqual(copy.t);
      expect(r.indices).toEqual(copy.i);
      expect(r.sourceVertex).toEqual(copy.s);
      expect(r.undefinedCorners).toEqual(copy.u);
    }
  });
});
