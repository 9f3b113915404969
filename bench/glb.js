// Writes a normal-mapped GLB from mesh arrays (benchmark inputs only): one mesh, one
// material whose normalTexture is an embedded 1x1 PNG, float attributes, uint32 indices.
import { writeFileSync } from 'node:fs';
import { crc32, deflateSync } from 'node:zlib';

function chunk(type, data) {
  const len = Buffer.alloc(4);
  len.writeUInt32BE(data.length);
  const td = Buffer.concat([Buffer.from(type, 'latin1'), data]);
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(td) >>> 0);
  return Buffer.concat([len, td, crc]);
}

// A 1x1 RGB PNG of (128,128,255): the flat tangent-space normal (common practice).
const ihdr = Buffer.from([0, 0, 0, 1, 0, 0, 0, 1, 8, 2, 0, 0, 0]);
const FLAT_PNG = Buffer.concat([
  Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
  chunk('IHDR', ihdr),
  chunk('IDAT', deflateSync(Buffer.from([0, 128, 128, 255]))),
  chunk('IEND', Buffer.alloc(0)),
]);

function pad4(n) {
  return (n + 3) & ~3;
}

/** Writes `m` ({positions, normals, uvs, indices}) to `file` as GLB. */
export function writeMeshGlb(file, m) {
  const parts = [m.positions, m.normals, m.uvs, m.indices, FLAT_PNG];
  const views = [];
  let offset = 0;
  for (const p of parts) {
    views.push({ buffer: 0, byteOffset: offset, byteLength: p.byteLength });
    offset = pad4(offset + p.byteLength);
  }
  const bin = Buffer.alloc(offset);
  let o = 0;
  for (const p of parts) {
    Buffer.from(p.buffer, p.byteOffset, p.byteLength).copy(bin, o);
    o = pad4(o + p.byteLength);
  }
  const vc = m.positions.length / 3;
  const min = [Infinity, Infinity, Infinity], max = [-Infinity, -Infinity, -Infinity];
  for (let i = 0; i < vc; i++) {
    for (let k = 0; k < 3; k++) {
      const x = m.positions[i * 3 + k];
      if (x < min[k]) min[k] = x;
      if (x > max[k]) max[k] = x;
    }
  }
  views[0].target = views[1].target = views[2].target = 34962;
  views[3].target = 34963;
  const json = {
    asset: { version: '2.0' },
    scene: 0,
    scenes: [{ nodes: [0] }],
    nodes: [{ mesh: 0 }],
    meshes: [{ primitives: [{ attributes: { POSITION: 0, NORMAL: 1, TEXCOORD_0: 2 }, indices: 3, material: 0 }] }],
    materials: [{ normalTexture: { index: 0 } }],
    textures: [{ source: 0 }],
    images: [{ bufferView: 4, mimeType: 'image/png' }],
    accessors: [
      { bufferView: 0, componentType: 5126, count: vc, type: 'VEC3', min, max },
      { bufferView: 1, componentType: 5126, count: vc, type: 'VEC3' },
      { bufferView: 2, componentType: 5126, count: vc, type: 'VEC2' },
      { bufferView: 3, componentType: 5125, count: m.indices.length, type: 'SCALAR' },
    ],
    bufferViews: views,
    buffers: [{ byteLength: bin.length }],
  };
  let text = JSON.stringify(json);
  while (text.length % 4) text += ' ';
  const jsonBytes = Buffer.from(text);
  const header = Buffer.alloc(12);
  const total = 12 + 8 + jsonBytes.length + 8 + bin.length;
  header.writeUInt32LE(0x46546c67, 0); header.writeUInt32LE(2, 4); header.writeUInt32LE(total, 8);
  const jh = Buffer.alloc(8); jh.writeUInt32LE(jsonBytes.length, 0); jh.writeUInt32LE(0x4e4f534a, 4);
  const bh = Buffer.alloc(8); bh.writeUInt32LE(bin.length, 0); bh.writeUInt32LE(0x004e4942, 4);
  writeFileSync(file, Buffer.concat([header, jh, jsonBytes, bh, bin]));
}
