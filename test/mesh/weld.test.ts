// Welding by exact equality of position, normal and uv (the MikkTSpace welding rule).
import { describe, expect, it } from 'vitest';
import { weldPositions, weldVertices } from '../../src/mesh/weld.js';

describe('weldVertices', () => {
  it('weldsEqualVerticesToTheLowestIndex', () => {
    // Vertices 0 and 2 are equal; 1 differs only in uv; 3 equals 0 with -0 for +0.
    const p = new Float32Array([0, 0, 0, 0, 0, 0, 0, 0, 0, -0, 0, 0]);
    const n = new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]);
    const uv = new Float32Array([0, 0, 1, 0, 0, 0, 0, 0]);
    const out = new Uint32Array(4);
    expect(weldVertices(out, p, n, uv, 4)).toBe(2);
    expect(Array.from(out)).toEqual([0, 1, 0, 0]);
  });

  it('neverWeldsNaNVerticesAndStaysLinear', () => {
    // NaN equals nothing: 100,000 NaN vertices stay apart (and must not pile into one probe run).
    const count = 100_000;
    const p = new Float32Array(count * 3).fill(NaN);
    const out = new Uint32Array(count);
    expect(weldVertices(out, p, new Float32Array(count * 3), new Float32Array(count * 2), count)).toBe(count);
    for (let v = 0; v < count; v += 997) expect(out[v]).toBe(v);
  });
});

describe('weldPositions', () => {
  it('weldsByPositionOnly', () => {
    const p = new Float32Array([1, 2, 3, 4, 5, 6, 1, 2, 3, NaN, 0, 0, NaN, 0, 0]);
    const out = new Uint32Array(5);
    expect(weldPositions(out, p, 5)).toBe(4);
    expect(Array.from(out)).toEqual([0, 1, 0, 3, 4]);
  });
});
