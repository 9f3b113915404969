#!/usr/bin/env node
/**
 * Generates the bundled demo scenario `examples/harbor-props/`: a handful of props for a
 * small fictional harbour scene, each showing one case tanframe deals with (mirrored UVs,
 * UV seams, repeating UVs, OBJ quads with an MTL normal map, degenerate UV triangles).
 *
 * Based on: glTF 2.0 specification (sections 3.6 buffers, 3.7 meshes, 3.9 materials, 4.4 GLB
 * file format) and the PNG specification (ISO/IEC 15948: signature, IHDR / IDAT / IEND chunks,
 * CRC-32, zlib stream, filter type 0).
 *
 * Plain Node ESM with no dependencies, so it runs before the TypeScript build exists.
 * Output is deterministic byte for byte (no clocks, no randomness: integer hashes only).
 *
 * Usage: node scripts/make-demo.js [outputFolder]   (default: examples/harbor-props)
 */
import { deflateSync } from 'node:zlib';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { PNG_SIGNATURE, pngChunk } from './png-chunks.js';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const outDir = path.resolve(process.argv[2] ?? path.join(repoRoot, 'examples', 'harbor-props'));
const GENERATOR = 'tanframe make-demo';

// ---------------------------------------------------------------------------------------------
// Small math helpers

const TAU = Math.PI * 2;
const clamp01 = (x) => (x < 0 ? 0 : x > 1 ? 1 : x);
const smooth = (x) => {
  const t = clamp01(x);
  return t * t * (3 - 2 * t);
};
const frac = (x) => x - Math.floor(x);
const mix = (a, b, t) => a + (b - a) * t;

function normalize3(x, y, z) {
  const l = Math.hypot(x, y, z);
  return [x / l, y / l, z / l];
}
function cross3(a, b) {
  return [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
}

/** Integer hash of up to three integers to [0, 1) (a murmur-style finaliser; deterministic). */
function hash(i, j = 0, k = 0) {
  let h = Math.imul(i | 0, 0x27d4eb2d) ^ Math.imul(j | 0, 0x165667b1) ^ Math.imul(k | 0, 0x61c88647);
  h = Math.imul(h ^ (h >>> 15), 0x85ebca6b);
  h = Math.imul(h ^ (h >>> 13), 0xc2b2ae35);
  h ^= h >>> 16;
  return (h >>> 0) / 4294967296;
}

/** 1-D value noise, smooth between integer lattice points. */
function noise1(x, seed) {
  const i = Math.floor(x);
  return mix(hash(i, seed), hash(i + 1, seed), smooth(x - i));
}

// ---------------------------------------------------------------------------------------------
// PNG encoder (8-bit RGB, filter type 0 on every row)


/** Encodes width x height 8-bit RGB pixels (row-major, top row first) as a PNG file. */
function encodePng(width, height, rgb) {
  const stride = width * 3;
  const raw = Buffer.alloc((stride + 1) * height);
  for (let y = 0; y < height; y++) {
    raw[y * (stride + 1)] = 0; // filter type 0 (None)
    Buffer.from(rgb.buffer, rgb.byteOffset + y * stride, stride).copy(raw, y * (stride + 1) + 1);
  }
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(width, 0);
  ihdr.writeUInt32BE(height, 4);
  ihdr[8] = 8; // bit depth
  ihdr[9] = 2; // colour type: truecolour (RGB)
  ihdr[10] = 0; // compression: deflate
  ihdr[11] = 0; // filter method 0
  ihdr[12] = 0; // no interlace
  return Buffer.concat([
    PNG_SIGNATURE,
    pngChunk('IHDR', ihdr),
    pngChunk('IDAT', deflateSync(raw, { level: 9 })),
    pngChunk('IEND', Buffer.alloc(0)),
  ]);
}

// ---------------------------------------------------------------------------------------------
// Procedural maps. Heights are sampled at pixel centres: s in [0,1) left to right, t in [0,1)
// top to bottom (t is glTF's v). Normal maps are tangent space with green = +Y = image up
// (the glTF convention), encoded c = round((x * 0.5 + 0.5) * 255).

function sampleHeights(w, h, fn) {
  const H = new Float64Array(w * h);
  for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) H[y * w + x] = fn((x + 0.5) / w, (y + 0.5) / h);
  return H;
}

/**
 * Normal map of a height field. `strength` converts height units to texels; `wrap` makes the
 * differences periodic (tileable maps), otherwise one-sided at the borders.
 */
function normalMapFromHeights(w, h, H, strength, wrap) {
  const rgb = new Uint8Array(w * h * 3);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      let xl = x - 1, xr = x + 1, yu = y - 1, yd = y + 1;
      if (wrap) {
        xl = (xl + w) % w; xr = xr % w; yu = (yu + h) % h; yd = yd % h;
      } else {
        xl = Math.max(xl, 0); xr = Math.min(xr, w - 1); yu = Math.max(yu, 0); yd = Math.min(yd, h - 1);
      }
      const dhdx = ((H[y * w + xr] - H[y * w + xl]) / (xr - xl)) * strength;
      const dhdrow = ((H[yd * w + x] - H[yu * w + x]) / (yd - yu)) * strength;
      // Surface z = h(X, Y) with Y up the image (Y = -row): n ~ (-dh/dX, -dh/dY, 1) = (-dh/dx, +dh/drow, 1).
      const n = normalize3(-dhdx, dhdrow, 1);
      const o = (y * w + x) * 3;
      rgb[o] = Math.round((n[0] * 0.5 + 0.5) * 255);
      rgb[o + 1] = Math.round((n[1] * 0.5 + 0.5) * 255);
      rgb[o + 2] = Math.round((n[2] * 0.5 + 0.5) * 255);
    }
  }
  return rgb;
}

function colorMap(w, h, fn) {
  const rgb = new Uint8Array(w * h * 3);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      const c = fn((x + 0.5) / w, (y + 0.5) / h);
      const o = (y * w + x) * 3;
      for (let k = 0; k < 3; k++) rgb[o + k] = Math.round(clamp01(c[k]) * 255);
    }
  }
  return rgb;
}

/** A V-groove profile: 1 at distance 0 from the groove line, 0 beyond `width`. */
const groove = (d, width) => 1 - smooth(Math.abs(d) / width);

// Crate atlas, 256 x 128: left half = side panel (mirrored onto the opposite sides),
// right half = lid / bottom. Side: frame battens, four horizontal boards, a diagonal brace.
const CRATE_W = 256, CRATE_H = 128;
function crateLayers(u, t) {
  const side = u < 0.5;
  const s = side ? u / 0.5 : (u - 0.5) / 0.5;
  const frameD = Math.max(0.1 - s, s - 0.9, 0.1 - t, t - 0.9); // > 0 on the frame
  let batten = smooth(frameD / 0.025 + 0.5);
  if (side) batten = Math.max(batten, smooth((0.06 - Math.abs(s + t - 1) / Math.SQRT2) / 0.025 + 0.5));
  const along = side ? t : s; // across the boards
  const k = Math.round(along * 5) / 5; // nearest board joint (boards of 1/5)
  const joint = groove(along - k, 0.02);
  const board = Math.floor(along * 5);
  return { batten, joint, board, grain: side ? s : t };
}
function crateHeight(u, t) {
  const L = crateLayers(u, t);
  return mix(0.5 - 0.35 * L.joint, 1.0, L.batten);
}
function crateColor(u, t) {
  const L = crateLayers(u, t);
  const g = noise1(L.grain * 14 + L.board * 3.1, 11 + L.board) * 0.5 + noise1(L.grain * 61, 7 + L.board) * 0.25;
  const wood = [0.62 + 0.12 * g, 0.44 + 0.1 * g, 0.24 + 0.06 * g];
  const dark = 1 - 0.45 * L.joint * (1 - L.batten);
  const batten = [0.5 + 0.08 * g, 0.33 + 0.06 * g, 0.18 + 0.04 * g];
  return [0, 1, 2].map((k) => mix(wood[k] * dark, batten[k], L.batten));
}

// Plank, 256 x 64: u along the plank, t across. Chamfered long edges, lengthwise grain ridges,
// four nail holes (dimples) at u = 0.04 / 0.96, t = 0.3 / 0.7.
const PLANK_W = 256, PLANK_H = 64;
const NAIL_HOLES = [[0.04, 0.3], [0.04, 0.7], [0.96, 0.3], [0.96, 0.7]];
function plankLayers(u, t) {
  const chamfer = smooth((0.08 - Math.min(t, 1 - t)) / 0.08);
  let nail = 0;
  for (const [nu, nt] of NAIL_HOLES) {
    const d = Math.hypot((u - nu) * PLANK_W, (t - nt) * PLANK_H); // texels
    nail = Math.max(nail, 1 - smooth((d - 1) / 3));
  }
  const grain = noise1(t * 24 + 3 * noise1(u * 4, 3), 5);
  return { chamfer, nail, grain };
}
function plankHeight(u, t) {
  const L = plankLayers(u, t);
  return 1 - 0.6 * L.chamfer - 0.8 * L.nail + 0.08 * L.grain;
}
function plankColor(u, t) {
  const L = plankLayers(u, t);
  const streak = noise1(t * 90 + 5 * noise1(u * 6, 9), 13);
  const base = [0.47 + 0.1 * L.grain + 0.05 * streak, 0.42 + 0.08 * L.grain + 0.04 * streak, 0.36 + 0.06 * L.grain];
  const shade = 1 - 0.3 * L.chamfer;
  const nail = [0.18, 0.17, 0.17];
  return [0, 1, 2].map((k) => mix(base[k] * shade, nail[k], L.nail));
}

// Rope, 128 x 128, tileable: three twisted strands running diagonally (2 turns per u repeat,
// 3 strands around v), with fine fibre ridges.
function ropeHeight(u, t) {
  const strand = Math.sqrt(Math.sin(Math.PI * frac(2 * u + 3 * t)));
  const fibre = 0.12 * Math.sin(TAU * (16 * u - 8 * t));
  return strand + fibre;
}

// Barrel, 128 x 128: side panel t in [0, 0.75] (16 staves, two iron hoops), lids below
// (discs centred at (0.25, 0.875) and (0.75, 0.875), radius 0.09, boards and a rim).
function barrelHeight(u, t) {
  if (t < 0.75) {
    const k = Math.round(u * 16) / 16;
    const stave = 0.6 - 0.45 * groove(u - k, 0.012);
    const ts = t / 0.75;
    const hoop = Math.max(smooth((0.035 - Math.abs(ts - 0.15)) / 0.012 + 0.5), smooth((0.035 - Math.abs(ts - 0.85)) / 0.012 + 0.5));
    return mix(stave, 1, hoop);
  }
  const cu = u < 0.5 ? 0.25 : 0.75;
  const r = Math.hypot(u - cu, t - 0.875);
  const k = Math.round(u * 20) / 20;
  const board = 0.6 - 0.45 * groove(u - k, 0.012) * (1 - smooth((r - 0.09) / 0.01));
  const rim = smooth((0.012 - Math.abs(r - 0.094)) / 0.006 + 0.5);
  return mix(board, 1, rim);
}

// Buoy, 64 x 64, tileable: eight horizontal ribs and a deeper groove at the equator.
function buoyHeight(u, t) {
  return 0.5 + 0.35 * Math.cos(TAU * 8 * t) - 0.6 * groove(t - 0.5, 0.04);
}

// Lobster-trap slats, 64 x 64, tileable: two saw-kerf grooves along u and a soft grain.
function trapHeight(u, t) {
  return 0.7 - 0.5 * groove(t - 0.25, 0.05) - 0.5 * groove(t - 0.75, 0.05) + 0.1 * noise1(t * 20 + 2 * Math.sin(TAU * u), 21);
}

// ---------------------------------------------------------------------------------------------
// Indexed triangle meshes

function newMesh() {
  return { p: [], n: [], uv: [], idx: [] };
}
function addVertex(m, p, n, uv) {
  const nn = normalize3(n[0], n[1], n[2]);
  m.p.push(p[0], p[1], p[2]);
  m.n.push(nn[0], nn[1], nn[2]);
  m.uv.push(uv[0], uv[1]);
  return m.p.length / 3 - 1;
}
/** Adds a triangle wound counter-clockwise as seen from the side its vertex normals face. */
function addTriangle(m, a, b, c) {
  const P = (i) => [m.p[i * 3], m.p[i * 3 + 1], m.p[i * 3 + 2]];
  const pa = P(a), pb = P(b), pc = P(c);
  const g = cross3([pb[0] - pa[0], pb[1] - pa[1], pb[2] - pa[2]], [pc[0] - pa[0], pc[1] - pa[1], pc[2] - pa[2]]);
  let s = 0;
  for (const i of [a, b, c]) s += g[0] * m.n[i * 3] + g[1] * m.n[i * 3 + 1] + g[2] * m.n[i * 3 + 2];
  if (s < 0) m.idx.push(a, c, b);
  else m.idx.push(a, b, c);
}

/**
 * A box face: centre c, outward unit normal N, half-extent vectors R (image right) and U
 * (image up) with R x U along N. `uvAt(r, q)` maps r, q in [0, 1] (along R, along U) to glTF uv.
 */
function addBoxFace(m, c, N, R, U, uvAt) {
  const ids = [];
  for (const [r, q] of [[0, 0], [1, 0], [1, 1], [0, 1]]) {
    const p = [0, 1, 2].map((k) => c[k] + R[k] * (2 * r - 1) + U[k] * (2 * q - 1));
    ids.push(addVertex(m, p, N, uvAt(r, q)));
  }
  addTriangle(m, ids[0], ids[1], ids[2]);
  addTriangle(m, ids[0], ids[2], ids[3]);
}

const scale3 = (v, s) => [v[0] * s, v[1] * s, v[2] * s];
const add3 = (a, b) => [a[0] + b[0], a[1] + b[1], a[2] + b[2]];

/** Crate: a 0.8 m box, 24 vertices. +Z/+X sides show the side panel, -Z/-X mirror it. */
function crateMesh() {
  const m = newMesh();
  const h = 0.4;
  // [normal, right, up, mirrored, panel u0]
  const faces = [
    [[0, 0, 1], [1, 0, 0], [0, 1, 0], false, 0],
    [[1, 0, 0], [0, 0, -1], [0, 1, 0], false, 0],
    [[0, 0, -1], [-1, 0, 0], [0, 1, 0], true, 0],
    [[-1, 0, 0], [0, 0, 1], [0, 1, 0], true, 0],
    [[0, 1, 0], [1, 0, 0], [0, 0, -1], false, 0.5],
    [[0, -1, 0], [1, 0, 0], [0, 0, 1], false, 0.5],
  ];
  for (const [N, R, U, mirrored, u0] of faces) {
    addBoxFace(m, scale3(N, h), N, scale3(R, h), scale3(U, h), (r, q) => [u0 + 0.5 * (mirrored ? 1 - r : r), 1 - q]);
  }
  return m;
}

/** Barrel: bulged surface of revolution, 24 segments, seam column duplicated at u = 0 / 1, two caps. */
function barrelMesh() {
  const m = newMesh();
  const SEG = 24, RINGS = 12, H = 1.2;
  const radius = (y) => 0.42 + 0.06 * Math.cos((Math.PI * y) / H);
  const dRadius = (y) => -0.06 * (Math.PI / H) * Math.sin((Math.PI * y) / H);
  const grid = [];
  for (let i = 0; i <= RINGS; i++) {
    const y = H / 2 - (H * i) / RINGS;
    const row = [];
    for (let j = 0; j <= SEG; j++) {
      const th = (TAU * (j % SEG)) / SEG; // the seam column repeats column 0 bit for bit
      const r = radius(y);
      const c = Math.cos(th), s = Math.sin(th);
      row.push(addVertex(m, [r * c, y, -r * s], [c, -dRadius(y), -s], [j / SEG, (0.75 * i) / RINGS]));
    }
    grid.push(row);
  }
  for (let i = 0; i < RINGS; i++) {
    for (let j = 0; j < SEG; j++) {
      addTriangle(m, grid[i][j], grid[i + 1][j], grid[i + 1][j + 1]);
      addTriangle(m, grid[i][j], grid[i + 1][j + 1], grid[i][j + 1]);
    }
  }
  for (const top of [true, false]) {
    const y = top ? H / 2 : -H / 2;
    const N = [0, top ? 1 : -1, 0];
    const cu = top ? 0.25 : 0.75;
    const k = 0.09 / radius(y); // uv units per metre
    // Non-mirrored lid mapping: u along +x; glTF v along +z on top, -z below.
    const uvOf = (x, z) => [cu + k * x, 0.875 + (top ? k : -k) * z];
    const centre = addVertex(m, [0, y, 0], N, uvOf(0, 0));
    const ring = [];
    for (let j = 0; j < SEG; j++) {
      const th = (TAU * j) / SEG;
      const x = radius(y) * Math.cos(th), z = -radius(y) * Math.sin(th);
      ring.push(addVertex(m, [x, y, z], N, uvOf(x, z)));
    }
    for (let j = 0; j < SEG; j++) addTriangle(m, centre, ring[j], ring[(j + 1) % SEG]);
  }
  return m;
}

/** Buoy: UV sphere, 24 segments x 16 rings, seam duplicated, one triangle per segment at the poles. */
function buoyMesh() {
  const m = newMesh();
  const SEG = 24, RINGS = 16, R = 0.5;
  const point = (i, uu, th) => {
    const pole = i === 0 || i === RINGS;
    const ph = (Math.PI * i) / RINGS;
    const sp = pole ? 0 : Math.sin(ph), cp = pole ? (i === 0 ? 1 : -1) : Math.cos(ph); // exact poles
    const n = pole ? [0, cp, 0] : [sp * Math.cos(th), cp, -sp * Math.sin(th)];
    return addVertex(m, scale3(n, R), n, [uu, i / RINGS]);
  };
  const rows = [];
  for (let i = 0; i <= RINGS; i++) {
    const row = [];
    if (i === 0 || i === RINGS) for (let j = 0; j < SEG; j++) row.push(point(i, (j + 0.5) / SEG, 0));
    else for (let j = 0; j <= SEG; j++) row.push(point(i, j / SEG, (TAU * (j % SEG)) / SEG));
    rows.push(row);
  }
  for (let i = 0; i < RINGS; i++) {
    for (let j = 0; j < SEG; j++) {
      if (i === 0) addTriangle(m, rows[0][j], rows[1][j], rows[1][j + 1]);
      else if (i === RINGS - 1) addTriangle(m, rows[i][j], rows[i + 1][j], rows[i][j + 1]);
      else {
        addTriangle(m, rows[i][j], rows[i + 1][j], rows[i + 1][j + 1]);
        addTriangle(m, rows[i][j], rows[i + 1][j + 1], rows[i][j + 1]);
      }
    }
  }
  return m;
}

/** Rope coil: torus, major radius 0.45 m, tube 0.05 m; u runs 0 -> 4 around the ring (the map repeats four times). */
function ropeMesh() {
  const m = newMesh();
  const MAJOR = 96, MINOR = 12, RM = 0.45, RT = 0.05, U_MAX = 4;
  const grid = [];
  for (let i = 0; i <= MAJOR; i++) {
    const a = (TAU * (i % MAJOR)) / MAJOR; // seam rows and columns repeat the first bit for bit
    const radial = [Math.cos(a), 0, -Math.sin(a)];
    const row = [];
    for (let j = 0; j <= MINOR; j++) {
      const b = (-TAU * (j % MINOR)) / MINOR; // v runs against b so the mapping is not mirrored
      const n = add3(scale3(radial, Math.cos(b)), [0, Math.sin(b), 0]);
      const p = add3(scale3(radial, RM), scale3(n, RT));
      row.push(addVertex(m, p, n, [(U_MAX * i) / MAJOR, j / MINOR]));
    }
    grid.push(row);
  }
  for (let i = 0; i < MAJOR; i++) {
    for (let j = 0; j < MINOR; j++) {
      addTriangle(m, grid[i][j], grid[i + 1][j], grid[i + 1][j + 1]);
      addTriangle(m, grid[i][j], grid[i + 1][j + 1], grid[i][j + 1]);
    }
  }
  return m;
}

/**
 * Lobster trap: a cage of 12 square bars. Deliberate flaws (for the degenerate-UV gate):
 * the top caps of the 4 corner posts have all four corners at uv (0.5, 0.5) (8 triangles) and
 * the top face of the 2 upper long bars has its corners on the line v = 0.25 + 0.5u
 * (4 triangles): 12 degenerate-UV triangles, none degenerate in space.
 */
function lobsterTrapMesh() {
  const m = newMesh();
  const HX = 0.3, HY = 0.2, HZ = 0.2, T = 0.015; // half sizes; bar half thickness
  const bars = []; // [centre, half extents, long axis 0|1|2, kind]
  for (const sy of [-1, 1]) for (const sz of [-1, 1]) bars.push([[0, HY + sy * (HY - T), sz * (HZ - T)], [HX, T, T], 0, sy > 0 ? 'upper-long' : 'bar']);
  for (const sx of [-1, 1]) for (const sy of [-1, 1]) bars.push([[sx * (HX - T), HY + sy * (HY - T), 0], [T, T, HZ - 2 * T], 2, 'bar']);
  for (const sx of [-1, 1]) for (const sz of [-1, 1]) bars.push([[sx * (HX - T), HY, sz * (HZ - T)], [T, HY, T], 1, 'post']);
  const axes = [[1, 0, 0], [0, 1, 0], [0, 0, 1]];
  for (const [c, he, long, kind] of bars) {
    const A = axes[long];
    for (let k = 0; k < 3; k++) {
      for (const sgn of [1, -1]) {
        const N = scale3(axes[k], sgn);
        let R;
        if (k !== long) R = A; // long faces: u along the bar
        else R = axes[(long + 1) % 3]; // end caps
        const U = cross3(N, R);
        const fc = add3(c, scale3(N, he[k]));
        const ext = (v) => [v[0] * he[0], v[1] * he[1], v[2] * he[2]];
        let uvAt = (r, q) => [r, 1 - q];
        if (kind === 'post' && k === long && sgn > 0) uvAt = () => [0.5, 0.5];
        if (kind === 'upper-long' && k === 1 && sgn > 0) {
          const line = [[0, 0.25], [1, 0.75], [0.75, 0.625], [0.25, 0.375]];
          let corner = 0;
          uvAt = () => line[corner++];
        }
        addBoxFace(m, fc, N, ext(R), ext(U), uvAt);
      }
    }
  }
  return m;
}

// ---------------------------------------------------------------------------------------------
// glTF / GLB encoder

const ARRAY_BUFFER = 34962, ELEMENT_ARRAY_BUFFER = 34963;
const FLOAT = 5126, UNSIGNED_SHORT = 5123;
const SAMPLER_REPEAT = { magFilter: 9729, minFilter: 9987, wrapS: 10497, wrapT: 10497 };

class GltfBuilder {
  constructor() {
    this.json = { asset: { version: '2.0', generator: GENERATOR } };
    this.chunks = [];
    this.length = 0;
  }
  list(name) {
    if (!this.json[name]) this.json[name] = [];
    return this.json[name];
  }
  /** Appends bytes as a bufferView (4-byte aligned); target omitted for images. */
  view(bytes, target) {
    const pad = (4 - (this.length % 4)) % 4;
    if (pad) this.chunks.push(Buffer.alloc(pad));
    this.length += pad;
    const v = { buffer: 0, byteOffset: this.length, byteLength: bytes.byteLength };
    if (target) v.target = target;
    this.chunks.push(Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength));
    this.length += bytes.byteLength;
    const list = this.list('bufferViews');
    list.push(v);
    return list.length - 1;
  }
  accessor(array, type, componentType, target, withBounds) {
    const size = { SCALAR: 1, VEC2: 2, VEC3: 3 }[type];
    const a = { bufferView: this.view(array, target), componentType, count: array.length / size, type };
    if (withBounds) {
      a.min = [];
      a.max = [];
      for (let k = 0; k < size; k++) {
        let lo = Infinity, hi = -Infinity;
        for (let i = k; i < array.length; i += size) {
          lo = Math.min(lo, array[i]);
          hi = Math.max(hi, array[i]);
        }
        a.min.push(lo);
        a.max.push(hi);
      }
    }
    const list = this.list('accessors');
    list.push(a);
    return list.length - 1;
  }
  /** Adds a mesh with one primitive and a node for it (in the default scene). */
  mesh(name, m, material) {
    const attributes = {
      POSITION: this.accessor(new Float32Array(m.p), 'VEC3', FLOAT, ARRAY_BUFFER, true),
      NORMAL: this.accessor(new Float32Array(m.n), 'VEC3', FLOAT, ARRAY_BUFFER, false),
      TEXCOORD_0: this.accessor(new Float32Array(m.uv), 'VEC2', FLOAT, ARRAY_BUFFER, false),
    };
    const indices = this.accessor(new Uint16Array(m.idx), 'SCALAR', UNSIGNED_SHORT, ELEMENT_ARRAY_BUFFER, false);
    const meshes = this.list('meshes');
    meshes.push({ name, primitives: [{ attributes, indices, material, mode: 4 }] });
    const nodes = this.list('nodes');
    nodes.push({ name, mesh: meshes.length - 1 });
    this.json.scene = 0;
    this.json.scenes = [{ name: 'harbor', nodes: nodes.map((_, i) => i) }];
  }
  /** Adds a PNG texture: stored in the binary buffer (GLB) or referenced by `uri`. */
  texture(png, uri) {
    const images = this.list('images');
    if (uri) images.push({ uri, mimeType: 'image/png' });
    else images.push({ bufferView: this.view(png), mimeType: 'image/png' });
    if (!this.json.samplers) this.json.samplers = [SAMPLER_REPEAT];
    const textures = this.list('textures');
    textures.push({ sampler: 0, source: images.length - 1 });
    return textures.length - 1;
  }
  material(def) {
    const list = this.list('materials');
    list.push(def);
    return list.length - 1;
  }
  binary() {
    const pad = (4 - (this.length % 4)) % 4;
    return Buffer.concat([...this.chunks, Buffer.alloc(pad)]);
  }
  /** GLB container (glTF 2.0 spec 4.4): header, JSON chunk (space padded), BIN chunk (zero padded). */
  toGlb() {
    const bin = this.binary();
    this.json.buffers = [{ byteLength: bin.length }];
    const jsonText = Buffer.from(JSON.stringify(this.json), 'utf8');
    const jsonChunk = Buffer.concat([jsonText, Buffer.alloc((4 - (jsonText.length % 4)) % 4, 0x20)]);
    const total = 12 + 8 + jsonChunk.length + 8 + bin.length;
    const header = Buffer.alloc(20);
    header.writeUInt32LE(0x46546c67, 0); // 'glTF'
    header.writeUInt32LE(2, 4);
    header.writeUInt32LE(total, 8);
    header.writeUInt32LE(jsonChunk.length, 12);
    header.writeUInt32LE(0x4e4f534a, 16); // 'JSON'
    const binHeader = Buffer.alloc(8);
    binHeader.writeUInt32LE(bin.length, 0);
    binHeader.writeUInt32LE(0x004e4942, 4); // 'BIN\0'
    return Buffer.concat([header, jsonChunk, binHeader, bin]);
  }
  /** .gltf JSON; the buffer goes to `binUri` (returned as `bin`) or, without one, into a data: URI. */
  toGltf(binUri) {
    const bin = this.binary();
    const uri = binUri ?? `data:application/octet-stream;base64,${bin.toString('base64')}`;
    this.json.buffers = [{ uri, byteLength: bin.length }];
    return { json: Buffer.from(`${JSON.stringify(this.json, null, 2)}\n`, 'utf8'), bin };
  }
}

function pbr(baseColorFactor, roughnessFactor) {
  return { baseColorFactor, metallicFactor: 0, roughnessFactor };
}

// ---------------------------------------------------------------------------------------------
// OBJ writer for the dock plank

const fmt = (x) => String(Number(x.toFixed(6)));

/** Dock plank: 2 m x 0.3 m x 0.06 m, quads, long faces in 8 segments; `plank_wood` + `end_grain`. */
function dockPlankObj() {
  const L = 1.0, W = 0.15, T = 0.03, SEGMENTS = 8;
  const v = [], vt = [], vn = [];
  const vIndex = new Map(), vtIndex = new Map();
  const vertex = (p) => {
    const key = p.map(fmt).join(' ');
    if (!vIndex.has(key)) {
      v.push(key);
      vIndex.set(key, v.length);
    }
    return vIndex.get(key);
  };
  const texcoord = (uv) => {
    const key = uv.map(fmt).join(' ');
    if (!vtIndex.has(key)) {
      vt.push(key);
      vtIndex.set(key, vt.length);
    }
    return vtIndex.get(key);
  };
  const groups = { plank_wood: [], end_grain: [] };
  // OBJ texture coordinates have v upward: q (along U, image up) maps straight to v.
  const face = (group, c, N, R, U, segs, uvAt) => {
    vn.push(N.map(fmt).join(' '));
    const n = vn.length;
    for (let sIdx = 0; sIdx < segs; sIdx++) {
      const corners = [[sIdx, 0], [sIdx + 1, 0], [sIdx + 1, 1], [sIdx, 1]].map(([a, q]) => {
        const r = a / segs;
        const p = [0, 1, 2].map((k) => c[k] + R[k] * (2 * r - 1) + U[k] * (2 * q - 1));
        return `${vertex(p)}/${texcoord(uvAt(r, q))}/${n}`;
      });
      groups[group].push(`f ${corners.join(' ')}`);
    }
  };
  const along = (r) => r; // u along the plank
  face('plank_wood', [0, T, 0], [0, 1, 0], [L, 0, 0], [0, 0, -W], SEGMENTS, (r, q) => [along(r), q]);
  face('plank_wood', [0, -T, 0], [0, -1, 0], [L, 0, 0], [0, 0, W], SEGMENTS, (r, q) => [along(r), q]);
  face('plank_wood', [0, 0, W], [0, 0, 1], [L, 0, 0], [0, T, 0], SEGMENTS, (r, q) => [along(r), 0.2 * q]);
  face('plank_wood', [0, 0, -W], [0, 0, -1], [-L, 0, 0], [0, T, 0], SEGMENTS, (r, q) => [along(r), 0.2 * q]);
  face('end_grain', [L, 0, 0], [1, 0, 0], [0, 0, -W], [0, T, 0], 1, (r, q) => [r, q]);
  face('end_grain', [-L, 0, 0], [-1, 0, 0], [0, 0, W], [0, T, 0], 1, (r, q) => [r, q]);
  const lines = [
    '# Dock plank for the harbor-props demo (generated by scripts/make-demo.js).',
    '# Quads; texture coordinates with v upward (OBJ convention).',
    'mtllib dock_plank.mtl',
    'o dock_plank',
    ...v.map((x) => `v ${x}`),
    ...vt.map((x) => `vt ${x}`),
    ...vn.map((x) => `vn ${x}`),
    's off',
    'usemtl plank_wood',
    ...groups.plank_wood,
    'usemtl end_grain',
    ...groups.end_grain,
  ];
  return Buffer.from(`${lines.join('\n')}\n`, 'utf8');
}

const DOCK_MTL = `# Materials for dock_plank.obj (generated by scripts/make-demo.js).
newmtl plank_wood
Kd 1 1 1
map_Kd plank_color.png
map_Bump -bm 1 plank_normal.png

newmtl end_grain
Kd 0.42 0.34 0.25
`;

// ---------------------------------------------------------------------------------------------
// Scenario

const README = `# harbor-props: demo assets for tanframe

A handful of props for a small fictional harbour scene: a fishing quay with a cargo crate, a
barrel, a mooring buoy, a coiled rope, a dock plank and a lobster trap. They are made for this
project by \`scripts/make-demo.js\` (procedural geometry and textures, deterministic byte for
byte; run \`node scripts/make-demo.js\` to regenerate). None of them carries a TANGENT
attribute: baking one is tanframe's job.

| file | case it shows |
| --- | --- |
| \`crate/crate.gltf\` (+ \`crate.bin\`, \`crate_color.png\`, \`crate_normal.png\`) | mirrored UVs: the -Z and -X sides reuse the left half of the texture mirrored (tangent handedness w flips there); 24 vertices, external buffer and images |
| \`barrel/barrel.glb\` | a UV seam down one side (the seam column is duplicated with u = 0 and u = 1), lids; normal map embedded in the GLB (bufferView image) |
| \`buoy/buoy.glb\` | UV sphere (24 x 16) with poles and a seam; embedded normal map |
| \`rope/rope_coil.gltf\` (+ \`rope_normal.png\`) | repeating UVs: u runs from 0 to 4 around the coil, the sampler repeats; the buffer is an embedded data: URI |
| \`dock/dock_plank.obj\` (+ \`dock_plank.mtl\`, \`plank_color.png\`, \`plank_normal.png\`) | OBJ quads, two \`usemtl\` groups, an MTL naming the normal map with \`map_Bump -bm 1\`; nail holes at u = 0.04 / 0.96, v = 0.3 / 0.7 (glTF v) |
| \`broken/lobster_trap.glb\` | deliberately flawed: 12 triangles with degenerate UVs (8 on the posts' top caps with all corners at one UV, 4 on the upper long bars with collinear UVs); for \`--fail-on degenerate-uv\` |

Normal maps are tangent space, green channel +Y (up), as glTF expects.

Try:

\`\`\`
tanframe audit examples/harbor-props --fail-on degenerate-uv
tanframe bake examples/harbor-props -o out/harbor-props --report out/harbor-props-report.json
\`\`\`
`;

function writeOut(rel, bytes) {
  const p = path.join(outDir, ...rel.split('/'));
  fs.mkdirSync(path.dirname(p), { recursive: true });
  fs.writeFileSync(p, bytes);
  console.log(`wrote ${rel} (${bytes.length} bytes)`);
}

function main() {
  // Crate: .gltf with external .bin and images.
  {
    const color = encodePng(CRATE_W, CRATE_H, colorMap(CRATE_W, CRATE_H, crateColor));
    const normal = encodePng(CRATE_W, CRATE_H, normalMapFromHeights(CRATE_W, CRATE_H, sampleHeights(CRATE_W, CRATE_H, crateHeight), 4, false));
    const g = new GltfBuilder();
    const colorTex = g.texture(color, 'crate_color.png');
    const normalTex = g.texture(normal, 'crate_normal.png');
    const mat = g.material({
      name: 'crate_wood',
      pbrMetallicRoughness: { baseColorTexture: { index: colorTex }, metallicFactor: 0, roughnessFactor: 0.8 },
      normalTexture: { index: normalTex },
    });
    g.mesh('crate', crateMesh(), mat);
    const { json, bin } = g.toGltf('crate.bin');
    writeOut('crate/crate.gltf', json);
    writeOut('crate/crate.bin', bin);
    writeOut('crate/crate_color.png', color);
    writeOut('crate/crate_normal.png', normal);
  }
  // Barrel: GLB, normal map in a bufferView.
  {
    const g = new GltfBuilder();
    const normal = encodePng(128, 128, normalMapFromHeights(128, 128, sampleHeights(128, 128, barrelHeight), 3, false));
    const tex = g.texture(normal);
    const mat = g.material({ name: 'barrel_oak', pbrMetallicRoughness: pbr([0.45, 0.3, 0.17, 1], 0.7), normalTexture: { index: tex } });
    g.mesh('barrel', barrelMesh(), mat);
    writeOut('barrel/barrel.glb', g.toGlb());
  }
  // Buoy: GLB sphere.
  {
    const g = new GltfBuilder();
    const normal = encodePng(64, 64, normalMapFromHeights(64, 64, sampleHeights(64, 64, buoyHeight), 2, true));
    const tex = g.texture(normal);
    const mat = g.material({ name: 'buoy_paint', pbrMetallicRoughness: pbr([0.8, 0.12, 0.06, 1], 0.45), normalTexture: { index: tex } });
    g.mesh('buoy', buoyMesh(), mat);
    writeOut('buoy/buoy.glb', g.toGlb());
  }
  // Rope coil: .gltf with the buffer in a data: URI and an external, tileable normal map.
  {
    const g = new GltfBuilder();
    const normal = encodePng(128, 128, normalMapFromHeights(128, 128, sampleHeights(128, 128, ropeHeight), 3, true));
    const tex = g.texture(normal, 'rope_normal.png');
    const mat = g.material({ name: 'hemp_rope', pbrMetallicRoughness: pbr([0.72, 0.6, 0.4, 1], 0.9), normalTexture: { index: tex } });
    g.mesh('rope_coil', ropeMesh(), mat);
    const { json } = g.toGltf(null);
    writeOut('rope/rope_coil.gltf', json);
    writeOut('rope/rope_normal.png', normal);
  }
  // Dock plank: OBJ + MTL.
  {
    writeOut('dock/dock_plank.obj', dockPlankObj());
    writeOut('dock/dock_plank.mtl', Buffer.from(DOCK_MTL, 'utf8'));
    writeOut('dock/plank_color.png', encodePng(PLANK_W, PLANK_H, colorMap(PLANK_W, PLANK_H, plankColor)));
    writeOut('dock/plank_normal.png', encodePng(PLANK_W, PLANK_H, normalMapFromHeights(PLANK_W, PLANK_H, sampleHeights(PLANK_W, PLANK_H, plankHeight), 3, false)));
  }
  // Lobster trap: GLB with degenerate UV triangles.
  {
    const g = new GltfBuilder();
    const normal = encodePng(64, 64, normalMapFromHeights(64, 64, sampleHeights(64, 64, trapHeight), 2, true));
    const tex = g.texture(normal);
    const mat = g.material({ name: 'trap_slats', pbrMetallicRoughness: pbr([0.52, 0.42, 0.3, 1], 0.85), normalTexture: { index: tex } });
    g.mesh('lobster_trap', lobsterTrapMesh(), mat);
    writeOut('broken/lobster_trap.glb', g.toGlb());
  }
  writeOut('README.md', Buffer.from(README, 'utf8'));
}

main();
