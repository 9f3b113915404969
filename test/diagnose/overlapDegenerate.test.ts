/**
 * The UV-overlap check's marks of the triangles without UV area are the degenerate-UV marks
 * (findDegenerateUvTriangles with its default epsilon), NaN and infinite UVs included.
 */
import { describe, expect, it } from 'vitest';
import { findDegenerateUvTriangles } from '../../src/diagnose/degenerateUv.js';
import { findUvOverlaps } from '../../src/diagnose/uvOverlap.js';

describe('findUvOverlaps degenerate marks', () => {
  it('equal the degenerate-UV marks on a soup with colinear, repeated, tiny and non-finite UVs', () => {
    let state = 4242;
    const rnd = () => ((state = (Math.imul(state, 1103515245) + 12345) >>> 0) / 4294967296);
    const vertexCount = 400, triangleCount = 1200;
    const uvs = new Float32Array(vertexCount * 2);
    for (let i = 0; i < uvs.length; i++) uvs[i] = rnd();
    const special = [NaN, Infinity, -Infinity, 0, -0, 1e-30, 1e30];
    for (let v = 0; v < 40; v++) uvs[v * 2 + (v & 1)] = special[v % special.length];
    // Colinear triples and a repeated point.
    uvs.set([0.1, 0.1, 0.2, 0.2, 0.3, 0.3, 0.5, 0.5], 100 * 2);
    const indices = new Uint32Array(triangleCount * 3);
    for (let i = 0; i < indices.length; i++) indices[i] = Math.floor(rnd() * vertexCount);
    indices.set([100, 101, 102, 103, 103, 50, 100, 102, 101], 0);
    const expected = new Uint8Array(triangleCount);
    const f = findDegenerateUvTriangles(indices, uvs, triangleCount, undefined, expected);
    expect(f.count).toBeGreaterThan(20); // the soup does hold degenerate and non-finite triangles
    expect(f.count).toBeLessThan(triangleCount);
    const degenerate = new Uint8Array(triangleCount).fill(9);
    findUvOverlaps(indices, uvs, triangleCount, null, null, { degenerate });
    expect(degenerate).toEqual(expected);
  });
});
