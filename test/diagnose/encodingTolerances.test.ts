/**
 * Unit-length and orthogonality checks know the encoding (KHR_mesh_quantization: NORMAL and
 * TANGENT as normalized BYTE or SHORT; glTF 2.0 specification 3.11: signed normalized
 * integers decode as c / (2^(n-1) - 1)). A unit vector rounded to the encoding is unit for
 * that encoding; a vector off by more than rounding is not.
 *
 *   one triangle, normal +z stored per vertex:   2
 *                                                |\
 *                                                0-1
 */
import { describe, expect, it } from 'vitest';
import { findBadNormals } from '../../src/diagnose/badNormals.js';
import { findUvOverlaps } from '../../src/diagnose/uvOverlap.js';
import { isStoredTangentValid } from '../../src/diagnose/storedTangents.js';
import { BYTE, FLOAT, SHORT } from '../../src/mesh/asset.js';
import {
  FLOAT_TANGENT_VALIDITY,
  UNIT_LENGTH_TOLERANCE,
  UV_OVERLAP_ABSOLUTE,
  componentHalfStep,
  encodingError,
  tangentValidityTolerances,
  unitLengthTolerance,
  uvOverlapAbsolute,
} from '../../src/mesh/tolerances.js';
import { UNSIGNED_SHORT } from '../../src/mesh/asset.js';

/** Deterministic directions spread over the sphere (golden-angle spiral). */
function directions(n: number): number[][] {
  const out: number[][] = [];
  for (let i = 0; i < n; i++) {
    const z = 1 - (2 * (i + 0.5)) / n, r = Math.sqrt(1 - z * z), a = i * 2.399963229728653;
    out.push([r * Math.cos(a), r * Math.sin(a), z]);
  }
  return out;
}

/** x rounded to a signed normalized integer of `max` steps and decoded (glTF 3.11). */
function quantize(x: number, max: number): number {
  return Math.max(-1, Math.round(x * max) / max);
}

describe('encoding-aware tolerances', () => {
  it('boundEveryRoundedUnitVectorAndStayTight', () => {
    for (const [type, max] of [[BYTE, 127], [SHORT, 32767]] as const) {
      let worst = 0;
      for (const d of directions(20000)) {
        const q = d.map((x) => quantize(x, max));
        worst = Math.max(worst, Math.abs(Math.hypot(q[0], q[1], q[2]) - 1));
      }
      expect(worst, String(type)).toBeLessThanOrEqual(unitLengthTolerance(type, true));
      // The bound is within a factor 2 of what rounding really does (not a loose guess).
      expect(worst, String(type)).toBeGreaterThan(encodingError(type, true) / 2);
    }
    expect(unitLengthTolerance(FLOAT, false)).toBe(UNIT_LENGTH_TOLERANCE);
    // Not normalized (not allowed for NORMAL): no widening.
    expect(unitLengthTolerance(BYTE, false)).toBe(UNIT_LENGTH_TOLERANCE);
  });

  it('byteNormalsRoundedFromUnitVectorsAreNotBadButShortNormalsOffByAsMuchAre', () => {
    // The unit normal (1, 1, 1) / sqrt(3) = 0.57735 each, rounded to BYTE: 73 / 127 each,
    // length 0.99559: off unit length by 4.4e-3, within BYTE's rounding, not within float's.
    const positions = new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0]);
    const indices = new Uint32Array([0, 1, 2]);
    const q = quantize(1 / Math.sqrt(3), 127);
    const normals = new Float32Array([q, q, q, q, q, q, q, q, q]);
    expect(Math.abs(Math.hypot(q, q, q) - 1)).toBeGreaterThan(UNIT_LENGTH_TOLERANCE);
    expect(findBadNormals(indices, positions, normals, 1, 3).nonUnit).toBe(3); // float tolerance
    expect(findBadNormals(indices, positions, normals, 1, 3, unitLengthTolerance(BYTE, true)).nonUnit).toBe(0);
    expect(findBadNormals(indices, positions, normals, 1, 3, unitLengthTolerance(SHORT, true)).nonUnit).toBe(3);
    // A BYTE normal really off unit length (0.9) is still bad.
    const short = new Float32Array([0, 0, 0.9, 0, 0, 0.9, 0, 0, 0.9]);
    expect(findBadNormals(indices, positions, short, 1, 3, unitLengthTolerance(BYTE, true)).nonUnit).toBe(3);
  });

  it('byteTangentsRoundedFromAnOrthonormalPairAreValid', () => {
    // Every direction d with a tangent orthogonal to it, both rounded to BYTE: valid for BYTE
    // tolerances; some are invalid with float tolerances (what the quantized samples tripped on).
    const tol = tangentValidityTolerances({ componentType: BYTE, normalized: true }, { componentType: BYTE, normalized: true });
    let invalidAsFloat = 0;
    const stored = new Float32Array(4), normal = new Float32Array(3);
    for (const d of directions(5000)) {
      // A tangent orthogonal to d: normalize(cross(d, axis)).
      const a = Math.abs(d[0]) < 0.9 ? [1, 0, 0] : [0, 1, 0];
      const t = [d[1] * a[2] - d[2] * a[1], d[2] * a[0] - d[0] * a[2], d[0] * a[1] - d[1] * a[0]];
      const l = Math.hypot(t[0], t[1], t[2]);
      for (let k = 0; k < 3; k++) { stored[k] = quantize(t[k] / l, 127); normal[k] = quantize(d[k], 127); }
      stored[3] = 1;
      expect(isStoredTangentValid(stored, normal, 0, tol)).toBe(true);
      if (!isStoredTangentValid(stored, normal, 0, FLOAT_TANGENT_VALIDITY)) invalidAsFloat++;
    }
    expect(invalidAsFloat).toBeGreaterThan(1000);
    // A tangent 3 degrees off orthogonal (cos 0.052) is invalid in any encoding.
    const c = Math.sin((3 * Math.PI) / 180);
    stored.set([Math.sqrt(1 - c * c), 0, c, 1]);
    normal.set([0, 0, 1]);
    expect(isStoredTangentValid(stored, normal, 0, tol)).toBe(false);
  });

  it('integerTexcoordsTouchWithinTheirRounding', () => {
    // Two triangles sharing the edge (0,0)-(100,100) in integer UV units (TEXCOORD as
    // UNSIGNED_SHORT, KHR_mesh_quantization), the second's corner on that edge rounded half a
    // step across it:   (0,100) 2      A = (0,0) (100,0) (100,100)
    //                     |  B  /      B = (0,0) (100,100) (0,100), with (0,0) replaced by
    //                     | / A |          (0.5,0): 0.35 units across A's diagonal
    //               (0,0) 0 --- 1
    const uvs = new Float32Array([0, 0, 100, 0, 100, 100, 0.5, 0, 100, 100, 0, 100]);
    const indices = new Uint32Array([0, 1, 2, 3, 4, 5]);
    expect(componentHalfStep(UNSIGNED_SHORT, false)).toBe(0.5);
    expect(componentHalfStep(FLOAT, false)).toBe(0);
    expect(findUvOverlaps(indices, uvs, 2).count).toBe(2); // float tolerance: an overlap
    expect(findUvOverlaps(indices, uvs, 2, null, null, { touching: uvOverlapAbsolute(UNSIGNED_SHORT, false) }).count).toBe(0);
    expect(uvOverlapAbsolute(FLOAT, false)).toBe(UV_OVERLAP_ABSOLUTE);
    // Three units across is more than rounding: still an overlap.
    uvs[6] = 4;
    expect(findUvOverlaps(indices, uvs, 2, null, null, { touching: uvOverlapAbsolute(UNSIGNED_SHORT, false) }).count).toBe(2);
  });

  it('tinyFacesOfQuantizedPositionsDoNotVoteANormalFlipped', () => {
    // Vertex 0 (normal +z) is used by one large face wound toward +z and by two slivers, one
    // step across, wound toward -z: with float positions the slivers outvote the face; with
    // positions rounded to integer steps their direction is within rounding and they abstain.
    //   large: 0 (0,0) 1 (100,0) 2 (0,100) (+z); slivers: twice 0, 3 (1,1), 4 (2,1.5) (-z, area 0.25).
    const positions = new Float32Array([0, 0, 0, 100, 0, 0, 0, 100, 0, 1, 1, 0, 2, 1, 0]);
    const normals = new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]);
    const indices = new Uint32Array([0, 1, 2, 0, 3, 4, 0, 3, 4]);
    expect(findBadNormals(indices, positions, normals, 3, 5).flipped).toBe(3); // vertices 0, 3, 4
    const q = findBadNormals(indices, positions, normals, 3, 5, UNIT_LENGTH_TOLERANCE, componentHalfStep(UNSIGNED_SHORT, false));
    expect(q.flipped).toBe(0);
  });
});
