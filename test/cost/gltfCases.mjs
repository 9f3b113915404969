// Generators of glTF files whose structure (not their size) used to make tanframe's cost
// explode, for the cost-growth checks in gltf.test.ts and for measuring by hand:
//   node test/cost/gltfCases.mjs <case> <scale> <out-file>
// Plain JavaScript so that a child process can run it without the TypeScript loader.
// Layout rules: glTF 2.0 specification, 3.6 (buffers, views, accessors), 3.7.2.2 (morph
// targets) and 4.4 (GLB header and chunks); KHR_draco_mesh_compression for the Draco case.
import { writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';

const align4 = (n) => (n + 3) & ~3;

/** A 1x1 PNG (RGBA 128,128,255,255: a flat normal), so materials name a normal texture. */
const FLAT_NORMAL_PNG =
  'iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR4nGNoaPj/HwAGggL/s75RMwAAAABJRU5ErkJggg==';

/** Appends typed arrays as buffer views of one buffer. */
class Bin {
  constructor() { this.parts = []; this.length = 0; this.views = []; }
  view(array, target) {
    const bytes = new Uint8Array(array.buffer, array.byteOffset, array.byteLength);
    const offset = align4(this.length);
    this.parts.push({ offset, bytes });
    this.length = offset + bytes.byteLength;
    const v = { buffer: 0, byteOffset: offset, byteLength: bytes.byteLength };
    if (target) v.target = target;
    this.views.push(v);
    return this.views.length - 1;
  }
  bytes() {
    const out = new Uint8Array(align4(this.length));
    for (const p of this.parts) out.set(p.bytes, p.offset);
    return out;
  }
}

function minMax(a, k) {
  const min = new Array(k).fill(Infinity), max = new Array(k).fill(-Infinity);
  for (let i = 0; i < a.length; i++) { const c = i % k; if (a[i] < min[c]) min[c] = a[i]; if (a[i] > max[c]) max[c] = a[i]; }
  return { min, max };
}

/** GLB bytes: header, JSON chunk (space padded), BIN chunk. */
export function glb(json, bin) {
  const text = new TextEncoder().encode(JSON.stringify(json));
  const jsonLen = align4(text.length);
  const binLen = align4(bin.length);
  const total = 12 + 8 + jsonLen + (bin.length ? 8 + binLen : 0);
  const out = new Uint8Array(total);
  const dv = new DataView(out.buffer);
  dv.setUint32(0, 0x46546c67, true);
  dv.setUint32(4, 2, true);
  dv.setUint32(8, total, true);
  dv.setUint32(12, jsonLen, true);
  dv.setUint32(16, 0x4e4f534a, true);
  out.fill(0x20, 20, 20 + jsonLen);
  out.set(text, 20);
  if (bin.length) {
    dv.setUint32(20 + jsonLen, binLen, true);
    dv.setUint32(24 + jsonLen, 0x004e4942, true);
    out.set(bin, 28 + jsonLen);
  }
  return out;
}

function normalMapped(json) {
  json.images = [{ uri: `data:image/png;base64,${FLAT_NORMAL_PNG}` }];
  json.textures = [{ source: 0 }];
  json.materials = [{ normalTexture: { index: 0 } }];
}

/**
 * `prims` primitives over one shared vertex buffer of prims x 2 x `m` vertices: primitive s
 * indexes only its own slice, a strip of m - 1 quads (2 rows of m vertices):
 *
 *   s*2m+m  +---+---+ ... +  s*2m+2m-1
 *           | / | / |     |
 *   s*2m    +---+---+ ... +  s*2m+m-1
 */
export function sharedBuffer(prims, m = 50) {
  const V = prims * 2 * m;
  const pos = new Float32Array(V * 3), nrm = new Float32Array(V * 3), uv = new Float32Array(V * 2);
  for (let s = 0; s < prims; s++) {
    for (let r = 0; r < 2; r++) {
      for (let i = 0; i < m; i++) {
        const v = s * 2 * m + r * m + i;
        pos[3 * v] = i; pos[3 * v + 1] = r; pos[3 * v + 2] = s;
        nrm[3 * v + 2] = 1;
        uv[2 * v] = i / (m - 1); uv[2 * v + 1] = 1 - r;
      }
    }
  }
  const bin = new Bin();
  const accessors = [
    { bufferView: bin.view(pos, 34962), componentType: 5126, count: V, type: 'VEC3', ...minMax(pos, 3) },
    { bufferView: bin.view(nrm, 34962), componentType: 5126, count: V, type: 'VEC3' },
    { bufferView: bin.view(uv, 34962), componentType: 5126, count: V, type: 'VEC2' },
  ];
  const primitives = [];
  for (let s = 0; s < prims; s++) {
    const idx = new Uint32Array((m - 1) * 6);
    const b = s * 2 * m;
    for (let i = 0, k = 0; i < m - 1; i++, k += 6) {
      idx[k] = b + i; idx[k + 1] = b + i + 1; idx[k + 2] = b + m + i + 1;
      idx[k + 3] = b + i; idx[k + 4] = b + m + i + 1; idx[k + 5] = b + m + i;
    }
    accessors.push({ bufferView: bin.view(idx, 34963), componentType: 5125, count: idx.length, type: 'SCALAR' });
    primitives.push({ attributes: { POSITION: 0, NORMAL: 1, TEXCOORD_0: 2 }, indices: accessors.length - 1, material: 0 });
  }
  const data = bin.bytes();
  const json = {
    asset: { version: '2.0' }, scene: 0, scenes: [{ nodes: [0] }], nodes: [{ mesh: 0 }],
    meshes: [{ primitives }], accessors, bufferViews: bin.views, buffers: [{ byteLength: data.length }],
  };
  normalMapped(json);
  return glb(json, data);
}

/** An n x n grid (positions, normals +z, uvs, 32-bit indices) as arrays. */
function grid(n) {
  const side = n + 1, V = side * side;
  const pos = new Float32Array(V * 3), nrm = new Float32Array(V * 3), uv = new Float32Array(V * 2);
  for (let j = 0, v = 0; j <= n; j++) {
    for (let i = 0; i <= n; i++, v++) {
      pos[3 * v] = i / n; pos[3 * v + 1] = j / n; nrm[3 * v + 2] = 1;
      uv[2 * v] = i / n; uv[2 * v + 1] = 1 - j / n;
    }
  }
  const idx = new Uint32Array(n * n * 6);
  for (let j = 0, k = 0; j < n; j++) {
    for (let i = 0; i < n; i++, k += 6) {
      const a = j * side + i;
      idx[k] = a; idx[k + 1] = a + 1; idx[k + 2] = a + side + 1;
      idx[k + 3] = a; idx[k + 4] = a + side + 1; idx[k + 5] = a + side;
    }
  }
  return { pos, nrm, uv, idx, V };
}

/**
 * One normal-mapped n x n grid with `targets` morph targets that all name the same POSITION
 * and NORMAL delta accessors (a gentle bulge in z, its normals tilted).
 */
export function sharedMorphs(n, targets) {
  const g = grid(n);
  const dp = new Float32Array(g.V * 3), dn = new Float32Array(g.V * 3);
  for (let v = 0; v < g.V; v++) {
    dp[3 * v + 2] = 0.1 * Math.sin(g.pos[3 * v] * 3);
    dn[3 * v] = -0.3 * Math.cos(g.pos[3 * v] * 3);
  }
  const bin = new Bin();
  const accessors = [
    { bufferView: bin.view(g.pos, 34962), componentType: 5126, count: g.V, type: 'VEC3', ...minMax(g.pos, 3) },
    { bufferView: bin.view(g.nrm, 34962), componentType: 5126, count: g.V, type: 'VEC3' },
    { bufferView: bin.view(g.uv, 34962), componentType: 5126, count: g.V, type: 'VEC2' },
    { bufferView: bin.view(g.idx, 34963), componentType: 5125, count: g.idx.length, type: 'SCALAR' },
    { bufferView: bin.view(dp, 34962), componentType: 5126, count: g.V, type: 'VEC3', ...minMax(dp, 3) },
    { bufferView: bin.view(dn, 34962), componentType: 5126, count: g.V, type: 'VEC3' },
  ];
  const t = [];
  for (let i = 0; i < targets; i++) t.push({ POSITION: 4, NORMAL: 5 });
  const data = bin.bytes();
  const json = {
    asset: { version: '2.0' }, scene: 0, scenes: [{ nodes: [0] }], nodes: [{ mesh: 0 }],
    meshes: [{ primitives: [{ attributes: { POSITION: 0, NORMAL: 1, TEXCOORD_0: 2 }, indices: 3, material: 0, targets: t }], weights: new Array(targets).fill(0) }],
    accessors, bufferViews: bin.views, buffers: [{ byteLength: data.length }],
  };
  normalMapped(json);
  return glb(json, data);
}

/**
 * A .gltf of one triangle whose `extras` hold `count` small objects ({"k":[0]} each, 10 bytes
 * of JSON): text made mostly of many small values.
 */
export function manySmallObjects(count) {
  const one = '{"k":[0]},';
  const extras = `[${one.repeat(count - 1)}{"k":[0]}]`;
  const pos = new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0]);
  const b64 = Buffer.from(pos.buffer).toString('base64');
  const head = {
    asset: { version: '2.0' },
    meshes: [{ primitives: [{ attributes: { POSITION: 0 } }] }],
    accessors: [{ bufferView: 0, componentType: 5126, count: 3, type: 'VEC3', min: [0, 0, 0], max: [1, 1, 0] }],
    bufferViews: [{ buffer: 0, byteLength: 36 }],
    buffers: [{ byteLength: 36, uri: `data:application/octet-stream;base64,${b64}` }],
  };
  const text = JSON.stringify(head);
  return new TextEncoder().encode(`${text.slice(0, -1)},"extras":${extras}}`);
}

let encoderModule = null;

/** Encodes a triangle mesh with the encoder of the `draco3d` package (whose decoder we use). */
async function dracoStream(g) {
  encoderModule ??= createRequire(import.meta.url)('draco3d').createEncoderModule({});
  const m = await encoderModule;
  const encoder = new m.Encoder(), builder = new m.MeshBuilder(), mesh = new m.Mesh();
  builder.AddFacesToMesh(mesh, g.idx.length / 3, g.idx);
  const ids = {
    POSITION: builder.AddFloatAttributeToMesh(mesh, m.POSITION, g.V, 3, g.pos),
    NORMAL: builder.AddFloatAttributeToMesh(mesh, m.NORMAL, g.V, 3, g.nrm),
    TEXCOORD_0: builder.AddFloatAttributeToMesh(mesh, m.TEX_COORD, g.V, 2, g.uv),
  };
  encoder.SetAttributeQuantization(m.POSITION, 11);
  encoder.SetAttributeQuantization(m.NORMAL, 8);
  encoder.SetAttributeQuantization(m.TEX_COORD, 10);
  const out = new m.DracoInt8Array();
  const length = encoder.EncodeMeshToDracoBuffer(mesh, out);
  const bytes = new Uint8Array(length);
  for (let i = 0; i < length; i++) bytes[i] = out.GetValue(i) & 0xff;
  m.destroy(out); m.destroy(mesh); m.destroy(builder); m.destroy(encoder);
  return { bytes, ids };
}

/**
 * A GLB whose one Draco primitive declares `declaredTriangles` triangles (and 3 per triangle
 * vertices) while its stream holds an n x n grid (2 n^2 triangles). With declaredTriangles
 * null the declared counts are the stream's own (a consistent file).
 */
export async function dracoCounts(n, declaredTriangles = 1) {
  const g = grid(n);
  const { bytes, ids } = await dracoStream(g);
  const bin = new Bin();
  const view = bin.view(bytes);
  const tris = declaredTriangles ?? g.idx.length / 3;
  const verts = declaredTriangles === null ? g.V : 3 * declaredTriangles;
  const accessors = [
    { componentType: 5126, count: verts, type: 'VEC3', min: [0, 0, 0], max: [1, 1, 0] },
    { componentType: 5126, count: verts, type: 'VEC3' },
    { componentType: 5126, count: verts, type: 'VEC2' },
    { componentType: 5125, count: tris * 3, type: 'SCALAR' },
  ];
  const data = bin.bytes();
  const json = {
    asset: { version: '2.0' }, scene: 0, scenes: [{ nodes: [0] }], nodes: [{ mesh: 0 }],
    extensionsUsed: ['KHR_draco_mesh_compression'], extensionsRequired: ['KHR_draco_mesh_compression'],
    meshes: [{ primitives: [{ attributes: { POSITION: 0, NORMAL: 1, TEXCOORD_0: 2 }, indices: 3, material: 0,
      extensions: { KHR_draco_mesh_compression: { bufferView: view, attributes: ids } } }] }],
    accessors, bufferViews: bin.views, buffers: [{ byteLength: data.length }],
  };
  normalMapped(json);
  return glb(json, data);
}

/** Builds case `name` at `scale` (1, 4, ...): the bytes of the file. */
export async function buildCase(name, scale, size = 1) {
  switch (name) {
    case 'shared-buffer': return sharedBuffer(Math.round(250 * scale * size));
    case 'shared-morphs': return sharedMorphs(Math.round(40 * Math.sqrt(scale * size)), Math.round(100 * scale * size));
    case 'json-objects': return manySmallObjects(Math.round(100_000 * scale * size));
    case 'draco-counts': return dracoCounts(Math.round(100 * Math.sqrt(scale * size)), 1);
    case 'draco-grid': return dracoCounts(Math.round(100 * Math.sqrt(scale * size)), null);
    default: throw new Error(`unknown case ${name}`);
  }
}

if (process.argv[1] && import.meta.url.endsWith(process.argv[1].split('/').pop())) {
  const [name, scale, out, size] = process.argv.slice(2);
  writeFileSync(out, await buildCase(name, Number(scale), Number(size ?? 1)));
}
