/**
 * Based on: the library contract in DESIGN.md (tangents / indices / sourceVertex). Test-only
 * comparison of a frame solve's output against exact per-corner frames of the input mesh.
 */
import type { FrameResult } from '../../src/mesh/types.js';
import type { SurfaceMesh } from './surfaces.js';

/** What a comparison measured. Angles in degrees. */
export interface FrameComparison {
  verticesIn: number;
  verticesOut: number;
  /** Contract violations (shapes, out-of-range indices, corners re-pointed to other data). */
  structural: string[];
  /** Output vertices shared by corners whose exact frames differ (should have been split). */
  conflicts: string[];
  /** Output vertices whose w differs from the expected one. */
  wMismatches: string[];
  wMismatchCount: number;
  /** Largest | |t| - 1 | and largest |dot(t, N)| over output vertices. */
  maxUnitError: number;
  maxNormalDot: number;
  maxDeg: number;
  meanDeg: number;
  /** The same statistics over output vertices whose source is not on a border or seam. */
  interiorMaxDeg: number;
  interiorMeanDeg: number;
  /** Where the largest error occurred: output vertex and its position. */
  worst: string;
}

/**
 * Compares `r` (a solve of `mesh`) with the mesh's exact corner frames. Each output vertex
 * takes the exact frame of the corners that reference it; `wSign` multiplies the expected w
 * (-1 checks a solve run with the opposite uvOrigin).
 */
export function compareWithExact(mesh: SurfaceMesh, r: FrameResult, wSign = 1): FrameComparison {
  const nIn = mesh.positions.length / 3;
  const nOut = r.sourceVertex.length;
  const structural: string[] = [];
  const conflicts: string[] = [];
  const wMismatches: string[] = [];
  const res: FrameComparison = {
    verticesIn: nIn, verticesOut: nOut, structural, conflicts, wMismatches, wMismatchCount: 0,
    maxUnitError: 0, maxNormalDot: 0, maxDeg: 0, meanDeg: 0, interiorMaxDeg: 0, interiorMeanDeg: 0, worst: '',
  };
  if (r.tangents.length !== nOut * 4) structural.push(`tangents.length ${r.tangents.length} != 4 * ${nOut}`);
  // Counts the analytic mesh fixes: no degenerate UVs, so no fallback; the mirrored triangles
  // (v upward) are those of the mirrored half, or all the others when the origin is read wrong.
  let mirrored = 0;
  for (let t = 0; t < mesh.triangleSide.length; t++) if (mesh.triangleSide[t] * wSign < 0) mirrored++;
  const st = r.stats;
  if (st.splitVertices !== nOut - nIn) structural.push(`stats.splitVertices ${st.splitVertices} != ${nOut} - ${nIn}`);
  if (st.degenerateUvTriangles !== 0) structural.push(`stats.degenerateUvTriangles ${st.degenerateUvTriangles} != 0`);
  if (st.fallbackTangents !== 0) structural.push(`stats.fallbackTangents ${st.fallbackTangents} != 0`);
  if (st.mirroredTriangles !== mirrored) structural.push(`stats.mirroredTriangles ${st.mirroredTriangles} != ${mirrored}`);
  if (r.indices.length !== mesh.indices.length) {
    structural.push(`indices.length ${r.indices.length} != input ${mesh.indices.length}`);
    return res;
  }
  for (let o = 0; o < nOut; o++) {
    if (r.sourceVertex[o] >= nIn) { structural.push(`sourceVertex[${o}] = ${r.sourceVertex[o]} >= ${nIn}`); return res; }
  }
  const P = mesh.positions, N = mesh.normals, UV = mesh.uvs;
  const expT = new Float64Array(nOut * 3);
  const expW = new Float64Array(nOut);
  const expBoundary = new Uint8Array(nOut);
  const seen = new Uint8Array(nOut);
  for (let c = 0; c < r.indices.length; c++) {
    const o = r.indices[c];
    if (o >= nOut) { structural.push(`indices[${c}] = ${o} >= ${nOut}`); return res; }
    const s = r.sourceVertex[o], i = mesh.indices[c];
    // The corner must still refer to the same data (a welded twin with equal attributes is fine).
    if (P[s * 3] !== P[i * 3] || P[s * 3 + 1] !== P[i * 3 + 1] || P[s * 3 + 2] !== P[i * 3 + 2] ||
        N[s * 3] !== N[i * 3] || N[s * 3 + 1] !== N[i * 3 + 1] || N[s * 3 + 2] !== N[i * 3 + 2] ||
        UV[s * 2] !== UV[i * 2] || UV[s * 2 + 1] !== UV[i * 2 + 1]) {
      if (structural.length < 5) structural.push(`corner ${c}: output vertex ${o} copies input ${s}, but the input corner is vertex ${i} with different data`);
      continue;
    }
    const ex = mesh.exactCorner.tangent[c * 3], ey = mesh.exactCorner.tangent[c * 3 + 1], ez = mesh.exactCorner.tangent[c * 3 + 2];
    const ew = mesh.exactCorner.w[c] * wSign;
    if (!seen[o]) {
      seen[o] = 1;
      expT[o * 3] = ex; expT[o * 3 + 1] = ey; expT[o * 3 + 2] = ez; expW[o] = ew;
      expBoundary[o] = mesh.boundary[i];
    } else {
      // Exact tangents are float32-rounded unit vectors: equal frames agree to ~1e-7.
      const d = ex * expT[o * 3] + ey * expT[o * 3 + 1] + ez * expT[o * 3 + 2];
      if (ew !== expW[o] || d < 1 - 1e-6) {
        if (conflicts.length < 5) {
          conflicts.push(`output vertex ${o} (input ${s}, at ${fmtP(P, s)}) is used by corners with exact w ${expW[o]} and ${ew}, tangent dot ${d.toFixed(6)}`);
        } else if (conflicts.length === 5) conflicts.push('...');
      }
    }
  }
  let sum = 0, count = 0, isum = 0, icount = 0;
  for (let o = 0; o < nOut; o++) {
    if (!seen[o]) { if (structural.length < 5) structural.push(`output vertex ${o} is referenced by no triangle`); continue; }
    const s = r.sourceVertex[o];
    const tx = r.tangents[o * 4], ty = r.tangents[o * 4 + 1], tz = r.tangents[o * 4 + 2], w = r.tangents[o * 4 + 3];
    const len = Math.hypot(tx, ty, tz);
    res.maxUnitError = Math.max(res.maxUnitError, Math.abs(len - 1));
    res.maxNormalDot = Math.max(res.maxNormalDot, Math.abs(tx * N[s * 3] + ty * N[s * 3 + 1] + tz * N[s * 3 + 2]) / len);
    if (w !== expW[o]) {
      res.wMismatchCount++;
      if (wMismatches.length < 5) wMismatches.push(`output vertex ${o} (input ${s}, at ${fmtP(P, s)}, uv ${UV[s * 2].toFixed(4)},${UV[s * 2 + 1].toFixed(4)}): expected w ${expW[o]}, got ${w}`);
    }
    const ex = expT[o * 3], ey = expT[o * 3 + 1], ez = expT[o * 3 + 2];
    const cx = ty * ez - tz * ey, cy = tz * ex - tx * ez, cz = tx * ey - ty * ex;
    const deg = (Math.atan2(Math.hypot(cx, cy, cz), tx * ex + ty * ey + tz * ez) * 180) / Math.PI;
    if (!(deg <= res.maxDeg)) {
      res.maxDeg = deg;
      res.worst = `output vertex ${o} (input ${s}, at ${fmtP(P, s)}): got (${tx.toFixed(5)},${ty.toFixed(5)},${tz.toFixed(5)}) exact (${ex.toFixed(5)},${ey.toFixed(5)},${ez.toFixed(5)})`;
    }
    sum += deg; count++;
    if (!expBoundary[o]) { res.interiorMaxDeg = Math.max(res.interiorMaxDeg, deg); isum += deg; icount++; }
  }
  res.meanDeg = count ? sum / count : NaN;
  res.interiorMeanDeg = icount ? isum / icount : NaN;
  return res;
}

function fmtP(P: Float32Array, v: number): string {
  return `(${P[v * 3].toFixed(4)},${P[v * 3 + 1].toFixed(4)},${P[v * 3 + 2].toFixed(4)})`;
}
