/**
 * Invalid values: vertices (not floats) holding NaN or +-Infinity.
 *
 *   6 vertices   0    1         2    3               4    5
 *                ok   NaN pos   ok   Inf normal      ok   NaN tangent w
 *                                    and -Inf uv (still one vertex)
 */
import { describe, expect, it } from 'vitest';
import { countInvalidVertices, markInvalidVertices, markNonFiniteVertices } from '../../src/diagnose/invalidValues.js';

function clean(vertexCount: number) {
  const positions = new Float32Array(vertexCount * 3).map((_, i) => i * 0.5);
  const normals = new Float32Array(vertexCount * 3);
  const uvs = new Float32Array(vertexCount * 2).map((_, i) => i / 10);
  const tangents = new Float32Array(vertexCount * 4);
  for (let v = 0; v < vertexCount; v++) {
    normals[v * 3 + 2] = 1;
    tangents[v * 4] = 1;
    tangents[v * 4 + 3] = 1;
  }
  return { positions, normals, uvs, tangents };
}

describe('countInvalidVertices', () => {
  it('counts each vertex with a NaN or infinite value once, across all attributes', () => {
    const m = clean(6);
    m.positions[1 * 3 + 2] = NaN;
    m.normals[3 * 3 + 0] = Infinity;
    m.uvs[3 * 2 + 1] = -Infinity;
    m.tangents[5 * 4 + 3] = NaN;
    expect(countInvalidVertices(6, m.positions, m.normals, m.uvs, m.tangents)).toBe(3);
  });

  it('marksTheInvalidVerticesSoTheReportCanListThem', () => {
    const m = clean(6);
    m.positions[1 * 3 + 2] = NaN;
    m.normals[3 * 3 + 0] = Infinity;
    m.uvs[3 * 2 + 1] = -Infinity;
    m.tangents[5 * 4 + 3] = NaN;
    const marks = new Uint8Array(6);
    expect(markInvalidVertices(marks, 6, m.positions, m.normals, m.uvs, m.tangents)).toBe(3);
    expect([...marks]).toEqual([0, 1, 0, 1, 0, 1]);
  });

  it('skips absent attributes', () => {
    const m = clean(6);
    m.tangents[2 * 4] = NaN;
    m.uvs[4 * 2] = NaN;
    expect(countInvalidVertices(6, m.positions, m.normals, m.uvs, m.tangents)).toBe(2);
    expect(countInvalidVertices(6, m.positions, m.normals, null, null)).toBe(0);
    expect(countInvalidVertices(6, m.positions, null, m.uvs, null)).toBe(1);
  });

  it('treats the largest finite float32 values as valid', () => {
    const m = clean(2);
    m.positions[0] = 3.4028234663852886e38; // FLT_MAX (Source: IEEE 754 binary32)
    m.positions[1] = -3.4028234663852886e38;
    m.uvs[0] = 1.401298464324817e-45; // smallest subnormal
    expect(countInvalidVertices(2, m.positions, m.normals, m.uvs, m.tangents)).toBe(0);
  });

  it('finds every vertex when all values are bad', () => {
    const positions = new Float32Array(12).fill(NaN);
    expect(countInvalidVertices(4, positions, null, null, null)).toBe(4);
  });
});

describe('markNonFiniteVertices', () => {
  it('marks vertices of one attribute and returns how many it marked', () => {
    //  uvs:  v0 ok, v1 (NaN, 0), v2 ok, v3 (0, Inf)
    const marks = new Uint8Array(4);
    const uvs = new Float32Array([0, 0, NaN, 0, 1, 1, 0, Infinity]);
    expect(markNonFiniteVertices(marks, uvs, 2, 4)).toBe(2);
    expect(Array.from(marks)).toEqual([0, 1, 0, 1]);
    // Further attributes add to the same marks (a second UV set with v0 bad).
    expect(markNonFiniteVertices(marks, new Float32Array([NaN, 0, 0, 0, 0, 0, 0, 0]), 2, 4)).toBe(1);
    expect(Array.from(marks)).toEqual([1, 1, 0, 1]);
  });
});
