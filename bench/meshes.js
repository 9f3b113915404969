// Generated benchmark meshes (plain Node, deterministic): an indexed UV sphere with a u seam,
// and a scan-like noisy surface cut into many UV islands (many seams, some mirrored).

/** UV sphere with `rings` x `segments` quads (2 triangles each), poles included, seam duplicated. */
export function uvSphere(rings, segments) {
  const vc = (rings + 1) * (segments + 1);
  const positions = new Float32Array(vc * 3);
  const normals = new Float32Array(vc * 3);
  const uvs = new Float32Array(vc * 2);
  let v = 0;
  for (let r = 0; r <= rings; r++) {
    const theta = (r / rings) * Math.PI;
    const st = Math.sin(theta), ct = Math.cos(theta);
    for (let s = 0; s <= segments; s++) {
      const phi = (s / segments) * 2 * Math.PI;
      const x = st * Math.cos(phi), y = ct, z = -st * Math.sin(phi);
      positions[v * 3] = x; positions[v * 3 + 1] = y; positions[v * 3 + 2] = z;
      normals[v * 3] = x; normals[v * 3 + 1] = y; normals[v * 3 + 2] = z;
      uvs[v * 2] = s / segments; uvs[v * 2 + 1] = r / rings;
      v++;
    }
  }
  const indices = new Uint32Array(rings * segments * 6);
  let k = 0;
  for (let r = 0; r < rings; r++) {
    for (let s = 0; s < segments; s++) {
      const a = r * (segments + 1) + s, b = a + segments + 1;
      indices[k++] = a; indices[k++] = b; indices[k++] = a + 1;
      indices[k++] = a + 1; indices[k++] = b; indices[k++] = b + 1;
    }
  }
  return { positions, normals, uvs, indices };
}

function mulberry32(seed) {
  return function () {
    seed |= 0; seed = (seed + 0x6d2b79f5) | 0;
    let t = Math.imul(seed ^ (seed >>> 15), 1 | seed);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * Noisy height field of n x n quads, cut into UV islands of `island` x `island` quads packed
 * into one atlas; every other island is mirrored in u. Island borders duplicate their
 * vertices (UV seams), as a scan's unwrap would.
 */
export function noisySurface(n, island = 16, seed = 7) {
  const rnd = mulberry32(seed);
  const h = new Float32Array((n + 1) * (n + 1));
  for (let i = 0; i < h.length; i++) h[i] = (rnd() - 0.5) * (1 / n);
  const height = (i, j) => h[j * (n + 1) + i] + 0.1 * Math.sin(i * 0.05) * Math.cos(j * 0.04);
  const islands = Math.ceil(n / island);
  const perIsland = (island + 1) * (island + 1);
  const vc = islands * islands * perIsland;
  const positions = new Float32Array(vc * 3);
  const normals = new Float32Array(vc * 3);
  const uvs = new Float32Array(vc * 2);
  const indices = new Uint32Array(n * n * 6);
  let k = 0;
  for (let bj = 0; bj < islands; bj++) {
    for (let bi = 0; bi < islands; bi++) {
      const base = (bj * islands + bi) * perIsland;
      const mirrored = (bi + bj) & 1;
      for (let y = 0; y <= island; y++) {
        for (let x = 0; x <= island; x++) {
          const i = Math.min(n, bi * island + x), j = Math.min(n, bj * island + y);
          const v = base + y * (island + 1) + x;
          const hx = height(Math.min(n, i + 1), j) - height(Math.max(0, i - 1), j);
          const hy = height(i, Math.min(n, j + 1)) - height(i, Math.max(0, j - 1));
          const nx = -hx * n * 0.5, ny = -hy * n * 0.5, nl = Math.hypot(nx, ny, 1);
          positions[v * 3] = i / n; positions[v * 3 + 1] = j / n; positions[v * 3 + 2] = height(i, j);
          normals[v * 3] = nx / nl; normals[v * 3 + 1] = ny / nl; normals[v * 3 + 2] = 1 / nl;
          // Islands packed side by side in one atlas (cell 1/islands, 5% margin), none stacked.
          const u = x / island;
          uvs[v * 2] = (bi + 0.05 + 0.9 * (mirrored ? 1 - u : u)) / islands;
          uvs[v * 2 + 1] = (bj + 0.05 + 0.9 * (y / island)) / islands;
        }
      }
      for (let y = 0; y < island; y++) {
        for (let x = 0; x < island; x++) {
          if (bi * island + x >= n || bj * island + y >= n) continue;
          const a = base + y * (island + 1) + x, b = a + island + 1;
          indices[k++] = a; indices[k++] = a + 1; indices[k++] = b;
          indices[k++] = a + 1; indices[k++] = b + 1; indices[k++] = b;
        }
      }
    }
  }
  return { positions, normals, uvs, indices: indices.subarray(0, k) };
}
