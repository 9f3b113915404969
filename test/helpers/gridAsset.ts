/**
 * A normal-mapped grid asset for CLI tests, with every triangle on its own three vertices so a
 * test can plant a defect in one triangle without touching its neighbours.
 *
 * An n x n grid of unit quads in the z = 0 plane, normals +z, each quad split along its
 * rising diagonal into two counter-clockwise triangles. Texture coordinates follow glTF
 * (origin top-left, v downward): u = x / n, v = 1 - y / n, so the texture is not mirrored.
 *
 *   y ^                       quad (i, j) holds triangles 2 * (j * n + i) + 0 and + 1:
 *   2 +------+------+           +0: (i, j) -> (i+1, j) -> (i+1, j+1)   (below the diagonal)
 *     | 5  / | 7  / |           +1: (i, j) -> (i+1, j+1) -> (i, j+1)   (above the diagonal)
 *     |  /   |  /   |         vertex 3t + k is corner k of triangle t.
 *   1 +------+------+
 *     | 1  / | 3  / |         The exact frame everywhere: t = (1, 0, 0) (dP/du) and w = +1
 *     |  /   |  /   |         (the bitangent cross(N, t) = +y points toward decreasing glTF v).
 *   0 +------+------+--> x    Source: METHODS.md, glTF facts and the worked check.
 *     0      1      2
 */
import { GltfBuilder, writeGlb } from './gltfBuilder.js';

export interface GridAsset {
  n: number;
  triangleCount: number;
  vertexCount: number;
  positions: Float32Array;
  normals: Float32Array;
  uvs: Float32Array;
  indices: Uint32Array;
  /** Stored TANGENT (4 per vertex), or null for none. */
  tangents: Float32Array | null;
}

/** The three (i, j) grid corners of triangle t. */
function corners(n: number, t: number): number[][] {
  const q = t >> 1, i = q % n, j = (q - i) / n;
  return t % 2 === 0 ? [[i, j], [i + 1, j], [i + 1, j + 1]] : [[i, j], [i + 1, j + 1], [i, j + 1]];
}

/** A clean n x n grid; `withTangents` stores the exact frame (1, 0, 0, +1) at every vertex. */
export function gridAsset(n: number, withTangents = false): GridAsset {
  const triangleCount = 2 * n * n;
  const vertexCount = triangleCount * 3;
  const positions = new Float32Array(vertexCount * 3);
  const normals = new Float32Array(vertexCount * 3);
  const uvs = new Float32Array(vertexCount * 2);
  const indices = new Uint32Array(vertexCount);
  const tangents = withTangents ? new Float32Array(vertexCount * 4) : null;
  for (let t = 0; t < triangleCount; t++) {
    const c = corners(n, t);
    for (let k = 0; k < 3; k++) {
      const v = t * 3 + k;
      indices[v] = v;
      positions[v * 3] = c[k][0];
      positions[v * 3 + 1] = c[k][1];
      normals[v * 3 + 2] = 1;
      uvs[v * 2] = c[k][0] / n;
      uvs[v * 2 + 1] = 1 - c[k][1] / n;
      if (tangents) { tangents[v * 4] = 1; tangents[v * 4 + 3] = 1; }
    }
  }
  return { n, triangleCount, vertexCount, positions, normals, uvs, indices, tangents };
}

/** UV of corner k of triangle t. */
export function cornerUv(g: GridAsset, t: number, k: number): [number, number] {
  return [g.uvs[(t * 3 + k) * 2], g.uvs[(t * 3 + k) * 2 + 1]];
}

/** Sets the UV of corner k of triangle t. */
export function setCornerUv(g: GridAsset, t: number, k: number, uv: [number, number]): void {
  g.uvs[(t * 3 + k) * 2] = uv[0];
  g.uvs[(t * 3 + k) * 2 + 1] = uv[1];
}

// A 1 x 1 PNG (common 8-bit RGBA encoding, from memory); the pixels are never read.
const PNG_1X1 = 'data:image/png;base64,iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mNk+M9QDwADhgGAWjR9awAAAABJRU5ErkJggg==';

/**
 * Writes `<dir>/<name>.glb`: one mesh named `name`, one primitive with POSITION, NORMAL,
 * TEXCOORD_0 (and TANGENT when the grid has them), a material whose normal texture samples
 * TEXCOORD_0. Returns the path.
 */
export async function writeGridGlb(dir: string, name: string, g: GridAsset): Promise<string> {
  const b = new GltfBuilder();
  const attributes: Record<string, any> = {
    POSITION: { array: g.positions, type: 'VEC3' },
    NORMAL: { array: g.normals, type: 'VEC3' },
    TEXCOORD_0: { array: g.uvs, type: 'VEC2' },
  };
  if (g.tangents) attributes.TANGENT = { array: g.tangents, type: 'VEC4' };
  b.addPrimitive({ attributes, indices: g.indices, material: 0 });
  const { json, bin } = b.build();
  json.meshes[0].name = name;
  json.materials[0].normalTexture = { index: 0 };
  json.textures = [{ source: 0 }];
  json.images = [{ uri: PNG_1X1 }];
  // min/max of POSITION must be numbers even when a test plants a NaN (JSON has no NaN).
  const pos = json.accessors[json.meshes[0].primitives[0].attributes.POSITION];
  pos.min = pos.min.map((x: number | null) => (Number.isFinite(x) ? x : 0));
  pos.max = pos.max.map((x: number | null) => (Number.isFinite(x) ? x : g.n));
  return writeGlb(dir, name, json, bin);
}
