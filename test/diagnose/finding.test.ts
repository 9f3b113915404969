/**
 * The shared finding shape: count plus the first MAX_LISTED indices, ascending, and the
 * diagnostics index re-exporting every check.
 *
 *   marks:  t = 0 1 2 3 4 5 ...
 *               0 1 0 1 1 0        -> count 3, triangles [1, 3, 4]
 */
import { describe, expect, it } from 'vitest';
import { MAX_LISTED, findingFromMarks } from '../../src/diagnose/finding.js';
import * as diagnose from '../../src/diagnose/index.js';

describe('findingFromMarks', () => {
  it('lists at most 1000 indices, the DESIGN.md report cap', () => {
    // Source: DESIGN.md report schema, "triangles: [first 1000 indices]".
    expect(MAX_LISTED).toBe(1000);
  });

  it('counts every marked triangle and lists the marked indices ascending', () => {
    const marks = new Uint8Array([0, 1, 0, 1, 1, 0]);
    expect(findingFromMarks(marks, 6)).toEqual({ count: 3, triangles: [1, 3, 4] });
  });

  it('reads only the first triangleCount marks', () => {
    const marks = new Uint8Array([1, 0, 1, 1]);
    expect(findingFromMarks(marks, 2)).toEqual({ count: 1, triangles: [0] });
  });

  it('keeps counting past the cap but lists only the first MAX_LISTED', () => {
    const marks = new Uint8Array(2500);
    for (let t = 0; t < 2500; t += 2) marks[t] = 1; // 1250 marked: 0, 2, 4, ...
    const f = findingFromMarks(marks, 2500);
    expect(f.count).toBe(1250);
    expect(f.triangles.length).toBe(MAX_LISTED);
    expect(f.triangles[0]).toBe(0);
    expect(f.triangles[MAX_LISTED - 1]).toBe(2 * (MAX_LISTED - 1));
  });
});

describe('diagnostics index', () => {
  it('re-exports every check', () => {
    for (const name of [
      'findDegenerateUvTriangles', 'findDegenerateGeometry', 'countInvalidVertices', 'markNonFiniteVertices',
      'findBadNormals', 'countMirroredTriangles', 'markMirroredTriangles', 'countMirrorSeamSplits',
      'findUvOverlaps', 'trianglesOverlap', 'compareStoredTangents', 'countInvalidStoredTangents',
      'isStoredTangentSetValid', 'isStoredTangentValid', 'findingFromMarks',
    ]) {
      expect(typeof (diagnose as Record<string, unknown>)[name], name).toBe('function');
    }
    expect(diagnose.MAX_LISTED).toBe(1000);
  });
});
