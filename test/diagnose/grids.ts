/**
 * Test-only grid meshes for the diagnostics. An n x n grid of unit quads in the z = 0 plane,
 * each quad split along its rising diagonal into two counter-clockwise triangles, normals +z,
 * uv = (x, y) / n with v measured upward:
 *
 *   y ^
 *   2 +------+------+        quad (i, j) holds triangles 2 * (j * n + i) + 0 and + 1:
 *     | 5  / | 7  / |          +0: (i, j) -> (i+1, j) -> (i+1, j+1)   (below the diagonal)
 *     |  /   |  /   |          +1: (i, j) -> (i+1, j+1) -> (i, j+1)   (above the diagonal)
 *   1 +------+------+
 *     | 1  / | 3  / |        triangle numbers of a 2 x 2 grid shown in the upper-left halves;
 *     |  /   |  /   |        the lower-right halves are 0, 2, 4, 6.
 *   0 +------+------+--> x
 *     0      1      2
 *
 * `weldedGrid` shares the (n+1)^2 vertices (vertex (i, j) = j * (n+1) + i); `unweldedGrid`
 * gives every triangle its own three vertices (vertex 3t + k = corner k of triangle t), so a
 * test can change one triangle's values without touching its neighbours.
 */

export interface GridMesh {
  positions: Float32Array;
  normals: Float32Array;
  uvs: Float32Array;
  indices: Uint32Array;
  triangleCount: number;
  vertexCount: number;
}

/** The three (i, j) grid corners of triangle t of an n x n grid. */
function triangleCorners(n: number, t: number): number[][] {
  const q = t >> 1, i = q % n, j = (q - i) / n;
  return t % 2 === 0
    ? [[i, j], [i + 1, j], [i + 1, j + 1]]
    : [[i, j], [i + 1, j + 1], [i, j + 1]];
}

/** n x n grid with shared vertices. */
export function weldedGrid(n: number): GridMesh {
  const vertexCount = (n + 1) * (n + 1);
  const triangleCount = 2 * n * n;
  const positions = new Float32Array(vertexCount * 3);
  const normals = new Float32Array(vertexCount * 3);
  const uvs = new Float32Array(vertexCount * 2);
  for (let j = 0; j <= n; j++) {
    for (let i = 0; i <= n; i++) {
      const v = j * (n + 1) + i;
      positions[v * 3] = i; positions[v * 3 + 1] = j;
      normals[v * 3 + 2] = 1;
      uvs[v * 2] = i / n; uvs[v * 2 + 1] = j / n;
    }
  }
  const indices = new Uint32Array(triangleCount * 3);
  for (let t = 0; t < triangleCount; t++) {
    const c = triangleCorners(n, t);
    for (let k = 0; k < 3; k++) indices[t * 3 + k] = c[k][1] * (n + 1) + c[k][0];
  }
  return { positions, normals, uvs, indices, triangleCount, vertexCount };
}

/** n x n grid where every triangle has its own three vertices. */
export function unweldedGrid(n: number): GridMesh {
  const triangleCount = 2 * n * n;
  const vertexCount = triangleCount * 3;
  const positions = new Float32Array(vertexCount * 3);
  const normals = new Float32Array(vertexCount * 3);
  const uvs = new Float32Array(vertexCount * 2);
  const indices = new Uint32Array(vertexCount);
  for (let t = 0; t < triangleCount; t++) {
    const c = triangleCorners(n, t);
    for (let k = 0; k < 3; k++) {
      const v = t * 3 + k;
      indices[v] = v;
      positions[v * 3] = c[k][0]; positions[v * 3 + 1] = c[k][1];
      normals[v * 3 + 2] = 1;
      uvs[v * 2] = c[k][0] / n; uvs[v * 2 + 1] = c[k][1] / n;
    }
  }
  return { positions, normals, uvs, indices, triangleCount, vertexCount };
}

/** Sets the uvs of the three corners of triangle t of an unwelded grid. */
export function setTriangleUvs(mesh: GridMesh, t: number, uv: number[]): void {
  for (let k = 0; k < 6; k++) mesh.uvs[t * 6 + k] = uv[k];
}

/** Sets the positions of the three corners of triangle t of an unwelded grid. */
export function setTrianglePositions(mesh: GridMesh, t: number, p: number[]): void {
  for (let k = 0; k < 9; k++) mesh.positions[t * 9 + k] = p[k];
}
