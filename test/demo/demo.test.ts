/**
 * The bundled demo scenario (scripts/make-demo.js): generated twice into temp folders, the
 * output must be byte-identical, valid glTF, and show the cases the README promises.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { inflateSync } from 'node:zlib';
import { fileURLToPath } from 'node:url';
// @ts-ignore -- the validator ships no type declarations
import validator from 'gltf-validator';
import { readObj } from '../../src/io/objRead.js';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const script = path.join(repoRoot, 'scripts', 'make-demo.js');
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-demo-'));
const dirA = path.join(tmp, 'a');
const dirB = path.join(tmp, 'b');
let stdoutA = '';

const EXPECTED_FILES = [
  'README.md',
  'barrel/barrel.glb',
  'broken/lobster_trap.glb',
  'buoy/buoy.glb',
  'crate/crate.bin',
  'crate/crate.gltf',
  'crate/crate_color.png',
  'crate/crate_normal.png',
  'dock/dock_plank.mtl',
  'dock/dock_plank.obj',
  'dock/plank_color.png',
  'dock/plank_normal.png',
  'rope/rope_coil.gltf',
  'rope/rope_normal.png',
];

function listFiles(dir: string): string[] {
  const out: string[] = [];
  const walk = (d: string): void => {
    for (const e of fs.readdirSync(d, { withFileTypes: true })) {
      const p = path.join(d, e.name);
      if (e.isDirectory()) walk(p);
      else out.push(path.relative(dir, p).split(path.sep).join('/'));
    }
  };
  walk(dir);
  return out.sort();
}

beforeAll(() => {
  stdoutA = execFileSync(process.execPath, [script, dirA], { encoding: 'utf8' });
  execFileSync(process.execPath, [script, dirB], { encoding: 'utf8' });
});
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

// --- minimal readers (independent of src/io) -------------------------------------------------

interface Loaded {
  json: any;
  bin: Uint8Array;
  dir: string;
}

function loadGltf(file: string): Loaded {
  const bytes = fs.readFileSync(file);
  const dir = path.dirname(file);
  if (file.endsWith('.glb')) {
    // Source: glTF 2.0 spec 4.4 (GLB: 12-byte header, JSON chunk, BIN chunk).
    const jsonLen = bytes.readUInt32LE(12);
    const json = JSON.parse(bytes.subarray(20, 20 + jsonLen).toString('utf8'));
    const binStart = 20 + jsonLen + 8;
    return { json, bin: bytes.subarray(binStart, binStart + bytes.readUInt32LE(20 + jsonLen)), dir };
  }
  const json = JSON.parse(bytes.toString('utf8'));
  const uri: string = json.buffers[0].uri;
  const bin = uri.startsWith('data:')
    ? Buffer.from(uri.slice(uri.indexOf(',') + 1), 'base64')
    : fs.readFileSync(path.join(dir, decodeURIComponent(uri)));
  return { json, bin, dir };
}

/** Reads a tightly packed accessor as numbers (FLOAT or UNSIGNED_SHORT; the demo writes only those). */
function accessor(g: Loaded, index: number): number[] {
  const a = g.json.accessors[index];
  const v = g.json.bufferViews[a.bufferView];
  const size = ({ SCALAR: 1, VEC2: 2, VEC3: 3, VEC4: 4 } as Record<string, number>)[a.type]!;
  const start = v.byteOffset ?? 0;
  const dv = new DataView(g.bin.buffer, g.bin.byteOffset + start, v.byteLength);
  const out: number[] = [];
  for (let i = 0; i < a.count * size; i++) {
    out.push(a.componentType === 5126 ? dv.getFloat32(i * 4, true) : dv.getUint16(i * 2, true));
  }
  return out;
}

interface Tri {
  P: number[][];
  N: number[][];
  UV: number[][];
}

function triangles(g: Loaded): Tri[] {
  const prim = g.json.meshes[0].primitives[0];
  const p = accessor(g, prim.attributes.POSITION);
  const n = accessor(g, prim.attributes.NORMAL);
  const uv = accessor(g, prim.attributes.TEXCOORD_0);
  const idx = accessor(g, prim.indices);
  const out: Tri[] = [];
  for (let t = 0; t < idx.length; t += 3) {
    const c = [idx[t]!, idx[t + 1]!, idx[t + 2]!];
    out.push({
      P: c.map((i) => p.slice(i * 3, i * 3 + 3)),
      N: c.map((i) => n.slice(i * 3, i * 3 + 3)),
      UV: c.map((i) => uv.slice(i * 2, i * 2 + 2)),
    });
  }
  return out;
}

const sub = (a: number[], b: number[]): number[] => [a[0]! - b[0]!, a[1]! - b[1]!, a[2]! - b[2]!];
const cross = (a: number[], b: number[]): number[] => [
  a[1]! * b[2]! - a[2]! * b[1]!,
  a[2]! * b[0]! - a[0]! * b[2]!,
  a[0]! * b[1]! - a[1]! * b[0]!,
];
const dot = (a: number[], b: number[]): number => a[0]! * b[0]! + a[1]! * b[1]! + a[2]! * b[2]!;
const faceNormal = (t: Tri): number[] => cross(sub(t.P[1]!, t.P[0]!), sub(t.P[2]!, t.P[0]!));
/** Twice the signed UV area in glTF coordinates (v downward). */
const uvDet = (t: Tri): number =>
  (t.UV[1]![0]! - t.UV[0]![0]!) * (t.UV[2]![1]! - t.UV[0]![1]!) - (t.UV[2]![0]! - t.UV[0]![0]!) * (t.UV[1]![1]! - t.UV[0]![1]!);
/**
 * Mirrored = UV orientation negative with v measured upward, for a triangle wound counter-
 * clockwise around its normal. Source: METHODS.md (glTF v grows downward, v' = 1 - v negates dv).
 */
const isMirrored = (t: Tri): boolean => -uvDet(t) < 0;

/** Decodes one of our PNGs (8-bit RGB, filter 0) to pixels. Source: PNG spec (ISO/IEC 15948). */
function decodePng(bytes: Uint8Array): { w: number; h: number; rgb: Uint8Array } {
  const b = Buffer.from(bytes);
  expect(b.subarray(0, 8)).toEqual(Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]));
  let off = 8;
  let w = 0;
  let h = 0;
  const idat: Buffer[] = [];
  while (off < b.length) {
    const len = b.readUInt32BE(off);
    const type = b.subarray(off + 4, off + 8).toString('latin1');
    const data = b.subarray(off + 8, off + 8 + len);
    if (type === 'IHDR') {
      w = data.readUInt32BE(0);
      h = data.readUInt32BE(4);
      expect([data[8], data[9], data[12]]).toEqual([8, 2, 0]); // 8-bit, RGB, not interlaced
    }
    if (type === 'IDAT') idat.push(data);
    off += 12 + len;
  }
  const raw = inflateSync(Buffer.concat(idat));
  expect(raw.length).toBe((w * 3 + 1) * h);
  const rgb = new Uint8Array(w * h * 3);
  for (let y = 0; y < h; y++) {
    expect(raw[y * (w * 3 + 1)]).toBe(0);
    rgb.set(raw.subarray(y * (w * 3 + 1) + 1, (y + 1) * (w * 3 + 1)), y * w * 3);
  }
  return { w, h, rgb };
}

function normalTextureBytes(g: Loaded): Uint8Array {
  const mat = g.json.materials[g.json.meshes[0].primitives[0].material];
  const img = g.json.images[g.json.textures[mat.normalTexture.index].source];
  if (img.uri) return fs.readFileSync(path.join(g.dir, decodeURIComponent(img.uri)));
  const v = g.json.bufferViews[img.bufferView];
  return g.bin.subarray(v.byteOffset ?? 0, (v.byteOffset ?? 0) + v.byteLength);
}

// --- tests -------------------------------------------------------------------------------------

describe('make-demo output', () => {
  it('writes exactly the promised files and prints one line per file', () => {
    expect(listFiles(dirA)).toEqual(EXPECTED_FILES);
    const lines = stdoutA.trim().split('\n');
    expect(lines.length).toBe(EXPECTED_FILES.length);
    expect(lines.map((l) => l.split(' ')[1]).sort()).toEqual(EXPECTED_FILES);
  });

  it('is byte-identical across two runs', () => {
    expect(listFiles(dirB)).toEqual(listFiles(dirA));
    for (const f of listFiles(dirA)) {
      expect(Buffer.compare(fs.readFileSync(path.join(dirA, f)), fs.readFileSync(path.join(dirB, f))), f).toBe(0);
    }
  });

  it('stays under 600 KB', () => {
    const total = listFiles(dirA).reduce((s, f) => s + fs.statSync(path.join(dirA, f)).size, 0);
    expect(total).toBeLessThan(600 * 1024);
  });

  it('matches the committed examples/harbor-props folder', () => {
    const committed = path.join(repoRoot, 'examples', 'harbor-props');
    expect(listFiles(committed)).toEqual(EXPECTED_FILES);
    for (const f of EXPECTED_FILES) {
      expect(Buffer.compare(fs.readFileSync(path.join(committed, f)), fs.readFileSync(path.join(dirA, f))), f).toBe(0);
    }
  });

  it('validates every .gltf / .glb with no errors and no warnings but the missing-tangent one', async () => {
    const files = listFiles(dirA).filter((f) => /\.(gltf|glb)$/.test(f));
    expect(files.length).toBe(5);
    for (const f of files) {
      const full = path.join(dirA, f);
      // Source: Khronos gltf-validator (the standard's reference validator).
      const report = await validator.validateBytes(new Uint8Array(fs.readFileSync(full)), {
        uri: path.basename(f),
        writeTimestamp: false,
        maxIssues: 0,
        externalResourceFunction: async (uri: string) =>
          new Uint8Array(fs.readFileSync(path.join(path.dirname(full), decodeURIComponent(uri)))),
      });
      expect(report.issues.numErrors, f).toBe(0);
      // Expected: the demo ships no TANGENT (baking one is tanframe's job), which the validator
      // points out for materials with a normal texture.
      const codes = new Set(report.issues.messages.map((m: any) => m.code));
      expect([...codes], f).toEqual(['MESH_PRIMITIVE_GENERATED_TANGENT_SPACE']);
    }
  });

  it('winds every triangle counter-clockwise around its vertex normals, with unit normals', () => {
    for (const f of ['crate/crate.gltf', 'barrel/barrel.glb', 'buoy/buoy.glb', 'rope/rope_coil.gltf', 'broken/lobster_trap.glb']) {
      for (const t of triangles(loadGltf(path.join(dirA, f)))) {
        const g = faceNormal(t);
        expect(dot(g, t.N[0]!) + dot(g, t.N[1]!) + dot(g, t.N[2]!), f).toBeGreaterThan(0);
        for (const n of t.N) expect(Math.abs(Math.hypot(n[0]!, n[1]!, n[2]!) - 1), f).toBeLessThan(1e-6);
      }
    }
  });

  it('crate: 24 vertices, and exactly the -X and -Z sides are UV-mirrored', () => {
    const g = loadGltf(path.join(dirA, 'crate/crate.gltf'));
    expect(g.json.accessors[g.json.meshes[0].primitives[0].attributes.POSITION].count).toBe(24);
    const tris = triangles(g);
    expect(tris.length).toBe(12);
    for (const t of tris) {
      const n = t.N[0]!;
      const mirroredSide = n[0]! < -0.5 || n[2]! < -0.5;
      expect(isMirrored(t)).toBe(mirroredSide);
      // side faces share the left half of the texture
      if (Math.abs(n[1]!) < 0.5) for (const uv of t.UV) expect(uv[0]!).toBeLessThanOrEqual(0.5);
    }
  });

  it('barrel: a UV seam down one side, duplicated vertices with u = 0 and u = 1; normal map in a bufferView', () => {
    const g = loadGltf(path.join(dirA, 'barrel/barrel.glb'));
    const prim = g.json.meshes[0].primitives[0];
    const p = accessor(g, prim.attributes.POSITION);
    const n = accessor(g, prim.attributes.NORMAL);
    const uv = accessor(g, prim.attributes.TEXCOORD_0);
    const count = p.length / 3;
    let pairs = 0;
    for (let i = 0; i < count; i++) {
      if (uv[i * 2] !== 0) continue;
      for (let j = 0; j < count; j++) {
        if (uv[j * 2] !== 1) continue;
        if (p[i * 3] === p[j * 3] && p[i * 3 + 1] === p[j * 3 + 1] && p[i * 3 + 2] === p[j * 3 + 2]
          && n[i * 3] === n[j * 3] && n[i * 3 + 1] === n[j * 3 + 1] && n[i * 3 + 2] === n[j * 3 + 2]) {
          pairs++;
          // down one side: on the meridian x > 0, z = 0
          expect(p[i * 3]!).toBeGreaterThan(0);
          expect(Math.abs(p[i * 3 + 2]!)).toBeLessThan(1e-6);
        }
      }
    }
    // every u = 0 vertex has a bitwise twin at u = 1 (the standard method welds only exact copies)
    expect(pairs).toBe(uv.filter((x, i) => i % 2 === 0 && x === 0).length);
    expect(pairs).toBeGreaterThanOrEqual(2);
    const img = g.json.images[g.json.textures[g.json.materials[prim.material].normalTexture.index].source];
    expect(img.uri).toBeUndefined();
    expect(typeof img.bufferView).toBe('number');
    expect(triangles(g).filter(isMirrored).length).toBe(0);
  });

  it('rope: u runs over [0, 4] with a repeating sampler', () => {
    const g = loadGltf(path.join(dirA, 'rope/rope_coil.gltf'));
    const uv = accessor(g, g.json.meshes[0].primitives[0].attributes.TEXCOORD_0);
    const us = uv.filter((_, i) => i % 2 === 0);
    expect(Math.min(...us)).toBe(0);
    expect(Math.max(...us)).toBe(4);
    // seams weld: each vertex at u = 0 (v = 0) has a twin with the same position and normal at u = 4 (v = 1)
    const prim = g.json.meshes[0].primitives[0];
    const p = accessor(g, prim.attributes.POSITION);
    const n = accessor(g, prim.attributes.NORMAL);
    const key = (i: number): string => [...p.slice(i * 3, i * 3 + 3), ...n.slice(i * 3, i * 3 + 3)].join(',');
    for (const [k, lo, hi] of [[0, 0, 4], [1, 0, 1]] as const) {
      const his = new Set<string>();
      const los: string[] = [];
      for (let i = 0; i < p.length / 3; i++) {
        if (uv[i * 2 + k] === hi) his.add(key(i));
        if (uv[i * 2 + k] === lo) los.push(key(i));
      }
      expect(los.length).toBeGreaterThan(0);
      for (const x of los) expect(his.has(x)).toBe(true);
    }
    const mat = g.json.materials[g.json.meshes[0].primitives[0].material];
    const sampler = g.json.samplers[g.json.textures[mat.normalTexture.index].sampler];
    // Source: glTF 2.0 spec 5.26 (sampler): 10497 = REPEAT.
    expect([sampler.wrapS, sampler.wrapT]).toEqual([10497, 10497]);
    expect(triangles(g).filter(isMirrored).length).toBe(0);
  });

  it('buoy: a UV sphere with no mirrored or degenerate-UV triangles', () => {
    const tris = triangles(loadGltf(path.join(dirA, 'buoy/buoy.glb')));
    expect(tris.filter(isMirrored).length).toBe(0);
    expect(tris.filter((t) => uvDet(t) === 0).length).toBe(0);
    // poles are exact: every pole corner sits on the y axis
    for (const t of tris) for (const q of t.P) if (Math.abs(q[1]!) === 0.5) expect([q[0], q[2]]).toEqual([0, 0]);
  });

  it('lobster trap: 12 degenerate-UV triangles (8 collapsed, 4 collinear) on sound geometry', () => {
    // Design of the flawed asset (README): 4 post caps x 2 collapsed + 2 bar faces x 2 collinear.
    const tris = triangles(loadGltf(path.join(dirA, 'broken/lobster_trap.glb')));
    const degenerate = tris.filter((t) => uvDet(t) === 0);
    expect(degenerate.length).toBe(12);
    const collapsed = degenerate.filter((t) => t.UV.every((uv) => uv[0] === t.UV[0]![0] && uv[1] === t.UV[0]![1]));
    expect(collapsed.length).toBe(8);
    for (const t of tris) expect(Math.hypot(...faceNormal(t))).toBeGreaterThan(1e-6);
  });

  it('paints normal maps as unit tangent-space vectors facing out of the surface', () => {
    const maps: Uint8Array[] = [
      fs.readFileSync(path.join(dirA, 'crate/crate_normal.png')),
      fs.readFileSync(path.join(dirA, 'dock/plank_normal.png')),
      fs.readFileSync(path.join(dirA, 'rope/rope_normal.png')),
      normalTextureBytes(loadGltf(path.join(dirA, 'barrel/barrel.glb'))),
      normalTextureBytes(loadGltf(path.join(dirA, 'buoy/buoy.glb'))),
      normalTextureBytes(loadGltf(path.join(dirA, 'broken/lobster_trap.glb'))),
    ];
    for (const m of maps) {
      const { w, h, rgb } = decodePng(m);
      let tilted = 0;
      let worstLength = 0;
      let minZ = Infinity;
      for (let i = 0; i < w * h; i++) {
        // Source: METHODS.md, 8-bit encoding c = round((x*0.5+0.5)*255).
        const x = (rgb[i * 3]! / 255) * 2 - 1;
        const y = (rgb[i * 3 + 1]! / 255) * 2 - 1;
        const z = (rgb[i * 3 + 2]! / 255) * 2 - 1;
        worstLength = Math.max(worstLength, Math.abs(Math.hypot(x, y, z) - 1));
        minZ = Math.min(minZ, z);
        if (z < 0.95) tilted++;
      }
      // 8-bit quantisation moves each component by at most 1/255: the length by under 0.015.
      expect(worstLength).toBeLessThan(0.015);
      expect(minZ).toBeGreaterThan(0);
      expect(tilted).toBeGreaterThan(0); // the map has relief
    }
  });

  it('plank nail holes are dents under the green-up convention', () => {
    // Nail hole at u = 0.04, v = 0.3 (README; v from the image top). A dent's walls face its
    // centre: the wall above it faces down (green < 128), the wall below faces up, the wall on
    // the left faces right (red > 128). Source: glTF 2.0 spec 3.9.3 (normal texture green = +Y, up).
    const { w, rgb } = decodePng(fs.readFileSync(path.join(dirA, 'dock/plank_normal.png')));
    const px = (x: number, y: number, c: number): number => rgb[(y * w + x) * 3 + c]!;
    const cx = Math.round(0.04 * 256 - 0.5); // pixel 10
    const cy = Math.round(0.3 * 64 - 0.5); // pixel 19
    expect(px(cx, cy - 2, 1)).toBeLessThan(128);
    expect(px(cx, cy + 2, 1)).toBeGreaterThan(128);
    expect(px(cx - 2, cy, 0)).toBeGreaterThan(128);
    expect(px(cx + 2, cy, 0)).toBeLessThan(128);
  });

  it('dock plank OBJ reads as two material groups of quads with the MTL normal map', async () => {
    const a = await readObj(path.join(dirA, 'dock/dock_plank.obj'));
    expect(a.warnings).toEqual([]);
    expect(a.json.materials.map((m: any) => m.name)).toEqual(['plank_wood', 'end_grain']);
    expect(a.json.materials[0].normalTexture).toEqual({ index: 1, scale: 1 });
    expect(a.json.materials[0].pbrMetallicRoughness.baseColorTexture).toEqual({ index: 0 });
    expect(a.json.materials[1].normalTexture).toBeUndefined();
    expect(a.json.images.map((i: any) => i.uri)).toEqual(['plank_color.png', 'plank_normal.png']);
    expect(a.externalImages.every((e) => e.bytes !== null && e.bytes.length > 0)).toBe(true);
    const wood = a.primitives[0]!;
    expect(wood.attributes.NORMAL).toBeDefined();
    expect(wood.attributes.TEXCOORD_0).toBeDefined();
    const faces = Array.from(wood.faces!);
    expect(faces.length).toBe(2 * (faces[faces.length - 1]! + 1)); // every face a quad: two triangles each
    // no mirrored triangles once OBJ texture coordinates are in glTF's convention
    const pos = wood.attributes.POSITION!.array;
    const nrm = wood.attributes.NORMAL!.array;
    const uv = wood.attributes.TEXCOORD_0!.array;
    const idx = wood.indices!;
    for (let t = 0; t < idx.length; t += 3) {
      const c = [idx[t]!, idx[t + 1]!, idx[t + 2]!];
      const tri: Tri = {
        P: c.map((i) => Array.from(pos.slice(i * 3, i * 3 + 3))),
        N: c.map((i) => Array.from(nrm.slice(i * 3, i * 3 + 3))),
        UV: c.map((i) => Array.from(uv.slice(i * 2, i * 2 + 2))),
      };
      expect(dot(faceNormal(tri), tri.N[0]!)).toBeGreaterThan(0);
      expect(isMirrored(tri)).toBe(false);
    }
  });
});
