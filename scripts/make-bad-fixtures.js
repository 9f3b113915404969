#!/usr/bin/env node
/**
 * Generates the hostile-input corpus:
 *   fixtures/bad/     files tanframe must refuse, each named for its fault, and
 *                     fixtures/bad/expected.json mapping each file to the error code it must get;
 *   fixtures/values/  files with hostile *values* (NaN, infinities, zero normals, degenerate or
 *                     empty primitives, missing textures) that must be processed, not refused,
 *                     and fixtures/values/expected.json saying what each must report;
 *   fixtures/maps/    normal maps (and meshes) `convert-map` must refuse, and
 *                     fixtures/maps/expected.json mapping each map to its code (and its mesh).
 *
 * Based on: glTF 2.0 specification (3.6 buffers, buffer views and accessors, 3.7 meshes,
 * 3.9 materials, 4.4 GLB file format), RFC 2397 (data: URIs), RFC 3986 (percent-encoding),
 * the Wavefront OBJ / MTL formats and the PNG specification (signature, IHDR / IDAT / IEND,
 * CRC-32, a zlib stream made of one stored deflate block with its Adler-32).
 *
 * Plain Node ESM with no dependencies. Deterministic byte for byte: no clocks, no randomness,
 * no compression library (the one PNG uses a stored deflate block).
 *
 * Usage: node scripts/make-bad-fixtures.js [fixturesFolder]   (default: fixtures)
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { PNG_SIGNATURE, pngChunk } from './png-chunks.js';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const fixturesDir = path.resolve(process.argv[2] ?? path.join(repoRoot, 'fixtures'));
const badDir = path.join(fixturesDir, 'bad');
const valuesDir = path.join(fixturesDir, 'values');
const mapsDir = path.join(fixturesDir, 'maps');

// ---------------------------------------------------------------------------------------------
// A tiny PNG (1x1 RGB, the flat tangent-space normal 128,128,255) for the normal texture.


/** A zlib stream holding `raw` in one stored (uncompressed) deflate block. Source: RFC 1950, RFC 1951 3.2.4. */
function zlibStored(raw) {
  let a = 1;
  let b = 0;
  for (const x of raw) {
    a = (a + x) % 65521;
    b = (b + a) % 65521;
  }
  const out = Buffer.alloc(2 + 5 + raw.length + 4);
  out[0] = 0x78; // CM 8, CINFO 7
  out[1] = 0x01; // FCHECK so that (0x78 << 8 | 0x01) % 31 === 0, no dictionary
  out[2] = 0x01; // BFINAL 1, BTYPE 00 (stored)
  out.writeUInt16LE(raw.length, 3);
  out.writeUInt16LE(~raw.length & 0xffff, 5);
  Buffer.from(raw).copy(out, 7);
  out.writeUInt32BE(((b << 16) | a) >>> 0, 7 + raw.length);
  return out;
}

function flatNormalPng() {
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(1, 0);
  ihdr.writeUInt32BE(1, 4);
  ihdr[8] = 8; // bit depth
  ihdr[9] = 2; // truecolour RGB
  return Buffer.concat([
    PNG_SIGNATURE,
    pngChunk('IHDR', ihdr),
    pngChunk('IDAT', zlibStored([0, 128, 128, 255])), // filter 0, one pixel
    pngChunk('IEND', Buffer.alloc(0)),
  ]);
}

const PNG = flatNormalPng();
const PNG_DATA_URI = `data:image/png;base64,${PNG.toString('base64')}`;

// ---------------------------------------------------------------------------------------------
// The valid base asset: a unit quad, two triangles, normal-mapped so that it is baked.
//
//   3 ---- 2        positions in the z = 0 plane, normals +Z,
//   |    / |        uv (0,1) (1,1) (1,0) (0,0)  (glTF: v grows downward)
//   0 ---- 1        indices 0 1 2, 0 2 3

const align4 = (n) => (n + 3) & ~3;

function bytesOf(typed) {
  return Buffer.from(typed.buffer, typed.byteOffset, typed.byteLength);
}

/** Lays out `arrays` (typed arrays) one view each, 4-byte aligned; returns {bin, views}. */
function layout(arrays) {
  const views = [];
  const parts = [];
  let length = 0;
  for (const a of arrays) {
    const offset = align4(length);
    if (offset > length) parts.push(Buffer.alloc(offset - length));
    parts.push(bytesOf(a));
    views.push({ buffer: 0, byteOffset: offset, byteLength: a.byteLength });
    length = offset + a.byteLength;
  }
  if (align4(length) > length) parts.push(Buffer.alloc(align4(length) - length));
  return { bin: Buffer.concat(parts), views };
}

function minMax(arr, n) {
  const min = new Array(n).fill(Infinity);
  const max = new Array(n).fill(-Infinity);
  for (let i = 0; i < arr.length; i++) {
    const x = arr[i];
    if (!Number.isFinite(x)) continue;
    if (x < min[i % n]) min[i % n] = x;
    if (x > max[i % n]) max[i % n] = x;
  }
  for (let k = 0; k < n; k++) {
    if (!Number.isFinite(min[k])) min[k] = 0;
    if (!Number.isFinite(max[k])) max[k] = 0;
  }
  return { min, max };
}

/**
 * A one-primitive asset. `opts.positions`, `normals`, `uvs` (Float32Array) and `indices`
 * (Uint16Array or null for non-indexed) default to the quad. Returns {json, bin}.
 */
function asset(opts = {}) {
  const positions = opts.positions ?? new Float32Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0]);
  const normals = opts.normals ?? new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]);
  const uvs = opts.uvs ?? new Float32Array([0, 1, 1, 1, 1, 0, 0, 0]);
  const indices = opts.indices === undefined ? new Uint16Array([0, 1, 2, 0, 2, 3]) : opts.indices;
  const arrays = [positions, normals, uvs];
  if (indices) arrays.push(indices);
  const { bin, views } = layout(arrays);
  views[0].target = 34962;
  views[1].target = 34962;
  views[2].target = 34962;
  if (indices) views[3].target = 34963;
  const count = positions.length / 3;
  const accessors = [
    { bufferView: 0, componentType: 5126, count, type: 'VEC3', ...minMax(positions, 3) },
    { bufferView: 1, componentType: 5126, count, type: 'VEC3' },
    { bufferView: 2, componentType: 5126, count, type: 'VEC2' },
  ];
  const primitive = { attributes: { POSITION: 0, NORMAL: 1, TEXCOORD_0: 2 }, material: 0 };
  if (indices) {
    accessors.push({ bufferView: 3, componentType: 5123, count: indices.length, type: 'SCALAR' });
    primitive.indices = 3;
  }
  const json = {
    asset: { version: '2.0', generator: 'tanframe make-bad-fixtures' },
    scene: 0,
    scenes: [{ nodes: [0] }],
    nodes: [{ mesh: 0 }],
    meshes: [{ name: 'quad', primitives: [primitive] }],
    materials: [{ name: 'normal-mapped', normalTexture: { index: 0 } }],
    textures: [{ source: 0 }],
    images: [{ uri: opts.imageUri ?? PNG_DATA_URI }],
    buffers: [{ byteLength: bin.length }],
    bufferViews: views,
    accessors,
  };
  return { json, bin };
}

/** GLB bytes. Source: glTF 2.0 specification, 4.4 (header, JSON chunk space padded, BIN zero padded). */
function glb(json, bin, jsonText = JSON.stringify(json)) {
  const text = Buffer.from(jsonText, 'utf8');
  const jsonLen = align4(text.length);
  const binLen = bin && bin.length ? align4(bin.length) : 0;
  const total = 12 + 8 + jsonLen + (binLen ? 8 + binLen : 0);
  const out = Buffer.alloc(total);
  out.writeUInt32LE(0x46546c67, 0);
  out.writeUInt32LE(2, 4);
  out.writeUInt32LE(total, 8);
  out.writeUInt32LE(jsonLen, 12);
  out.writeUInt32LE(0x4e4f534a, 16);
  out.fill(0x20, 20, 20 + jsonLen);
  text.copy(out, 20);
  if (binLen) {
    const at = 20 + jsonLen;
    out.writeUInt32LE(binLen, at);
    out.writeUInt32LE(0x004e4942, at + 4);
    Buffer.from(bin).copy(out, at + 8);
  }
  return out;
}

/** .gltf text with the buffer embedded as a base64 data: URI. */
function gltfEmbedded(json, bin) {
  const copy = structuredClone(json);
  copy.buffers[0].uri = `data:application/octet-stream;base64,${Buffer.from(bin).toString('base64')}`;
  return `${JSON.stringify(copy, null, 1)}\n`;
}

/** .gltf text whose buffer is the given URI (the file may or may not exist). */
function gltfWithBufferUri(json, uri) {
  const copy = structuredClone(json);
  copy.buffers[0].uri = uri;
  return `${JSON.stringify(copy, null, 1)}\n`;
}

/** Applies `edit(json)` to a fresh quad asset; returns {json, bin}. */
function edited(edit, opts) {
  const a = asset(opts);
  edit(a.json, a.bin);
  return a;
}

const bad = new Map(); // file name -> { bytes, code, fault }
const values = new Map(); // file name -> { bytes, expect }

function addBad(name, bytes, code, fault) {
  if (bad.has(name)) throw new Error(`duplicate fixture ${name}`);
  bad.set(name, { bytes: typeof bytes === 'string' ? Buffer.from(bytes, 'utf8') : Buffer.from(bytes), code, fault });
}

function addValues(name, bytes, expect) {
  if (values.has(name)) throw new Error(`duplicate fixture ${name}`);
  values.set(name, { bytes: typeof bytes === 'string' ? Buffer.from(bytes, 'utf8') : Buffer.from(bytes), expect });
}

function badGltf(name, code, fault, edit, opts) {
  const a = edited(edit, opts);
  addBad(name, gltfEmbedded(a.json, a.bin), code, fault);
}

// ---------------------------------------------------------------------------------------------
// GLB container faults (glTF 2.0 specification, 4.4)

const good = asset();
const goodGlb = glb(good.json, good.bin);

addBad('empty.glb', Buffer.alloc(0), 'empty-file', 'a 0-byte file');
addBad('truncated-header.glb', goodGlb.subarray(0, 8), 'bad-glb', 'shorter than the 12-byte header');
{
  const b = Buffer.from(goodGlb);
  b.write('gLTF', 0, 'latin1');
  addBad('bad-magic.glb', b, 'bad-glb', "magic is not 'glTF'");
}
{
  const b = Buffer.from(goodGlb);
  b.writeUInt32LE(1, 4);
  addBad('bad-version.glb', b, 'bad-glb', 'container version 1');
}
addBad('truncated.glb', goodGlb.subarray(0, goodGlb.length - 40), 'bad-glb', 'a download cut short: the header declares more bytes than the file has');
{
  const b = Buffer.concat([goodGlb, Buffer.alloc(16)]);
  addBad('trailing-data.glb', b, 'bad-glb', 'the header length is smaller than the file');
}
{
  const b = Buffer.from(goodGlb);
  const jsonLen = b.readUInt32LE(12);
  b.writeUInt32LE(0x7ffffff0, 20 + jsonLen); // BIN chunk length
  addBad('chunk-length-past-end.glb', b, 'bad-glb', 'the BIN chunk declares more bytes than the file has');
}
{
  const b = Buffer.from(goodGlb);
  b.writeUInt32LE(0xfffffff0, 12); // JSON chunk length near 4 GiB
  addBad('json-chunk-length-huge.glb', b, 'bad-glb', 'the JSON chunk declares almost 4 GiB');
}
{
  const b = Buffer.from(goodGlb);
  b.writeUInt32LE(0x004e4942, 16); // first chunk typed BIN
  addBad('first-chunk-not-json.glb', b, 'bad-glb', 'the first chunk is not the JSON chunk');
}
{
  const b = Buffer.from(goodGlb);
  b.writeUInt32LE(0, 12); // JSON chunk of length 0
  addBad('json-chunk-empty.glb', b, 'bad-glb', 'a 0-byte JSON chunk followed by stray bytes');
}
{
  const text = JSON.stringify(good.json);
  const b = glb(good.json, good.bin, text.slice(0, text.length - 7) + ' ');
  addBad('json-chunk-syntax.glb', b, 'bad-json', 'the JSON chunk is cut short');
}
{
  const b = Buffer.from(goodGlb);
  b[20 + 2] = 0xff; // inside the JSON text: not UTF-8
  addBad('json-chunk-not-utf8.glb', b, 'bad-json', 'the JSON chunk is not UTF-8');
}
{
  const json = structuredClone(good.json);
  addBad('missing-bin-chunk.glb', glb(json, null), 'bad-glb', 'buffer 0 has no uri and the GLB has no BIN chunk');
}
{
  const b = glb(good.json, good.bin);
  const extra = Buffer.alloc(8 + 4);
  extra.writeUInt32LE(4, 0);
  extra.writeUInt32LE(0x004e4942, 4);
  const both = Buffer.concat([b, extra]);
  both.writeUInt32LE(both.length, 8);
  addBad('two-bin-chunks.glb', both, 'bad-glb', 'two BIN chunks');
}

// ---------------------------------------------------------------------------------------------
// JSON faults

addBad('json-syntax.gltf', gltfEmbedded(good.json, good.bin).replace('"accessors"', '"accessors" "'), 'bad-json', 'not JSON');
addBad('json-not-utf8.gltf', Buffer.concat([Buffer.from('{"asset":{"version":"2.0"},"extras":"'), Buffer.from([0xc3, 0x28]), Buffer.from('"}')]), 'bad-json', 'invalid UTF-8');
addBad('json-wrong-shape.gltf', '[{"asset":{"version":"2.0"}}]\n', 'bad-gltf', 'the top level is an array, not an object');
addBad('json-deep-nesting.gltf', `{"asset":{"version":"2.0"},"extras":${'['.repeat(5000)}${']'.repeat(5000)}}\n`, 'bad-json', 'JSON nested 5000 levels deep');
badGltf('json-accessors-not-array.gltf', 'bad-gltf', "'accessors' is an object", (j) => { j.accessors = { 0: j.accessors[0] }; });
badGltf('json-mesh-is-string.gltf', 'bad-gltf', 'meshes[0] is a string', (j) => { j.meshes = ['quad']; });
badGltf('missing-asset-version.gltf', 'bad-gltf', 'no asset.version', (j) => { delete j.asset.version; });
badGltf('gltf-version-1.gltf', 'unsupported-format', 'asset.version 1.0', (j) => { j.asset.version = '1.0'; });
badGltf('required-extension-unknown.gltf', 'unsupported-feature', 'requires an extension nobody knows', (j) => {
  j.extensionsUsed = ['EXT_made_up_geometry'];
  j.extensionsRequired = ['EXT_made_up_geometry'];
});
badGltf('mesh-no-primitives.gltf', 'bad-gltf', 'a mesh with an empty primitives list', (j) => { j.meshes[0].primitives = []; });
badGltf('primitive-mode-invalid.gltf', 'bad-gltf', 'primitive mode 9', (j) => { j.meshes[0].primitives[0].mode = 9; });
badGltf('material-missing.gltf', 'bad-gltf', 'the primitive names material 7 of 1', (j) => { j.meshes[0].primitives[0].material = 7; });
badGltf('attribute-name-proto.gltf', 'bad-gltf', "an attribute named '__proto__'", (j) => {
  j.meshes[0].primitives[0].attributes = JSON.parse('{"POSITION":0,"__proto__":1}');
});

// ---------------------------------------------------------------------------------------------
// Buffers, buffer views and accessors out of range (glTF 2.0 specification, 3.6)

badGltf('buffer-longer-than-data.gltf', 'bad-gltf', 'buffer byteLength larger than its data', (j) => { j.buffers[0].byteLength += 64; });
badGltf('bufferview-past-buffer.gltf', 'bad-gltf', 'a buffer view running past the end of its buffer', (j) => { j.bufferViews[1].byteLength = 4096; });
badGltf('bufferview-missing-buffer.gltf', 'bad-gltf', 'a buffer view naming buffer 3 of 1', (j) => { j.bufferViews[1].buffer = 3; });
badGltf('byte-stride-invalid.gltf', 'bad-gltf', 'byteStride 3 (not a multiple of 4)', (j) => { j.bufferViews[0].byteStride = 3; });
badGltf('accessor-past-buffer.gltf', 'bad-accessor', 'an accessor reading past the end of its buffer view', (j) => { j.accessors[0].byteOffset = 40; });
badGltf('accessor-missing.gltf', 'bad-accessor', 'POSITION names accessor 99 of 4', (j) => { j.meshes[0].primitives[0].attributes.POSITION = 99; });
badGltf('accessor-index-negative.gltf', 'bad-accessor', 'NORMAL names accessor -1', (j) => { j.meshes[0].primitives[0].attributes.NORMAL = -1; });
badGltf('accessor-bufferview-missing.gltf', 'bad-gltf', 'an accessor naming buffer view 40 of 4', (j) => { j.accessors[1].bufferView = 40; });
// 0x15555556 * 12 = 0x1_0000_0008: a 32-bit multiply wraps to 8 bytes.
badGltf('count-stride-overflow.gltf', 'bad-accessor', 'count * element size overflows 32 bits', (j) => { j.accessors[0].count = 0x15555556; });
badGltf('huge-count.gltf', 'bad-accessor', 'a 4-billion count over 48 bytes of data', (j) => { j.accessors[0].count = 4000000000; });
badGltf('count-unsafe-integer.gltf', 'bad-accessor', 'a count beyond 2^53', (j) => { j.accessors[0].count = 1e300; });
badGltf('huge-zero-filled-accessor.gltf', 'too-large', 'a billion-vertex accessor with no data (zeros) that would expand a tiny file', (j) => {
  for (const a of j.accessors.slice(0, 3)) {
    delete a.bufferView;
    a.count = 1000000000;
  }
  delete j.meshes[0].primitives[0].indices;
});
// The sparse indices read the texture coordinates' bytes as uint16: at byte 6 lies the high
// half of the float 1.0 (0x3F80 = 16256), an element far past the accessor's 4.
badGltf('sparse-index-out-of-range.gltf', 'bad-accessor', 'a sparse substitution targeting element 16256 of 4', (j) => {
  j.accessors[0].sparse = { count: 1, indices: { bufferView: 2, byteOffset: 6, componentType: 5123 }, values: { bufferView: 0 } };
});
badGltf('sparse-count-too-big.gltf', 'bad-accessor', 'sparse.count 9 larger than the accessor count 4', (j) => {
  j.accessors[2].sparse = { count: 9, indices: { bufferView: 3, componentType: 5123 }, values: { bufferView: 2 } };
});
badGltf('index-out-of-range.gltf', 'bad-index', 'index 7 with 4 vertices', () => {}, { indices: new Uint16Array([0, 1, 2, 0, 2, 7]) });
badGltf('index-max-uint16.gltf', 'bad-index', 'index 65535 with 4 vertices', () => {}, { indices: new Uint16Array([0, 1, 2, 0, 2, 65535]) });
badGltf('indices-float.gltf', 'bad-accessor', 'indices stored as FLOAT', (j) => {
  j.accessors[3] = { bufferView: 2, componentType: 5126, count: 6, type: 'SCALAR' };
});
badGltf('indices-vec3.gltf', 'bad-accessor', 'indices typed VEC3', (j) => { j.accessors[3].type = 'VEC3'; j.accessors[3].count = 2; });
badGltf('wrong-component-type.gltf', 'bad-accessor', 'POSITION as unsigned bytes without KHR_mesh_quantization', (j) => { j.accessors[0].componentType = 5121; });
badGltf('wrong-accessor-type.gltf', 'bad-accessor', 'NORMAL typed VEC2', (j) => { j.accessors[1].type = 'VEC2'; });
badGltf('component-type-unknown.gltf', 'bad-accessor', 'componentType 5130 (a double, not in glTF)', (j) => { j.accessors[2].componentType = 5130; });
badGltf('normalized-float.gltf', 'bad-accessor', 'normalized: true on a float accessor', (j) => { j.accessors[1].normalized = true; });
badGltf('attribute-count-mismatch.gltf', 'bad-accessor', 'TEXCOORD_0 has 3 elements, POSITION 4', (j) => { j.accessors[2].count = 3; });
badGltf('accessor-count-string.gltf', 'bad-accessor', 'count given as a string', (j) => { j.accessors[0].count = '4'; });

// ---------------------------------------------------------------------------------------------
// External resources and URIs (glTF 2.0 specification 2.8, 3.6.1; RFC 3986)

addBad('missing-bin.gltf', gltfWithBufferUri(good.json, 'missing-bin.bin'), 'missing-resource', 'the .bin file it names does not exist');
addBad('uri-dotdot.gltf', gltfWithBufferUri(good.json, '../bad/uri-dotdot.bin'), 'bad-uri', "a buffer URI climbing out with '..'");
addBad('uri-absolute.gltf', gltfWithBufferUri(good.json, '/etc/passwd'), 'bad-uri', 'an absolute path');
addBad('uri-windows-drive.gltf', gltfWithBufferUri(good.json, 'C:/Windows/win.ini'), 'bad-uri', 'a Windows drive path');
addBad('uri-unc.gltf', gltfWithBufferUri(good.json, '\\\\server\\share\\x.bin'), 'bad-uri', 'a UNC path');
addBad('uri-http.gltf', gltfWithBufferUri(good.json, 'http://example.com/x.bin'), 'bad-uri', 'an http: URL');
addBad('uri-file-scheme.gltf', gltfWithBufferUri(good.json, 'file:///etc/passwd'), 'bad-uri', 'a file: URL');
addBad('uri-percent-escape.gltf', gltfWithBufferUri(good.json, '%2e%2e/%2e%2e/etc/passwd'), 'bad-uri', "a percent-encoded '..' escape");
addBad('uri-percent-slash.gltf', gltfWithBufferUri(good.json, '..%2fx.bin'), 'bad-uri', "'..' followed by a percent-encoded slash");
addBad('uri-backslash-dotdot.gltf', gltfWithBufferUri(good.json, 'sub\\..\\..\\x.bin'), 'bad-uri', "backslash-separated '..' escape");
addBad('uri-nul.gltf', gltfWithBufferUri(good.json, 'x.bin%00.png'), 'bad-uri', 'a percent-encoded NUL byte');
addBad('uri-bad-percent.gltf', gltfWithBufferUri(good.json, 'x%zz.bin'), 'bad-uri', 'a malformed percent-escape');
addBad('uri-bad-base64.gltf', gltfWithBufferUri(good.json, 'data:application/octet-stream;base64,@@@@'), 'bad-uri', 'a data: URI with invalid base64');
{
  const a = edited((j) => { j.images[0].uri = '../../secret.png'; });
  addBad('image-uri-dotdot.gltf', gltfEmbedded(a.json, a.bin), 'bad-uri', "an image URI climbing out with '..'");
}

// ---------------------------------------------------------------------------------------------
// OBJ faults (Wavefront OBJ: 1-based and negative relative indices)

const OBJ_HEAD = 'v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nvt 0 0\nvt 1 0\nvt 1 1\nvt 0 1\nvn 0 0 1\n';
addBad('obj-index-zero.obj', `${OBJ_HEAD}f 0/1/1 1/2/1 2/3/1\n`, 'bad-obj', 'a face index 0 (OBJ indices start at 1)');
addBad('obj-index-out-of-range.obj', `${OBJ_HEAD}f 1/1/1 2/2/1 9/3/1\n`, 'bad-obj', 'vertex 9 of 4');
addBad('obj-texture-index-out-of-range.obj', `${OBJ_HEAD}f 1/1/1 2/2/1 3/30/1\n`, 'bad-obj', 'texture coordinate 30 of 4');
addBad('obj-relative-index-out-of-range.obj', `${OBJ_HEAD}f -1 -2 -9\n`, 'bad-obj', 'relative index -9 with 4 vertices defined');
addBad('obj-malformed-face.obj', `${OBJ_HEAD}f 1/1/1 2/x/1 3/3/1\n`, 'bad-obj', "a face corner '2/x/1'");
addBad('obj-face-two-corners.obj', `${OBJ_HEAD}f 1 2\n`, 'bad-obj', 'a face with two corners');
addBad('obj-huge-index.obj', `${OBJ_HEAD}f 1 2 99999999999999999999999\n`, 'bad-obj', 'an index beyond any integer type');
addBad('obj-malformed-vertex.obj', `v 0 0\n${OBJ_HEAD}f 1 2 3\n`, 'bad-obj', 'a vertex with two coordinates');
addBad('obj-vertex-text.obj', `v 0 0 zero\n${OBJ_HEAD}f 1 2 3\n`, 'bad-obj', 'a vertex coordinate that is not a number');
addBad('obj-no-faces.obj', OBJ_HEAD, 'bad-obj', 'vertices but no faces');
addBad('obj-binary.obj', goodGlb, 'bad-obj', 'a GLB renamed .obj (binary bytes, no faces)');
addBad('obj-mtllib-escape.obj', `mtllib ../../outside.mtl\n${OBJ_HEAD}f 1 2 3\n`, 'bad-uri', 'a material library outside the folder');
addBad('empty.obj', Buffer.alloc(0), 'empty-file', 'a 0-byte OBJ');
addBad('empty.gltf', Buffer.alloc(0), 'empty-file', 'a 0-byte .gltf');
addBad('not-a-mesh.gltf', Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0]), 'bad-json', 'a PNG named .gltf');

// ---------------------------------------------------------------------------------------------
// Hostile values: processed with the documented fallbacks and counted, never refused.
// `expect`: exit status; `counts`: report counters summed over the file's primitives (a number
// is exact, '>0' means at least one); `action`: what happens to the primitive ('baked', or
// 'skipped:<reason>'); `warning`: text one of the file's warnings contains; `validatorAllows`:
// the Khronos gltf-validator error codes the baked output may show because the input's own
// values are kept as they are (a NaN stays a NaN; an infinity cannot be written as a JSON
// min/max; a missing image stays missing). Every count follows from how the file is built.

const NaN32 = Number.NaN;
const INF = Number.POSITIVE_INFINITY;
const FLOAT_ERRORS = ['ACCESSOR_INVALID_FLOAT'];
const INFINITE_POSITION_ERRORS = [
  'ACCESSOR_INVALID_FLOAT',
  'ACCESSOR_MIN_MISMATCH',
  'ACCESSOR_MAX_MISMATCH',
  'ACCESSOR_ELEMENT_OUT_OF_MIN_BOUND',
  'ACCESSOR_ELEMENT_OUT_OF_MAX_BOUND',
];
{
  // vertex 2's x is NaN: one vertex with an invalid value
  const positions = new Float32Array([0, 0, 0, 1, 0, 0, NaN32, 1, 0, 0, 1, 0]);
  const a = asset({ positions });
  addValues('nan-position.gltf', gltfEmbedded(a.json, a.bin), { exit: 0, action: 'baked', counts: { invalidValues: 1 }, validatorAllows: FLOAT_ERRORS });
}
{
  // vertices 1 and 3 hold +Inf / -Inf
  const positions = new Float32Array([0, 0, 0, INF, 0, 0, 1, 1, 0, 0, -INF, 0]);
  const a = asset({ positions });
  addValues('inf-positions.glb', glb(a.json, a.bin), { exit: 0, action: 'baked', counts: { invalidValues: 2 }, validatorAllows: INFINITE_POSITION_ERRORS });
}
{
  // vertex 1's normal is all NaN: one invalid vertex, and its normal is bad
  const normals = new Float32Array([0, 0, 1, NaN32, NaN32, NaN32, 0, 0, 1, 0, 0, 1]);
  const a = asset({ normals });
  addValues('nan-normal.gltf', gltfEmbedded(a.json, a.bin), { exit: 0, action: 'baked', counts: { invalidValues: 1, badNormals: 1 }, validatorAllows: FLOAT_ERRORS });
}
{
  // vertex 1's u is NaN, vertex 2's v is +Inf: two invalid vertices; both triangles use one of
  // them, so both have no usable UV area
  const uvs = new Float32Array([0, 1, NaN32, 1, 1, INF, 0, 0]);
  const a = asset({ uvs });
  addValues('nan-inf-uvs.gltf', gltfEmbedded(a.json, a.bin), { exit: 0, action: 'baked', counts: { invalidValues: 2, degenerateUv: 2 }, validatorAllows: FLOAT_ERRORS });
}
{
  // all four normals are (0, 0, 0)
  const normals = new Float32Array(12);
  const a = asset({ normals });
  addValues('zero-length-normals.gltf', gltfEmbedded(a.json, a.bin), { exit: 0, action: 'baked', counts: { badNormals: 4, invalidValues: 0 }, validatorAllows: ['ACCESSOR_VECTOR3_NON_UNIT'] });
}
{
  // Every triangle collapsed: all four corners on one line (zero area) and all UVs equal, so
  // every tangent comes from the fallback.
  const positions = new Float32Array([0, 0, 0, 1, 0, 0, 2, 0, 0, 3, 0, 0]);
  const uvs = new Float32Array([0.5, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5]);
  const a = asset({ positions, uvs });
  addValues('all-degenerate.gltf', gltfEmbedded(a.json, a.bin), { exit: 0, action: 'baked', counts: { degenerateGeometry: 2, degenerateUv: 2, fallbackTangents: '>0' }, validatorAllows: [] });
}
{
  //  2
  //  | \
  //  0--1
  const positions = new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0]);
  const normals = new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1]);
  const uvs = new Float32Array([0, 1, 1, 1, 0, 0]);
  const a = asset({ positions, normals, uvs, indices: new Uint16Array([0, 1, 2]) });
  addValues('single-triangle.glb', glb(a.json, a.bin), { exit: 0, action: 'baked', counts: { triangles: 1, degenerateUv: 0, fallbackTangents: 0 }, validatorAllows: [] });
}
{
  // Two vertices, no indices: a primitive with no whole triangle.
  const positions = new Float32Array([0, 0, 0, 1, 0, 0]);
  const normals = new Float32Array([0, 0, 1, 0, 0, 1]);
  const uvs = new Float32Array([0, 1, 1, 1]);
  const a = asset({ positions, normals, uvs, indices: null });
  addValues('two-vertices.gltf', gltfEmbedded(a.json, a.bin), { exit: 0, action: 'skipped:empty', counts: { triangles: 0 }, validatorAllows: [] });
}
{
  // An empty index list: glTF requires count >= 1, but exporters write count 0 for empty meshes.
  const a = edited((j) => { j.accessors[3].count = 0; });
  addValues('empty-primitive.gltf', gltfEmbedded(a.json, a.bin), { exit: 0, action: 'skipped:empty', counts: { triangles: 0 }, validatorAllows: ['VALUE_NOT_IN_RANGE'] });
}
{
  const a = asset({ imageUri: 'missing-normal-map.png' });
  addValues('missing-image.gltf', gltfEmbedded(a.json, a.bin), { exit: 0, action: 'baked', warning: 'missing-normal-map.png', counts: {}, validatorAllows: ['IO_ERROR'] });
}
const OBJ_QUAD = 'v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nvt 0 0\nvt 1 0\nvt 1 1\nvt 0 1\nvn 0 0 1\nf 1/1/1 2/2/1 3/3/1 4/4/1\n';
addValues('obj-missing-texture.obj', `mtllib obj-missing-texture.mtl\nusemtl panel\n${OBJ_QUAD}`, { exit: 0, action: 'baked', warning: 'missing_normal.png', counts: {}, validatorAllows: ['IO_ERROR'] });
addValues('obj-missing-texture.mtl', 'newmtl panel\nKd 0.8 0.8 0.8\nnorm missing_normal.png\n', null);
addValues('obj-missing-mtl.obj', `mtllib not-there.mtl\nusemtl panel\n${OBJ_QUAD}`, { exit: 0, action: 'baked', warning: 'not-there.mtl', counts: {}, validatorAllows: [] });
// 1e39 is a finite decimal that overflows float32 to +Inf when stored: one invalid vertex.
addValues('obj-overflowing-values.obj', 'v 0 0 0\nv 1e39 0 0\nv 1 1 0\nv 0 1 0\nvt 0 0\nvt 1 0\nvt 1 1\nvt 0 1\nf 1/1 2/2 3/3 4/4\n', {
  exit: 0, action: 'baked', counts: { invalidValues: 1 }, validatorAllows: INFINITE_POSITION_ERRORS,
});
// One texture coordinate for every corner: the quad's two triangles have no UV area.
addValues('obj-degenerate-uvs.obj', 'v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nvt 0.5 0.5\nvn 0 0 1\nf 1/1/1 2/1/1 3/1/1 4/1/1\n', {
  exit: 0, action: 'baked', counts: { degenerateUv: 2, fallbackTangents: '>0' }, validatorAllows: [],
});

// ---------------------------------------------------------------------------------------------
// Cost classes (bounded cost): small cases of structures that once cost quadratic time or
// unbounded memory, and strings from files holding terminal control characters.

// A face split over continued lines ("\" at the end of a line), then a chain of empty ones.
addValues('obj-continued-lines.obj', `${OBJ_QUAD.replace('f 1/1/1 2/2/1 3/3/1 4/4/1\n', 'f 1/1/1 \\\n2/2/1 \\  \r\n3/3/1 \\\n4/4/1 ')}${'\\\n'.repeat(200)}\n`, {
  exit: 0, action: 'baked', counts: { triangles: 2 }, validatorAllows: [],
});
{
  // 64 triangles on the same three positions, each with its own three texture coordinates
  // (side by side in UV): 64 corners per position, de-duplicated through a hash.
  const parts = ['v 0 0 0\nv 1 0 0\nv 0 1 0\nvn 0 0 1\n'];
  for (let k = 0; k < 64; k++) parts.push(`vt ${k / 64} 0\nvt ${(k + 0.9) / 64} 0\nvt ${k / 64} 0.5\n`);
  for (let k = 0; k < 64; k++) parts.push(`f 1/${3 * k + 1}/1 2/${3 * k + 2}/1 3/${3 * k + 3}/1\n`);
  addValues('obj-many-uvs-one-position.obj', parts.join(''), { exit: 0, action: 'baked', counts: { triangles: 64, uvOverlap: 0 }, validatorAllows: [] });
}
// 300 unknown texture options on one MTL line: 100 warnings listed, the rest counted.
addValues('obj-many-warnings.obj', `mtllib obj-many-warnings.mtl\nusemtl panel\n${OBJ_QUAD}`, {
  exit: 0, action: 'baked', warning: 'more warnings not listed', counts: {}, validatorAllows: ['IO_ERROR'],
});
addValues('obj-many-warnings.mtl', `newmtl panel\nnorm ${'-x '.repeat(300)}missing_normal.png\n`, null);
// Eight copies of the quad, copy k moved by k * 1e-6 in UV (near-stacked, not exact copies).
{
  const K = 8;
  const positions = new Float32Array(K * 12), normals = new Float32Array(K * 12), uvs = new Float32Array(K * 8), indices = new Uint16Array(K * 6);
  const quadUv = [0, 1, 1, 1, 1, 0, 0, 0];
  for (let k = 0; k < K; k++) {
    positions.set([0, 0, k * 0.01, 1, 0, k * 0.01, 1, 1, k * 0.01, 0, 1, k * 0.01], k * 12);
    normals.set([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1], k * 12);
    for (let i = 0; i < 8; i++) uvs[k * 8 + i] = quadUv[i] * 0.5 + 0.25 + (i % 2 === 0 ? k * 1e-6 : k * 0.7e-6);
    indices.set([0, 1, 2, 0, 2, 3].map((x) => x + 4 * k), k * 6);
  }
  const a = asset({ positions, normals, uvs, indices });
  addValues('near-stacked-uv-copies.gltf', gltfEmbedded(a.json, a.bin), { exit: 0, action: 'baked', counts: { uvOverlap: 16 }, validatorAllows: [] });
}
// Terminal control characters (ESC, OSC, BEL, a newline) in names and versions.
{
  const a = edited((j) => { j.meshes[0].name = 'hull\u001b]0;owned\u0007\u001b[2J\n'; });
  addValues('control-characters-mesh-name.gltf', gltfEmbedded(a.json, a.bin), { exit: 0, action: 'baked', counts: {}, validatorAllows: [] });
}
badGltf('control-characters-extension.gltf', 'unsupported-feature', 'a required extension whose name holds ESC, OSC and BEL', (j) => {
  j.extensionsUsed = ['EXT_\u001b]0;owned\u0007\u001b[2J'];
  j.extensionsRequired = ['EXT_\u001b]0;owned\u0007\u001b[2J'];
});
badGltf('control-characters-version.gltf', 'bad-gltf', 'asset.version holding ESC and a newline', (j) => { j.asset.version = '2.0\u001b[2J\ntanframe: forged line'; });

// ---------------------------------------------------------------------------------------------
// convert-map inputs: PNG faults (PNG specification 5.3, 5.6, 11.2) and a texel budget breach.

const maps = new Map(); // file name -> { bytes, expect } (expect null: a helper file)
function addMap(name, bytes, expect) {
  if (maps.has(name)) throw new Error(`duplicate fixture ${name}`);
  maps.set(name, { bytes: typeof bytes === 'string' ? Buffer.from(bytes, 'utf8') : Buffer.from(bytes), expect });
}

/** Bits into bytes, least significant bit first (RFC 1951 3.1.1). */
class BitWriter {
  constructor() { this.bytes = []; this.cur = 0; this.n = 0; }
  bit(b) { this.cur |= b << this.n; if (++this.n === 8) { this.bytes.push(this.cur); this.cur = 0; this.n = 0; } }
  bits(value, count) { for (let i = 0; i < count; i++) this.bit((value >> i) & 1); }
  /** A Huffman code: most significant bit first (RFC 1951 3.1.1). */
  code(value, length) { for (let i = length - 1; i >= 0; i--) this.bit((value >> i) & 1); }
  done() { if (this.n > 0) this.bytes.push(this.cur); return Buffer.from(this.bytes); }
}

/**
 * A zlib stream that inflates to `total` zero bytes in a few bytes per 258: one fixed-Huffman
 * block, a literal 0, then copies of length 258 at distance 1 (RFC 1951 3.2.6: literal 0 is
 * 00110000, length code 285 is 11000101, distance code 0 is 00000, end of block 0000000).
 */
function zlibZeros(total) {
  const w = new BitWriter();
  w.bits(1, 1); // BFINAL
  w.bits(1, 2); // BTYPE 01: fixed Huffman codes
  w.code(0x30, 8); // literal 0
  let left = total - 1;
  while (left >= 258) { w.code(0xc5, 8); w.code(0, 5); left -= 258; }
  for (; left > 0; left--) w.code(0x30, 8);
  w.code(0, 7); // end of block
  const a = 1, b = total % 65521; // Adler-32 of zeros: a stays 1, b grows by 1 per byte
  const adler = Buffer.alloc(4);
  adler.writeUInt32BE(((b << 16) | a) >>> 0);
  return Buffer.concat([Buffer.from([0x78, 0x01]), w.done(), adler]);
}

function ihdrOf(width, height, depth = 8, colourType = 2) {
  const h = Buffer.alloc(13);
  h.writeUInt32BE(width, 0);
  h.writeUInt32BE(height, 4);
  h[8] = depth;
  h[9] = colourType;
  return h;
}
const IEND = pngChunk('IEND', Buffer.alloc(0));

// 1 x 1 RGB declares 4 bytes of scanlines; this stream inflates to 1 MiB.
addMap('png-bomb.png', Buffer.concat([PNG_SIGNATURE, pngChunk('IHDR', ihdrOf(1, 1)), pngChunk('IDAT', zlibZeros(1 << 20)), IEND]),
  { code: 'bad-png', fault: 'IHDR says 1 x 1, the image data inflates to 1 MiB' });
addMap('png-ihdr-not-first.png', Buffer.concat([PNG_SIGNATURE, pngChunk('tEXt', Buffer.from('Comment\0harbour')), PNG.subarray(8)]),
  { code: 'bad-png', fault: 'a tEXt chunk before IHDR' });
{
  const b = Buffer.from(PNG);
  b[8 + 8 + 13] ^= 0xff; // IHDR's CRC
  addMap('png-bad-crc.png', b, { code: 'bad-png', fault: 'the IHDR chunk CRC does not match' });
}
addMap('png-unknown-critical-chunk.png', Buffer.concat([PNG.subarray(0, 33), pngChunk('QUUX', Buffer.alloc(4)), PNG.subarray(33)]),
  { code: 'bad-png', fault: 'an unknown critical chunk QUUX' });
addMap('png-data-short.png', Buffer.concat([PNG_SIGNATURE, pngChunk('IHDR', ihdrOf(4, 4)), pngChunk('IDAT', zlibStored([0, 128, 128, 255])), IEND]),
  { code: 'bad-png', fault: '4 of the 52 bytes of scanlines a 4 x 4 RGB image holds' });
{
  // A flat 64 x 64 map and a quad whose UVs wrap over 32 x 32 tiles: 64 times the map's texels.
  const side = 64;
  const raw = [];
  for (let y = 0; y < side; y++) { raw.push(0); for (let x = 0; x < side; x++) raw.push(128, 128, 255); }
  // Stored blocks hold at most 65535 bytes; this image is 12,352.
  addMap('flat-64.png', Buffer.concat([PNG_SIGNATURE, pngChunk('IHDR', ihdrOf(side, side)), pngChunk('IDAT', zlibStored(raw)), IEND]), null);
  addMap('uv-tiles-32x32.obj', 'v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nvt 0 0.05\nvt 31.9 0.05\nvt 31.9 31.95\nvt 0 31.95\nvn 0 0 1\nf 1/1/1 2/2/1 3/3/1\nf 1/1/1 3/3/1 4/4/1\n',
    { code: 'too-large', fault: 'two triangles wrapping over 32 x 32 UV tiles (texel budget)', map: 'flat-64.png' });
}

// Cost faults (issue 11): structures that used to cost far more than their bytes

{
  // A Draco stream whose header declares a million triangles for a primitive that declares one:
  // refused from the header, before the decoder allocates anything. Source: Draco bitstream
  // specification (header "DRACO", version 2.2, encoder type 1 mesh, method 0 sequential,
  // flags 0; then num_faces and num_points as varints), KHR_draco_mesh_compression.
  const stream = Buffer.from([0x44, 0x52, 0x41, 0x43, 0x4f, 2, 2, 1, 0, 0, 0, 0xc0, 0x84, 0x3d, 3, 0, 0, 0]);
  const json = {
    asset: { version: '2.0', generator: 'tanframe make-bad-fixtures' },
    extensionsUsed: ['KHR_draco_mesh_compression'],
    extensionsRequired: ['KHR_draco_mesh_compression'],
    meshes: [{ primitives: [{ attributes: { POSITION: 0 }, indices: 1,
      extensions: { KHR_draco_mesh_compression: { bufferView: 0, attributes: { POSITION: 0 } } } }] }],
    accessors: [
      { componentType: 5126, count: 3, type: 'VEC3', min: [0, 0, 0], max: [1, 1, 0] },
      { componentType: 5125, count: 3, type: 'SCALAR' },
    ],
    bufferViews: [{ buffer: 0, byteLength: stream.length }],
    buffers: [{ byteLength: align4(stream.length) }],
  };
  addBad('draco-more-triangles-than-declared.glb', glb(json, stream), 'bad-draco', 'a Draco header declaring a million triangles where the primitive declares one');
}
{
  // The quad's indices name 4 of the 8 vertices of its buffer; the other 4 hold NaN (as when
  // an exporter packs several meshes into one buffer). The primitive is solved and written over
  // its own 4 vertices only, so the NaNs it never uses are not counted.
  const positions = new Float32Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0, NaN32, 0, 0, NaN32, 0, 0, NaN32, 0, 0, NaN32, 0, 0]);
  const normals = new Float32Array(24).map((_, i) => (i % 3 === 2 ? 1 : 0));
  const uvs = new Float32Array([0, 1, 1, 1, 1, 0, 0, 0, 0, 1, 1, 1, 1, 0, 0, 0]);
  const a = asset({ positions, normals, uvs });
  addValues('unreferenced-vertices.glb', glb(a.json, a.bin), { exit: 0, action: 'baked', counts: { verticesIn: 4, invalidValues: 0 }, validatorAllows: FLOAT_ERRORS });
}
{
  // Three morph targets naming the same POSITION / NORMAL delta accessors: solved once, and
  // the output's three targets share their accessors.
  const a = asset();
  const dp = new Float32Array([0, 0, 0.1, 0, 0, 0.1, 0, 0, 0.2, 0, 0, 0.2]);
  const dn = new Float32Array([0.1, 0, 0, 0.1, 0, 0, 0, 0.1, 0, 0, 0.1, 0]);
  const at = align4(a.bin.length);
  const bin = Buffer.concat([a.bin, Buffer.alloc(at - a.bin.length), bytesOf(dp), bytesOf(dn)]);
  a.json.buffers[0].byteLength = bin.length;
  a.json.bufferViews.push({ buffer: 0, byteOffset: at, byteLength: 48, target: 34962 }, { buffer: 0, byteOffset: at + 48, byteLength: 48, target: 34962 });
  const v = a.json.bufferViews.length;
  a.json.accessors.push({ bufferView: v - 2, componentType: 5126, count: 4, type: 'VEC3', ...minMax(dp, 3) }, { bufferView: v - 1, componentType: 5126, count: 4, type: 'VEC3' });
  const n = a.json.accessors.length;
  a.json.meshes[0].primitives[0].targets = [0, 1, 2].map(() => ({ POSITION: n - 2, NORMAL: n - 1 }));
  a.json.meshes[0].weights = [0, 0, 0];
  addValues('shared-morph-targets.glb', glb(a.json, bin), { exit: 0, action: 'baked', counts: { triangles: 2 }, validatorAllows: [] });
}

// ---------------------------------------------------------------------------------------------
// Write everything: clear old generated files first, so renamed fixtures leave nothing behind.

function writeAll(dir, entries, manifest) {
  fs.mkdirSync(dir, { recursive: true });
  for (const name of fs.readdirSync(dir)) fs.rmSync(path.join(dir, name), { recursive: true, force: true });
  for (const [name, e] of entries) fs.writeFileSync(path.join(dir, name), e.bytes);
  fs.writeFileSync(path.join(dir, 'expected.json'), `${JSON.stringify(manifest, null, 2)}\n`);
}

const badManifest = {};
for (const [name, e] of [...bad].sort(([a], [b]) => (a < b ? -1 : 1))) badManifest[name] = { code: e.code, fault: e.fault };
writeAll(badDir, bad, badManifest);

const valuesManifest = {};
for (const [name, e] of [...values].sort(([a], [b]) => (a < b ? -1 : 1))) if (e.expect) valuesManifest[name] = e.expect;
writeAll(valuesDir, values, valuesManifest);

const mapsManifest = {};
for (const [name, e] of [...maps].sort(([a], [b]) => (a < b ? -1 : 1))) if (e.expect) mapsManifest[name] = e.expect;
writeAll(mapsDir, maps, mapsManifest);

console.log(`wrote ${maps.size} files to ${path.relative(process.cwd(), mapsDir) || '.'}, ${bad.size} files to ${path.relative(process.cwd(), badDir) || '.'} and ${values.size} to ${path.relative(process.cwd(), valuesDir) || '.'}`);
