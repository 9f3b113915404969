/**
 * A large normal-mapped GLB for tests that need a bake to take a while (killing it mid-write,
 * stopping it on a timeout): an n x n grid of quads sharing their vertices, gently waved in z,
 * 2 n^2 triangles, 32-bit indices. Built directly (glTF 2.0 specification 3.6, 4.4) with
 * glbBytes from gltfBuilder.ts.
 *
 *   (0,n) +----+----+ (n,n)     quad (i, j): a = j(n+1)+i, b = a+1, c = a+n+2, d = a+n+1
 *         |  / |  / |           triangles (a, b, c) and (a, c, d)
 *         +----+----+           uv = (i/n, 1 - j/n) (glTF: v downward)
 *   (0,0) +----+----+ (n,0)
 */
import { glbBytes } from './gltfBuilder.js';

/** GLB bytes of the n x n grid (n = 1000 gives 2 million triangles, about 56 MB). */
export function bigGridGlb(n: number): Uint8Array {
  const side = n + 1;
  const vertexCount = side * side;
  const positions = new Float32Array(vertexCount * 3);
  const normals = new Float32Array(vertexCount * 3);
  const uvs = new Float32Array(vertexCount * 2);
  for (let j = 0, v = 0; j <= n; j++) {
    for (let i = 0; i <= n; i++, v++) {
      positions[v * 3] = i / n;
      positions[v * 3 + 1] = j / n;
      positions[v * 3 + 2] = 0.01 * Math.sin(i * 0.1) * Math.cos(j * 0.1);
      normals[v * 3 + 2] = 1;
      uvs[v * 2] = i / n;
      uvs[v * 2 + 1] = 1 - j / n;
    }
  }
  const indices = new Uint32Array(n * n * 6);
  for (let j = 0, k = 0; j < n; j++) {
    for (let i = 0; i < n; i++, k += 6) {
      const a = j * side + i;
      indices[k] = a;
      indices[k + 1] = a + 1;
      indices[k + 2] = a + side + 1;
      indices[k + 3] = a;
      indices[k + 4] = a + side + 1;
      indices[k + 5] = a + side;
    }
  }
  const arrays = [positions, normals, uvs, indices];
  const bin = new Uint8Array(arrays.reduce((s, a) => s + a.byteLength, 0));
  const bufferViews: any[] = [];
  let offset = 0;
  for (const a of arrays) {
    bin.set(new Uint8Array(a.buffer, a.byteOffset, a.byteLength), offset);
    bufferViews.push({ buffer: 0, byteOffset: offset, byteLength: a.byteLength });
    offset += a.byteLength;
  }
  const json = {
    asset: { version: '2.0', generator: 'tanframe test bigGridGlb' },
    scene: 0,
    scenes: [{ nodes: [0] }],
    nodes: [{ mesh: 0 }],
    meshes: [{ primitives: [{ attributes: { POSITION: 0, NORMAL: 1, TEXCOORD_0: 2 }, indices: 3, material: 0 }] }],
    materials: [{ normalTexture: { index: 0 } }],
    textures: [{ source: 0 }],
    images: [{ uri: 'grid_normal.png' }],
    buffers: [{ byteLength: bin.byteLength }],
    bufferViews,
    accessors: [
      { bufferView: 0, componentType: 5126, count: vertexCount, type: 'VEC3', min: [0, 0, -0.01], max: [1, 1, 0.01] },
      { bufferView: 1, componentType: 5126, count: vertexCount, type: 'VEC3' },
      { bufferView: 2, componentType: 5126, count: vertexCount, type: 'VEC2' },
      { bufferView: 3, componentType: 5125, count: indices.length, type: 'SCALAR' },
    ],
  };
  return glbBytes(json, bin);
}
