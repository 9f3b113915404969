/**
 * Stored tangents: validity, and disagreement with recomputed frames corner by corner.
 *
 *   2 x 2 welded grid, normals +z, uv = (x, y) / 2 with v upward; 8 triangles, 24 corners.
 *   Corners per vertex (how many triangles use it):
 *     6 (1) --- 7 (3) --- 8 (2)
 *       |     /   |     /   |
 *     3 (3) --- 4 (6) --- 5 (3)
 *       |     /   |     /   |
 *     0 (2) --- 1 (3) --- 2 (1)
 *   The exact frame everywhere is t = (1, 0, 0), w = +1 (the plane's dP/du; Source: METHODS.md
 *   worked check, v upward). "computed" below is that exact frame, one output vertex per input
 *   vertex unless a test adds a split.
 */
import { describe, expect, it } from 'vitest';
import {
  compareStoredTangents,
  countInvalidStoredTangents,
  isStoredTangentSetValid,
  isStoredTangentValid,
} from '../../src/diagnose/storedTangents.js';
import { computeFrames } from '../../src/frames/computeFrames.js';
import { weldedGrid } from './grids.js';
import { buildGltf, glbBytes } from '../helpers/gltfBuilder.js';
// @ts-ignore -- the validator ships no type declarations
import validator from 'gltf-validator';

const DEG = Math.PI / 180;

function setup() {
  const g = weldedGrid(2);
  const exact = new Float32Array(g.vertexCount * 4);
  for (let v = 0; v < g.vertexCount; v++) { exact[v * 4] = 1; exact[v * 4 + 3] = 1; }
  const stored = exact.slice();
  const sourceVertex = new Uint32Array(g.vertexCount).map((_, v) => v);
  return { g, stored, computed: exact, sourceVertex };
}

/** Stored tangent of vertex v rotated by `deg` about +z (stays unit and orthogonal to the normal). */
function rotateAboutZ(stored: Float32Array, v: number, deg: number): void {
  stored[v * 4] = Math.cos(deg * DEG);
  stored[v * 4 + 1] = Math.sin(deg * DEG);
}

/** Stored tangent of vertex v tilted by `deg` out of the surface plane toward +z. */
function tiltOutOfPlane(stored: Float32Array, v: number, deg: number): void {
  stored[v * 4] = Math.cos(deg * DEG);
  stored[v * 4 + 2] = Math.sin(deg * DEG);
}

describe('compareStoredTangents', () => {
  it('reports full agreement for stored tangents equal to the computed ones', () => {
    const { g, stored, computed, sourceVertex } = setup();
    expect(compareStoredTangents(stored, computed, sourceVertex, g.indices, null, g.normals, g.vertexCount)).toEqual({
      invalid: 0, undefinedFrames: 0, meanAngleDeg: 0, p95AngleDeg: 0, maxAngleDeg: 0, signMismatch: 0, mismatched: 0, compared: 24,
    });
  });

  it('a tangent rotated by 10 degrees at a one-corner vertex: max 10, mean over corners, p95 0', () => {
    const { g, stored, computed, sourceVertex } = setup();
    rotateAboutZ(stored, 2, 10);
    const r = compareStoredTangents(stored, computed, sourceVertex, g.indices, null, g.normals, g.vertexCount);
    expect(r.maxAngleDeg).toBeCloseTo(10, 4);
    expect(r.meanAngleDeg).toBeCloseTo(10 / 24, 5);
    expect(r.p95AngleDeg).toBe(0); // nearest rank 23 of 24 sorted corner angles is still 0
    expect([r.invalid, r.signMismatch, r.mismatched, r.compared]).toEqual([0, 0, 1, 24]);
  });

  it('a tangent rotated by 10 degrees at the six-corner centre vertex weighs six corners', () => {
    const { g, stored, computed, sourceVertex } = setup();
    rotateAboutZ(stored, 4, 10);
    const r = compareStoredTangents(stored, computed, sourceVertex, g.indices, null, g.normals, g.vertexCount);
    expect(r.maxAngleDeg).toBeCloseTo(10, 4);
    expect(r.meanAngleDeg).toBeCloseTo(60 / 24, 4);
    expect(r.p95AngleDeg).toBeCloseTo(10, 4);
    expect(r.mismatched).toBe(6);
  });

  it('the mismatch tolerance decides which angles count as mismatched', () => {
    const { g, stored, computed, sourceVertex } = setup();
    rotateAboutZ(stored, 2, 0.5);
    rotateAboutZ(stored, 6, 3);
    expect(compareStoredTangents(stored, computed, sourceVertex, g.indices, null, g.normals, g.vertexCount).mismatched).toBe(1);
    expect(compareStoredTangents(stored, computed, sourceVertex, g.indices, null, g.normals, g.vertexCount, 0.25).mismatched).toBe(2);
    expect(compareStoredTangents(stored, computed, sourceVertex, g.indices, null, g.normals, g.vertexCount, 5).mismatched).toBe(0);
  });

  it('a flipped w gives one sign mismatch per corner of that vertex', () => {
    const { g, stored, computed, sourceVertex } = setup();
    stored[2 * 4 + 3] = -1; // one corner
    let r = compareStoredTangents(stored, computed, sourceVertex, g.indices, null, g.normals, g.vertexCount);
    expect([r.signMismatch, r.mismatched, r.maxAngleDeg, r.invalid]).toEqual([1, 1, 0, 0]);
    stored[8 * 4 + 3] = -1; // two corners more
    r = compareStoredTangents(stored, computed, sourceVertex, g.indices, null, g.normals, g.vertexCount);
    expect(r.signMismatch).toBe(3);
  });

  it('opposite directions are 180 degrees apart', () => {
    const { g, stored, computed, sourceVertex } = setup();
    stored[6 * 4] = -1;
    const r = compareStoredTangents(stored, computed, sourceVertex, g.indices, null, g.normals, g.vertexCount);
    expect(r.maxAngleDeg).toBe(180);
  });

  it('leaves invalid stored tangents out of the angle statistics and counts their vertices as invalid', () => {
    // Source: glTF 2.0 spec 3.7.2.1 (TANGENT: XYZ a normalized vector, W +1 or -1): such a value
    // breaks the standard, so how far it points from the recomputed frame says nothing.
    const { g, stored, computed, sourceVertex } = setup();
    stored[0 * 4] = 1.01; //          v0 non-unit (2 corners): left out
    stored[1 * 4 + 3] = 0.5; //       v1 w not +-1 (3 corners): left out
    tiltOutOfPlane(stored, 3, 5); //  v3 not orthogonal to the normal (3 corners, 5 degrees): left out
    tiltOutOfPlane(stored, 5, 0.3); // v5 within the orthogonality tolerance: valid, compared (3 corners)
    stored[6 * 4 + 1] = NaN; //       v6 non-finite (1 corner): left out
    stored[8 * 4] = 0; //             v8 zero xyz (2 corners): left out
    const r = compareStoredTangents(stored, computed, sourceVertex, g.indices, null, g.normals, g.vertexCount);
    expect(r.invalid).toBe(5);
    expect(r.compared).toBe(24 - 2 - 3 - 3 - 1 - 2);
    expect(r.undefinedFrames).toBe(0);
    expect(r.signMismatch).toBe(0);
    expect(r.maxAngleDeg).toBeCloseTo(0.3, 4);
    expect(r.meanAngleDeg).toBeCloseTo((3 * 0.3) / 13, 4);
    expect(r.mismatched).toBe(0);
  });

  it('marksTheMismatchedCorners', () => {
    // v2 rotated 10 degrees (its one corner) and v4 flipped in w (six corners); v6 non-unit (not compared).
    const { g, stored, computed, sourceVertex } = setup();
    rotateAboutZ(stored, 2, 10);
    stored[4 * 4 + 3] = -1;
    stored[6 * 4] = 1.5;
    const corners = new Uint8Array(g.indices.length).fill(7); // every entry is written
    const r = compareStoredTangents(stored, computed, sourceVertex, g.indices, null, g.normals, g.vertexCount, 1, undefined, corners);
    const marked = [...corners.keys()].filter((c) => corners[c]);
    expect(marked.length).toBe(r.mismatched);
    expect(r.mismatched).toBe(7);
    // Each marked corner is a corner of vertex 2 or 4, and every such corner is marked.
    expect(marked.every((c) => g.indices[c] === 2 || g.indices[c] === 4)).toBe(true);
    expect(g.indices.filter((v) => v === 2 || v === 4).length).toBe(7);
    expect(r.invalid).toBe(1);
  });

  it('leaves corners with an undefined recomputed frame out of the statistics and counts them apart', () => {
    // Vertex 2 (one corner, triangle 0) and vertex 6 (one corner, triangle 7) are marked
    // undefined; their stored tangents point 90 degrees away with the other sign (a default some
    // other implementation wrote there). Source: METHODS.md step 8.
    const { g, stored, computed, sourceVertex } = setup();
    stored.set([0, 1, 0, -1], 2 * 4);
    stored.set([0, 1, 0, -1], 6 * 4);
    const undefinedCorners = new Uint8Array(24);
    for (let c = 0; c < 24; c++) if (g.indices[c] === 2 || g.indices[c] === 6) undefinedCorners[c] = 1;
    const plain = compareStoredTangents(stored, computed, sourceVertex, g.indices, null, g.normals, g.vertexCount);
    expect([plain.maxAngleDeg, plain.signMismatch, plain.mismatched, plain.compared]).toEqual([90, 2, 2, 24]);
    const r = compareStoredTangents(stored, computed, sourceVertex, g.indices, undefinedCorners, g.normals, g.vertexCount);
    expect(r).toEqual({
      invalid: 0, undefinedFrames: 2, meanAngleDeg: 0, p95AngleDeg: 0, maxAngleDeg: 0, signMismatch: 0, mismatched: 0, compared: 22,
    });
  });

  it('marks the corners of a triangle with collapsed UVs as undefined when the solve has nothing else there', () => {
    // The 2 x 2 grid plus a separate triangle 8 (vertices 9, 10, 11, away from the grid) whose
    // three UVs are one point: no triangle gives its vertices a direction. Its stored tangent
    // is (0, 1, 0), w = -1 (valid, but not what our fallback writes).
    //   grid (0..8) as above         9 ---- 10      uv(9) = uv(10) = uv(11) = (0.5, 0.5)
    //                                  \   /
    //                                   11
    const { g, stored } = setup();
    const positions = new Float32Array([...g.positions, 5, 0, 0, 6, 0, 0, 5.5, -1, 0]);
    const normals = new Float32Array([...g.normals, 0, 0, 1, 0, 0, 1, 0, 0, 1]);
    const uvs = new Float32Array([...g.uvs, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5]);
    const indices = new Uint32Array([...g.indices, 9, 11, 10]);
    const stored12 = new Float32Array([...stored, 0, 1, 0, -1, 0, 1, 0, -1, 0, 1, 0, -1]);
    for (const method of ['mikktspace', 'lengyel'] as const) {
      const f = computeFrames({ positions, normals, uvs, indices }, { method, uvOrigin: 'bottom-left' });
      expect(Array.from(f.undefinedCorners)).toEqual([...new Array(24).fill(0), 1, 1, 1]);
      const r = compareStoredTangents(stored12, f.tangents, f.sourceVertex, f.indices, f.undefinedCorners, normals, 12);
      expect([r.undefinedFrames, r.compared, r.signMismatch, r.invalid]).toEqual([3, 24, 0, 0]);
      expect(r.maxAngleDeg).toBeLessThan(1e-3);
    }
  });

  it('compares each corner with the output vertex it uses after a split', () => {
    // Output vertex 9 copies input vertex 4 with t = (0,1,0), w = -1; triangles 6 and 7 use it.
    const { g, stored, sourceVertex } = setup();
    const computed = new Float32Array(10 * 4);
    for (let v = 0; v < 9; v++) { computed[v * 4] = 1; computed[v * 4 + 3] = 1; }
    computed.set([0, 1, 0, -1], 9 * 4);
    const outSource = new Uint32Array([...sourceVertex, 4]);
    const outIndices = g.indices.slice();
    for (const t of [6, 7]) for (let k = 0; k < 3; k++) if (outIndices[t * 3 + k] === 4) outIndices[t * 3 + k] = 9;
    const r = compareStoredTangents(stored, computed, outSource, outIndices, null, g.normals, g.vertexCount);
    expect(r.signMismatch).toBe(2);
    expect(r.maxAngleDeg).toBe(90);
    expect(r.meanAngleDeg).toBeCloseTo(180 / 24, 10);
    expect(r.compared).toBe(24);
  });

  it('finds the exact frames in agreement with both methods, and every w flipped for the other uv origin', () => {
    const { g, stored } = setup();
    for (const method of ['mikktspace', 'lengyel'] as const) {
      const up = computeFrames(g, { method, uvOrigin: 'bottom-left' });
      const r = compareStoredTangents(stored, up.tangents, up.sourceVertex, up.indices, up.undefinedCorners, g.normals, g.vertexCount);
      expect(r.maxAngleDeg).toBeLessThan(1e-3);
      expect(r.signMismatch).toBe(0);
      // Source: METHODS.md glTF facts: read as top-left, t is unchanged and w flips.
      const down = computeFrames(g, { method, uvOrigin: 'top-left' });
      const d = compareStoredTangents(stored, down.tangents, down.sourceVertex, down.indices, down.undefinedCorners, g.normals, g.vertexCount);
      expect(d.maxAngleDeg).toBeLessThan(1e-3);
      expect(d.signMismatch).toBe(24);
    }
  });

  it('reports zero angles when nothing can be compared', () => {
    const { g, computed, sourceVertex } = setup();
    const stored = new Float32Array(g.vertexCount * 4).fill(NaN);
    expect(compareStoredTangents(stored, computed, sourceVertex, g.indices, null, g.normals, g.vertexCount)).toEqual({
      invalid: 9, undefinedFrames: 0, meanAngleDeg: 0, p95AngleDeg: 0, maxAngleDeg: 0, signMismatch: 0, mismatched: 0, compared: 0,
    });
  });
});

describe('stored tangent validity', () => {
  it('accepts unit, orthogonal tangents with w = +-1 and rejects each kind of defect', () => {
    const normals = new Float32Array([0, 0, 1]);
    const ok = (t: number[], n: Float32Array | null = normals) => isStoredTangentValid(new Float32Array(t), n, 0);
    expect(ok([1, 0, 0, 1])).toBe(true);
    expect(ok([0, -1, 0, -1])).toBe(true);
    // Source: glTF 2.0 spec 3.7.2.1 (TANGENT: XYZ normalized, W +1 or -1).
    expect(ok([1, 0, 0, 0])).toBe(false);
    expect(ok([1, 0, 0, 0.999])).toBe(false);
    expect(ok([1.01, 0, 0, 1])).toBe(false);
    expect(ok([1.0001, 0, 0, 1])).toBe(true); // within UNIT_LENGTH_TOLERANCE
    expect(ok([0, 0, 0, 1])).toBe(false);
    expect(ok([NaN, 0, 0, 1])).toBe(false);
    expect(ok([1, 0, 0, Infinity])).toBe(false);
    const c = Math.cos(5 * DEG), s = Math.sin(5 * DEG);
    expect(ok([c, 0, s, 1])).toBe(false); // 5 degrees out of the surface plane
    expect(ok([c, 0, s, 1], null)).toBe(true); // no normal: orthogonality not judged
    expect(ok([c, 0, s, 1], new Float32Array([0, 0, 0]))).toBe(true); // zero normal: not judged
    expect(ok([c, 0, s, 1], new Float32Array([0, 0, 2]))).toBe(false); // a non-unit normal still has a direction
  });

  it('isStoredTangentSetValid is true only when every vertex is valid', () => {
    const { g, stored } = setup();
    expect(isStoredTangentSetValid(stored, g.normals, g.vertexCount)).toBe(true);
    expect(countInvalidStoredTangents(stored, g.normals, g.vertexCount)).toBe(0);
    stored[8 * 4 + 3] = 0;
    expect(isStoredTangentSetValid(stored, g.normals, g.vertexCount)).toBe(false);
    expect(isStoredTangentSetValid(stored, g.normals, 8)).toBe(true); // only vertices below the count
    expect(countInvalidStoredTangents(stored, g.normals, g.vertexCount)).toBe(1);
  });
});

describe('stored tangent validity against the Khronos glTF-Validator', () => {
  it('flags the same vertices as the validator for non-unit xyz and w other than +-1', async () => {
    // Source: Khronos gltf-validator (npm, the version in package-lock.json): TANGENT xyz beyond
    // its unit-length tolerance is ACCESSOR_VECTOR3_NON_UNIT, a w other than +-1 is
    // ACCESSOR_INVALID_SIGN. Its tolerance is | |xyz| - 1 | > 0.00674, read from the installed
    // validator's code (not from memory); the lengths below are far from any tolerance we use.
    //   two triangles (0,1,2), (3,4,5) in the z = 0 plane, normals +z, one tangent per vertex:
    //   0 unit, 1 length 1.00001, 2 length 1.02, 3 length 0.98, 4 w = 0.5, 5 w = -1
    const tangents = new Float32Array([
      1, 0, 0, 1,
      1.00001, 0, 0, 1,
      0, 1.02, 0, 1,
      0.98, 0, 0, -1,
      0, 1, 0, 0.5,
      -1, 0, 0, -1,
    ]);
    const positions = new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0, 2, 0, 0, 3, 0, 0, 2, 1, 0]);
    const normals = new Float32Array(18);
    for (let v = 0; v < 6; v++) normals[v * 3 + 2] = 1;
    const { json, bin } = buildGltf([{
      attributes: {
        POSITION: { array: positions, type: 'VEC3' },
        NORMAL: { array: normals, type: 'VEC3' },
        TANGENT: { array: tangents, type: 'VEC4' },
      },
    }]);
    const report: any = await validator.validateBytes(glbBytes(json, bin), { maxIssues: 0, writeTimestamp: false });
    const flagged = new Set<number>();
    for (const m of report.issues.messages as any[]) {
      if (m.code !== 'ACCESSOR_VECTOR3_NON_UNIT' && m.code !== 'ACCESSOR_INVALID_SIGN') continue;
      const at = /indices `?(\d+)/.exec(m.message);
      expect(at).not.toBeNull();
      flagged.add(Math.floor(Number(at![1]) / 4));
    }
    expect([...flagged].sort()).toEqual([2, 3, 4]);
    const ours = [0, 1, 2, 3, 4, 5].filter((v) => !isStoredTangentValid(tangents, normals, v));
    expect(ours).toEqual([...flagged].sort());
  });
});
