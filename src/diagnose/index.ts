/**
 * Based on: the diagnostics list of DESIGN.md (degenerate UV and geometry, invalid values,
 * normals, mirroring, UV overlap, stored-vs-recomputed comparison). Re-exports them all.
 */
export {
  MAX_LISTED,
  findingFromMarks,
  locateTriangles,
  triangleCentroids,
  vertexFindingFromMarks,
  vertexPositions,
  type Finding,
  type TriangleLocations,
  type VertexFinding,
} from './finding.js';
export { findDegenerateUvTriangles } from './degenerateUv.js';
export { findDegenerateGeometry } from './degenerateGeometry.js';
export { countInvalidVertices, markInvalidVertices, markNonFiniteVertices } from './invalidValues.js';
export { findBadNormals, findDegenerateGeometryAndBadNormals, type BadNormals, type GeometryFindings } from './badNormals.js';
export { countMirroredTriangles, countMirrorSeamSplits, markMirroredTriangles } from './mirrored.js';
export { findUvOverlaps, trianglesOverlap, type UvOverlapStats } from './uvOverlap.js';
export {
  compareStoredTangents,
  countInvalidStoredTangents,
  isStoredTangentSetValid,
  isStoredTangentValid,
  type StoredTangentComparison,
} from './storedTangents.js';
