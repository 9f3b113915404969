// Compressed and quantized assets come back the way they went in (`bake --compression keep`,
// the default): Draco as Draco with TANGENT in the stream, meshopt views as meshopt views,
// quantized attributes quantized; `none` decodes; `draco` / `meshopt` compress every baked
// primitive that way. Checked with the Khronos gltf-validator, against a `--compression none`
// bake of the same input (within the bound the quantization implies), for size and for
// determinism.
import { cpSync, existsSync, mkdirSync, readdirSync, readFileSync } from 'node:fs';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readGltf } from '../../src/io/gltfRead.js';
import { readDracoSettings } from '../../src/io/draco.js';
import type { PrimitiveData } from '../../src/mesh/asset.js';
import { toFloat32 } from '../../src/mesh/decode.js';
import { DRACO_DEFAULT_BITS } from '../../src/lib/compression.js';
import { runCli } from '../helpers/cli.js';
import { dracoEncode, meshoptCompressGlb, parseGlbChunks } from '../helpers/compress.js';
import { buildGltf, glbBytes, unitQuad, writeGlb } from '../helpers/gltfBuilder.js';
import { validateGltfFile } from '../helpers/validate.js';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const samples = path.resolve(repoRoot, '../shared/datasets/gltf-samples');
const present = existsSync(samples);
if (!present) console.warn(`SKIPPED: compression checks on the shared samples: glTF sample assets not found at ${samples}`);
const DRACO = 'KHR_draco_mesh_compression';
const MESHOPT = 'EXT_meshopt_compression';

let root: string;
let n = 0;
const dir = () => {
  const d = path.join(root, `case${n++}`);
  mkdirSync(d, { recursive: true });
  return d;
};

beforeAll(async () => {
  root = await mkdtemp(path.join(tmpdir(), 'tanframe-keep-'));
});
afterAll(async () => {
  await rm(root, { recursive: true, force: true });
});

/** Bakes `input` to `out` (every primitive, no config) and returns the file's report. */
async function bake(input: string, out: string, extra: string[] = []): Promise<any> {
  const r = await runCli(['bake', input, '-o', out, '--all-primitives', '--no-config', '--json', ...extra], path.dirname(out));
  expect(r.code, r.stderr).toBe(0);
  const file = JSON.parse(r.stdout).files[0];
  expect(file.status, JSON.stringify(file.error)).toBe('ok');
  return file;
}

/** Validator errors of a file; images the shared sample set leaves out (IO_ERROR on image URIs) are not geometry and are ignored. */
async function expectValid(file: string): Promise<void> {
  // Source: Khronos gltf-validator.
  const v = await validateGltfFile(file);
  const errors = v.messages.filter((m) => m.startsWith('ERROR') && !/^ERROR IO_ERROR \/images\//.test(m));
  expect(errors, errors.join('\n')).toEqual([]);
}

/** Every shared sample file of a variant folder (glTF-Draco, glTF-Quantized). */
function variantFiles(variant: string): string[] {
  if (!present) return [];
  const out: string[] = [];
  for (const model of readdirSync(samples).sort()) {
    const d = path.join(samples, model, variant);
    if (!existsSync(d)) continue;
    for (const f of readdirSync(d).sort()) if (/\.(gltf|glb)$/.test(f)) out.push(path.join(model, variant, f));
  }
  return out;
}

const RAD = 180 / Math.PI;

/** Angle in radians between the xyz parts of two 3- or 4-vectors. */
function angle(a: ArrayLike<number>, ai: number, b: ArrayLike<number>, bi: number): number {
  const ax = a[ai], ay = a[ai + 1], az = a[ai + 2];
  const bx = b[bi], by = b[bi + 1], bz = b[bi + 2];
  const d = (ax * bx + ay * by + az * bz) / Math.sqrt((ax * ax + ay * ay + az * az) * (bx * bx + by * by + bz * bz));
  return Math.acos(Math.min(1, Math.max(-1, d)));
}

/*
 * Bounds the quantizations imply (our derivations):
 * - Uniform quantization with b bits over a range R (Draco POSITION, TEXCOORD and generic
 *   attributes: KHR_draco_mesh_compression / Draco's quantization transform): step R / (2^b - 1),
 *   each component within half a step of the value quantized.
 * - A unit vector whose components each move by at most e moves by at most sqrt(3) e, so its
 *   direction turns by at most asin(sqrt(3) e). TANGENT over [-1, 1] (R <= 2) with b bits:
 *   e = 1 / (2^b - 1): b = 10 gives 0.097 deg. snorm8 (round(x * 127)): e = 1 / 254, 0.39 deg.
 * - Octahedral encoding with b bits (Draco normals; meshopt's OCTAHEDRAL filter): the two
 *   coordinates on [-1, 1] step by s = 2 / (2^b - 2) at most, rounding moves the point by at
 *   most s / sqrt(2); the unnormalized octahedron point (x, y, 1 - |x| - |y|) moves by at most
 *   sqrt(3) times that and has length >= 1 / sqrt(3), so the direction turns by at most
 *   3 s / sqrt(2): b = 8 gives 0.96 deg. A filter decoded to 8-bit normalized components adds
 *   the snorm8 rounding above.
 * - w = +-1 lies on the ends of every range and decodes exactly.
 */
const uniformHalfStep = (range: number, bits: number) => range / (2 ** bits - 1) / 2;
const componentAngle = (e: number) => Math.asin(Math.min(1, Math.sqrt(3) * e));
const octahedralAngle = (bits: number) => (3 * (2 / (2 ** bits - 2))) / Math.SQRT2;
const SNORM8_ANGLE = componentAngle(1 / 254);
/** Slack for float32 rounding of values near 1 (2^-23 relative, a few operations). */
const F32 = 4e-7;

function floats(p: PrimitiveData, sem: string): Float32Array {
  return toFloat32(p.attributes[sem]);
}

function extent(v: Float32Array, k: number): number {
  let r = 0;
  for (let c = 0; c < k; c++) {
    let lo = Infinity, hi = -Infinity;
    for (let i = c; i < v.length; i += k) { lo = Math.min(lo, v[i]); hi = Math.max(hi, v[i]); }
    r = Math.max(r, hi - lo);
  }
  return r;
}

/** Bounds per attribute for matching a Draco output vertex to a plain bake's vertex. */
interface DracoBounds {
  position: number;
  texcoord: number;
  normal: number;
  tangent: number;
}

/**
 * Matches each vertex of a Draco output (`out`, in the stream's own vertex order) to the
 * vertices of a plain bake (`plain`) whose POSITION, TEXCOORD_0 and NORMAL are all within
 * `b`, and checks: every output vertex has such a match, every plain vertex is matched (none
 * lost), and for every output vertex some match has a tangent within `b.tangent` and exactly
 * the same w. Returns the worst figures seen.
 */
function matchDraco(out: PrimitiveData, plain: PrimitiveData, b: DracoBounds): { tangentDeg: number; unmatched: number; lost: number; wDiffers: number } {
  const op = floats(out, 'POSITION'), ou = floats(out, 'TEXCOORD_0'), on = floats(out, 'NORMAL'), ot = floats(out, 'TANGENT');
  const pp = floats(plain, 'POSITION'), pu = floats(plain, 'TEXCOORD_0'), pn = floats(plain, 'NORMAL'), pt = floats(plain, 'TANGENT');
  const no = op.length / 3, np = pp.length / 3;
  const matched = new Uint8Array(np);
  let unmatched = 0, wDiffers = 0, worst = 0;
  for (let i = 0; i < no; i++) {
    let best = Infinity;
    let wSame = false;
    let any = false;
    for (let j = 0; j < np; j++) {
      if (Math.abs(op[3 * i] - pp[3 * j]) > b.position || Math.abs(op[3 * i + 1] - pp[3 * j + 1]) > b.position || Math.abs(op[3 * i + 2] - pp[3 * j + 2]) > b.position) continue;
      if (Math.abs(ou[2 * i] - pu[2 * j]) > b.texcoord || Math.abs(ou[2 * i + 1] - pu[2 * j + 1]) > b.texcoord) continue;
      if (angle(on, 3 * i, pn, 3 * j) > b.normal) continue;
      any = true;
      matched[j] = 1;
      const t = angle(ot, 4 * i, pt, 4 * j);
      if (ot[4 * i + 3] === pt[4 * j + 3] && t < best) {
        best = t;
        wSame = true;
      }
    }
    if (!any) unmatched++;
    else if (!wSame) wDiffers++;
    else worst = Math.max(worst, best);
  }
  let lost = 0;
  for (let j = 0; j < np; j++) if (!matched[j]) lost++;
  return { tangentDeg: worst * RAD, unmatched, lost, wDiffers };
}

/** Tangent bytes at the output's encoding: vertices x 4 components x bytes per component. */
function tangentBytes(vertices: number, bytesPerComponent: number): number {
  return vertices * 4 * bytesPerComponent;
}

/** Baked output vertices of a file report. */
function verticesOut(file: any): number {
  return file.primitives.filter((p: any) => p.action === 'baked').reduce((s: number, p: any) => s + p.verticesOut, 0);
}

/** The stream bytes of a Draco primitive's buffer view in a read asset. */
function dracoStreamOf(asset: any, prim: any): Uint8Array {
  const v = asset.json.bufferViews[prim.extensions[DRACO].bufferView];
  return asset.buffers[v.buffer].subarray(v.byteOffset ?? 0, (v.byteOffset ?? 0) + v.byteLength);
}

/** Measured size figures, printed once for the README's table and the closing note. */
const figures: string[] = [];
afterAll(() => {
  if (figures.length) console.log(`compression size figures (bytesOut / bytesIn):\n${figures.join('\n')}`);
});

describe.skipIf(!present)('shared samples, glTF-Draco variants, --compression keep', () => {
  for (const rel of variantFiles('glTF-Draco')) {
    it(`${rel}: baked primitives stay Draco with TANGENT in the stream, input's bits, validator clean, tangents within the quantization bound, size bounded`, async () => {
      const input = path.join(samples, rel);
      const d = dir();
      const kept = path.join(d, `keep${path.extname(rel)}`);
      const plainOut = path.join(d, `none${path.extname(rel)}`);
      const file = await bake(input, kept);
      const plainFile = await bake(input, plainOut, ['--compression', 'none']);
      await expectValid(kept);
      const baked = file.primitives.filter((p: any) => p.action === 'baked');
      if (baked.length === 0) {
        // Nothing to bake: written as the input's bytes in either mode (DESIGN.md, Guarantees).
        expect(readFileSync(kept)).toEqual(readFileSync(input));
        expect(readFileSync(plainOut)).toEqual(readFileSync(input));
        expect(file.bytesOut).toBe(file.bytesIn);
        figures.push(`${rel} keep: ${file.bytesIn} -> ${file.bytesOut} (1.00), nothing baked`);
        return;
      }
      const inAsset = await readGltf(input);
      const out = await readGltf(kept);
      const plain = await readGltf(plainOut);
      // Source: KHR_draco_mesh_compression: the extension is required when primitives have no uncompressed data.
      expect(out.json.extensionsUsed).toEqual([DRACO]);
      expect(out.json.extensionsRequired).toEqual([DRACO]);
      expect(plain.json.extensionsUsed ?? []).not.toContain(DRACO);
      let tangentByteSize = 0;
      for (const pr of file.primitives) {
        expect(pr.compression).toEqual({ in: 'draco', out: 'draco' });
        const i = out.primitives.findIndex((p) => p.mesh === pr.mesh && p.primitive === pr.primitive);
        const jp = out.json.meshes[pr.mesh].primitives[pr.primitive];
        const ext = jp.extensions[DRACO];
        expect(ext).toBeDefined();
        if (pr.action !== 'baked') continue;
        expect(Object.keys(ext.attributes).sort()).toEqual(Object.keys(jp.attributes).sort());
        expect(ext.attributes.TANGENT).toBeTypeOf('number');
        // Fallback accessors: no bufferView, counts of the decoded data (KHR_draco_mesh_compression).
        for (const a of Object.values<number>(jp.attributes)) {
          expect(out.json.accessors[a].bufferView).toBeUndefined();
          expect(out.json.accessors[a].count).toBe(out.primitives[i].attributes.POSITION.array.length / 3);
        }
        expect(out.json.accessors[jp.indices].count).toBe(out.primitives[i].indices!.length);
        // Quantization bits: the input's where it records them, else the documented default.
        const inPrim = inAsset.json.meshes[pr.mesh].primitives[pr.primitive];
        const inSettings = await readDracoSettings(dracoStreamOf(inAsset, inPrim), inPrim.extensions[DRACO].attributes, 'in');
        const outSettings = await readDracoSettings(dracoStreamOf(out, jp), ext.attributes, 'out');
        for (const sem of Object.keys(inSettings.attributes)) expect(outSettings.attributes[sem], sem).toEqual(inSettings.attributes[sem]);
        const tangentBits = inSettings.attributes.TANGENT ? inSettings.attributes.TANGENT.bits : DRACO_DEFAULT_BITS.TANGENT;
        expect(outSettings.attributes.TANGENT.bits).toBe(tangentBits);
        expect(outSettings.method).toBe(inSettings.method);
        // Round trip against the plain bake (the input decoded, gathered as the solve split it).
        const pp = plain.primitives[i];
        const positionBits = outSettings.attributes.POSITION.bits!;
        const uvBits = outSettings.attributes.TEXCOORD_0.bits!;
        const normalBits = outSettings.attributes.NORMAL.bits!;
        const bounds: DracoBounds = {
          position: uniformHalfStep(extent(floats(pp, 'POSITION'), 3), positionBits) * (1 + 1e-3) + F32 * extent(floats(pp, 'POSITION'), 3),
          texcoord: uniformHalfStep(extent(floats(pp, 'TEXCOORD_0'), 2), uvBits) * (1 + 1e-3) + F32,
          normal: octahedralAngle(normalBits) + 1e-6,
          tangent: tangentBits === null ? 1e-6 : componentAngle(1 / (2 ** tangentBits - 1)) + 1e-6,
        };
        // The attributes matchDraco compares (with TANGENT) are all the primitive has.
        expect(Object.keys(out.primitives[i].attributes).sort()).toEqual(['NORMAL', 'POSITION', 'TANGENT', 'TEXCOORD_0']);
        const m = matchDraco(out.primitives[i], pp, bounds);
        expect(m.unmatched, 'output vertices with no plain vertex within the bounds').toBe(0);
        expect(m.lost, 'plain vertices no output vertex matches').toBe(0);
        expect(m.wDiffers, 'output vertices whose w differs from every match').toBe(0);
        expect(m.tangentDeg).toBeLessThanOrEqual(bounds.tangent * RAD);
        figures.push(`${rel}: tangent within ${m.tangentDeg.toFixed(4)} deg of the plain bake (bound ${(bounds.tangent * RAD).toFixed(4)})`);
        tangentByteSize += tangentBytes(pr.verticesOut, tangentBits === null ? 4 : tangentBits / 8);
      }
      // Size: at most 1.25x the input's bytes plus the added tangents at the output's encoding.
      expect(file.bytesOut).toBeLessThanOrEqual(1.25 * file.bytesIn + tangentByteSize);
      figures.push(`${rel} keep: ${file.bytesIn} -> ${file.bytesOut} (${(file.bytesOut / file.bytesIn).toFixed(2)}, bound ${Math.round(1.25 * file.bytesIn + tangentByteSize)}), none: ${plainFile.bytesOut}, ${baked.length} baked`);
    });
  }
});

describe.skipIf(!present)('shared samples, glTF-Quantized variants, --compression keep', () => {
  for (const rel of variantFiles('glTF-Quantized')) {
    it(`${rel}: quantized attributes stay as stored, TANGENT takes NORMAL's type, validator clean, tangents within the snorm bound`, async () => {
      const input = path.join(samples, rel);
      const d = dir();
      const kept = path.join(d, `keep${path.extname(rel)}`);
      const plainOut = path.join(d, `none${path.extname(rel)}`);
      const file = await bake(input, kept);
      const plainFile = await bake(input, plainOut, ['--compression', 'none']);
      await expectValid(kept);
      const out = await readGltf(kept);
      const plain = await readGltf(plainOut);
      const inAsset = await readGltf(input);
      expect(out.json.extensionsRequired).toContain('KHR_mesh_quantization');
      let tangentByteSize = 0;
      for (const pr of file.primitives) {
        expect(pr.compression.in).toBe('quantized');
        expect(pr.compression.out).toBe('quantized');
        if (pr.action !== 'baked') continue;
        const i = out.primitives.findIndex((p) => p.mesh === pr.mesh && p.primitive === pr.primitive);
        const o = out.primitives[i];
        const p = plain.primitives[i];
        const inNormal = inAsset.primitives[i].attributes.NORMAL;
        // TANGENT takes NORMAL's component type (KHR_mesh_quantization allows normalized BYTE / SHORT).
        expect(o.attributes.TANGENT.componentType).toBe(inNormal.normalized ? inNormal.componentType : 5126);
        for (const sem of Object.keys(o.attributes)) {
          if (sem === 'TANGENT') continue;
          // Lossless: the same stored values and types as the plain bake (both gather the input's values).
          expect(o.attributes[sem].componentType, sem).toBe(p.attributes[sem].componentType);
          expect(o.attributes[sem].array, sem).toEqual(p.attributes[sem].array);
        }
        expect(o.indices).toEqual(p.indices);
        const ot = floats(o, 'TANGENT');
        const pt = floats(p, 'TANGENT');
        const bound = inNormal.componentType === 5120 ? SNORM8_ANGLE : componentAngle(1 / 65534);
        let worst = 0;
        for (let v = 0; v < ot.length / 4; v++) {
          expect(ot[4 * v + 3]).toBe(pt[4 * v + 3]);
          worst = Math.max(worst, angle(ot, 4 * v, pt, 4 * v));
        }
        expect(worst).toBeLessThanOrEqual(bound + 1e-6);
        figures.push(`${rel} mesh ${pr.mesh}/${pr.primitive}: tangent within ${(worst * RAD).toFixed(4)} deg (bound ${(bound * RAD).toFixed(4)})`);
        tangentByteSize += tangentBytes(pr.verticesOut, inNormal.componentType === 5120 ? 1 : 2);
      }
      expect(file.bytesOut).toBeLessThanOrEqual(1.25 * file.bytesIn + tangentByteSize);
      figures.push(`${rel} keep: ${file.bytesIn} -> ${file.bytesOut} (${(file.bytesOut / file.bytesIn).toFixed(2)}, bound ${Math.round(1.25 * file.bytesIn + tangentByteSize)}), none: ${plainFile.bytesOut}`);
    });
  }
});

describe('--tangent-type says otherwise', () => {
  it.skipIf(!present)('a quantized sample keeps --tangent-type float and snorm16 when they are given', async () => {
    const d = dir();
    const input = path.join(samples, 'Avocado/glTF-Quantized/Avocado.gltf');
    for (const [type, componentType] of [['float', 5126], ['snorm16', 5122]] as const) {
      await bake(input, path.join(d, `${type}.gltf`), ['--tangent-type', type]);
      const out = await readGltf(path.join(d, `${type}.gltf`));
      expect(out.primitives[0].attributes.TANGENT.componentType).toBe(componentType);
      expect(out.primitives[0].attributes.NORMAL.componentType).toBe(5120);
    }
  });

  it('an octahedral meshopt input keeps --tangent-type float: TANGENT without the filter, as floats', async () => {
    const d = dir();
    const { json, bin } = await meshoptCompressGlb(new Uint8Array(readFileSync(path.join(repoRoot, 'examples/harbor-props/barrel/barrel.glb'))), { octahedralNormals: true });
    const input = await writeGlb(d, 'oct', json, bin);
    await bake(input, path.join(d, 'out.glb'), ['--tangent-type', 'float']);
    await expectValid(path.join(d, 'out.glb'));
    const out = parseGlbChunks(new Uint8Array(readFileSync(path.join(d, 'out.glb'))));
    const jp = out.json.meshes[0].primitives[0];
    const acc = out.json.accessors[jp.attributes.TANGENT];
    expect(acc.componentType).toBe(5126);
    const ext = out.json.bufferViews[acc.bufferView].extensions[MESHOPT];
    expect(ext.filter ?? 'NONE').toBe('NONE');
    expect(out.json.bufferViews[out.json.accessors[jp.attributes.NORMAL].bufferView].extensions[MESHOPT].filter).toBe('OCTAHEDRAL');
  });
});

/** Meshopt inputs the tests make with the meshoptimizer encoder: demo props and one shared sample. */
function meshoptSources(): { name: string; file: string; octahedral: boolean }[] {
  const out = [
    { name: 'barrel', file: path.join(repoRoot, 'examples/harbor-props/barrel/barrel.glb'), octahedral: false },
    { name: 'barrel-octahedral', file: path.join(repoRoot, 'examples/harbor-props/barrel/barrel.glb'), octahedral: true },
    { name: 'buoy-octahedral', file: path.join(repoRoot, 'examples/harbor-props/buoy/buoy.glb'), octahedral: true },
  ];
  if (present) out.push({ name: 'Duck-octahedral', file: path.join(samples, 'Duck/glTF-Binary/Duck.glb'), octahedral: true });
  return out;
}

describe('meshopt-compressed inputs, --compression keep', () => {
  for (const src of meshoptSources()) {
    it(`${src.name}: baked views stay meshopt-compressed${src.octahedral ? ' (NORMAL and TANGENT through OCTAHEDRAL)' : ''}, validator clean, attributes round-trip, size bounded`, async () => {
      const d = dir();
      const { json, bin } = await meshoptCompressGlb(new Uint8Array(readFileSync(src.file)), { octahedralNormals: src.octahedral });
      const input = await writeGlb(d, src.name, json, bin);
      await expectValid(input);
      const kept = path.join(d, 'keep.glb');
      const plainOut = path.join(d, 'none.glb');
      const file = await bake(input, kept);
      const plainFile = await bake(input, plainOut, ['--compression', 'none']);
      await expectValid(kept);
      const out = await readGltf(kept);
      const plain = await readGltf(plainOut);
      const chunks = parseGlbChunks(new Uint8Array(readFileSync(kept)));
      // Source: EXT_meshopt_compression: required when the fallback buffer holds no data.
      expect(chunks.json.extensionsRequired).toContain(MESHOPT);
      expect(chunks.json.buffers[1]).toEqual({ byteLength: expect.any(Number), extensions: { [MESHOPT]: { fallback: true } } });
      expect(plain.json.extensionsUsed ?? []).not.toContain(MESHOPT);
      if (!src.octahedral) expect(chunks.json.extensionsUsed).not.toContain('KHR_mesh_quantization');
      let tangentByteSize = 0;
      for (const pr of file.primitives) {
        expect(pr.compression).toEqual({ in: 'meshopt', out: 'meshopt' });
        if (pr.action !== 'baked') continue;
        const jp = chunks.json.meshes[pr.mesh].primitives[pr.primitive];
        const viewOf = (a: number) => chunks.json.bufferViews[chunks.json.accessors[a].bufferView];
        for (const [sem, a] of Object.entries<number>(jp.attributes)) {
          const ext = viewOf(a).extensions?.[MESHOPT];
          expect(ext, sem).toBeDefined();
          expect(ext.mode).toBe('ATTRIBUTES');
          expect(ext.filter ?? 'NONE', sem).toBe(src.octahedral && (sem === 'NORMAL' || sem === 'TANGENT') ? 'OCTAHEDRAL' : 'NONE');
        }
        expect(viewOf(jp.indices).extensions[MESHOPT].mode).toBe('TRIANGLES');
        const i = out.primitives.findIndex((p) => p.mesh === pr.mesh && p.primitive === pr.primitive);
        const o = out.primitives[i];
        const p = plain.primitives[i];
        // Round trip: meshopt's vertex codec is lossless, so every attribute other than NORMAL
        // (re-encoded through the filter) and TANGENT is the plain bake's, value for value.
        for (const sem of Object.keys(p.attributes)) {
          if (sem === 'TANGENT' || (sem === 'NORMAL' && src.octahedral)) continue;
          expect(o.attributes[sem].array, sem).toEqual(p.attributes[sem].array);
        }
        // The triangle codec may rotate a triangle's corners (keeping its winding).
        const rot = (idx: Uint32Array) => Array.from({ length: idx.length / 3 }, (_, t) => {
          const tri = [idx[3 * t], idx[3 * t + 1], idx[3 * t + 2]];
          const k = tri.indexOf(Math.min(...tri));
          return `${tri[k]},${tri[(k + 1) % 3]},${tri[(k + 2) % 3]}`;
        });
        expect(rot(o.indices!)).toEqual(rot(p.indices!));
        const bound = src.octahedral ? octahedralAngle(8) + SNORM8_ANGLE + 1e-6 : 0;
        const on = floats(o, 'NORMAL'), pn = floats(p, 'NORMAL');
        const ot = floats(o, 'TANGENT'), pt = floats(p, 'TANGENT');
        let worstNormal = 0, worstTangent = 0;
        for (let v = 0; v < ot.length / 4; v++) {
          expect(ot[4 * v + 3]).toBe(pt[4 * v + 3]);
          worstNormal = Math.max(worstNormal, angle(on, 3 * v, pn, 3 * v));
          worstTangent = Math.max(worstTangent, angle(ot, 4 * v, pt, 4 * v));
        }
        expect(worstNormal).toBeLessThanOrEqual(bound);
        expect(worstTangent).toBeLessThanOrEqual(bound);
        figures.push(`${src.name}: normal within ${(worstNormal * RAD).toFixed(4)} deg, tangent within ${(worstTangent * RAD).toFixed(4)} deg (bound ${(bound * RAD).toFixed(4)})`);
        tangentByteSize += tangentBytes(pr.verticesOut, src.octahedral ? 1 : 4);
      }
      expect(file.bytesOut).toBeLessThanOrEqual(1.25 * file.bytesIn + tangentByteSize);
      figures.push(`${src.name} (meshopt) keep: ${file.bytesIn} -> ${file.bytesOut} (${(file.bytesOut / file.bytesIn).toFixed(2)}, bound ${Math.round(1.25 * file.bytesIn + tangentByteSize)}), none: ${plainFile.bytesOut}`);
    });
  }
});

// Two primitives, each a unit quad in its own Draco stream; material 1 has a normal map, so
// only primitive 1 is baked:
//   3 ---- 2
//   |    / |
//   0 ---- 1
async function twoDracoQuads(): Promise<{ json: any; bin: Uint8Array; streams: Uint8Array[] }> {
  const q = unitQuad();
  const streams: Uint8Array[] = [];
  const ids: Record<string, number>[] = [];
  for (let k = 0; k < 2; k++) {
    const e = await dracoEncode({
      positions: q.attributes.POSITION.array as Float32Array, normals: q.attributes.NORMAL.array as Float32Array,
      uvs: q.attributes.TEXCOORD_0.array as Float32Array, indices: Uint32Array.from(q.indices!), method: 'sequential',
    });
    streams.push(e.bytes);
    ids.push(e.ids);
  }
  const at = [0, (streams[0].length + 3) & ~3];
  const bin = new Uint8Array((at[1] + streams[1].length + 3) & ~3);
  streams.forEach((s, k) => bin.set(s, at[k]));
  const prim = (k: number) => ({
    attributes: { POSITION: 4 * k, NORMAL: 4 * k + 1, TEXCOORD_0: 4 * k + 2 }, indices: 4 * k + 3, material: k,
    extensions: { [DRACO]: { bufferView: k, attributes: ids[k] } },
  });
  const accessors = [0, 1].flatMap(() => [
    { componentType: 5126, count: 4, type: 'VEC3', min: [0, 0, 0], max: [1, 1, 0] },
    { componentType: 5126, count: 4, type: 'VEC3' },
    { componentType: 5126, count: 4, type: 'VEC2' },
    { componentType: 5123, count: 6, type: 'SCALAR' },
  ]);
  const json = {
    asset: { version: '2.0' }, extensionsUsed: [DRACO], extensionsRequired: [DRACO],
    scene: 0, scenes: [{ nodes: [0] }], nodes: [{ mesh: 0 }],
    meshes: [{ primitives: [prim(0), prim(1)] }],
    materials: [{ name: 'plain' }, { name: 'mapped', normalTexture: { index: 0 } }],
    textures: [{ source: 0 }], images: [{ uri: 'normal.png' }],
    accessors,
    bufferViews: streams.map((s, k) => ({ buffer: 0, byteOffset: at[k], byteLength: s.length })),
    buffers: [{ byteLength: bin.length }],
  };
  return { json, bin, streams };
}

describe('primitives that are not baked keep their bytes', () => {
  it('Draco: the unbaked primitive keeps its stream byte for byte; the baked one gets a new stream with TANGENT', async () => {
    const d = dir();
    const { json, bin, streams } = await twoDracoQuads();
    const input = await writeGlb(d, 'two', json, bin);
    const r = await runCli(['bake', input, '-o', path.join(d, 'out.glb'), '--no-config', '--json'], d);
    expect(r.code).toBe(0);
    const file = JSON.parse(r.stdout).files[0];
    expect(file.primitives.map((p: any) => [p.action, p.compression.out])).toEqual([['skipped', 'draco'], ['baked', 'draco']]);
    const out = parseGlbChunks(new Uint8Array(readFileSync(path.join(d, 'out.glb'))));
    const [p0, p1] = out.json.meshes[0].primitives;
    const v0 = out.json.bufferViews[p0.extensions[DRACO].bufferView];
    expect(out.bin.subarray(v0.byteOffset, v0.byteOffset + v0.byteLength)).toEqual(streams[0]);
    expect(p0.extensions[DRACO].attributes).toEqual(json.meshes[0].primitives[0].extensions[DRACO].attributes);
    expect(p1.extensions[DRACO].attributes.TANGENT).toBeTypeOf('number');
    expect(out.json.extensionsUsed).toEqual([DRACO]);
    expect(out.json.extensionsRequired).toEqual([DRACO]);
    // Both still decode: the baked quad with its tangent along +u (x), w as the plain bake's.
    const back = await readGltf(path.join(d, 'out.glb'));
    expect(back.primitives[0].attributes.TANGENT).toBeUndefined();
    const t = floats(back.primitives[1], 'TANGENT');
    for (let v = 0; v < t.length / 4; v++) {
      expect(angle(t, 4 * v, [1, 0, 0], 0)).toBeLessThanOrEqual(componentAngle(1 / (2 ** DRACO_DEFAULT_BITS.TANGENT - 1)) + 1e-6);
      expect(Math.abs(t[4 * v + 3])).toBe(1);
    }
    // Source: Khronos gltf-validator (the normal map's image is absent: an IO error on the image only).
    await expectValid(path.join(d, 'out.glb'));
  });

  it('meshopt: views only the unbaked primitive reads keep their compressed bytes', async () => {
    const d = dir();
    const quads = buildGltf([unitQuad(), { ...unitQuad(), material: 1 }]);
    quads.json.materials[1].normalTexture = { index: 0 };
    quads.json.textures = [{ source: 0 }];
    quads.json.images = [{ uri: 'normal.png' }];
    const { json, bin } = await meshoptCompressGlb(glbBytes(quads.json, quads.bin));
    const input = await writeGlb(d, 'two', json, bin);
    const r = await runCli(['bake', input, '-o', path.join(d, 'out.glb'), '--no-config', '--json'], d);
    expect(r.code).toBe(0);
    const out = parseGlbChunks(new Uint8Array(readFileSync(path.join(d, 'out.glb'))));
    const streamOf = (j: any, b: Uint8Array, a: number) => {
      const e = j.bufferViews[j.accessors[a].bufferView].extensions[MESHOPT];
      return b.subarray(e.byteOffset, e.byteOffset + e.byteLength);
    };
    const before = json.meshes[0].primitives[0];
    const after = out.json.meshes[0].primitives[0];
    for (const sem of Object.keys(before.attributes)) expect(streamOf(out.json, out.bin, after.attributes[sem]), sem).toEqual(streamOf(json, bin, before.attributes[sem]));
    expect(streamOf(out.json, out.bin, after.indices)).toEqual(streamOf(json, bin, before.indices));
    const baked = out.json.meshes[0].primitives[1];
    expect(out.json.bufferViews[out.json.accessors[baked.attributes.TANGENT].bufferView].extensions[MESHOPT]).toBeDefined();
    await expectValid(path.join(d, 'out.glb'));
  });
});

describe('--compression draco, meshopt and none on any input', () => {
  it('a plain demo prop comes out Draco-compressed with --compression draco, meshopt-compressed with meshopt; validator clean; decodes to the plain bake', async () => {
    const d = dir();
    const input = path.join(repoRoot, 'examples/harbor-props/barrel/barrel.glb');
    await bake(input, path.join(d, 'none.glb'), ['--compression', 'none']);
    const plain = await readGltf(path.join(d, 'none.glb'));
    const draco = await bake(input, path.join(d, 'draco.glb'), ['--compression', 'draco']);
    expect(draco.primitives[0].compression).toEqual({ in: 'none', out: 'draco' });
    expect(draco.notes).toEqual(['baked primitives compressed with KHR_draco_mesh_compression (--compression draco)']);
    await expectValid(path.join(d, 'draco.glb'));
    const dj = parseGlbChunks(new Uint8Array(readFileSync(path.join(d, 'draco.glb')))).json;
    expect(dj.extensionsRequired).toEqual([DRACO]);
    const back = await readGltf(path.join(d, 'draco.glb'));
    const pp = plain.primitives[0];
    const b = DRACO_DEFAULT_BITS;
    const bounds: DracoBounds = {
      position: uniformHalfStep(extent(floats(pp, 'POSITION'), 3), b.POSITION) * (1 + 1e-3) + F32,
      texcoord: uniformHalfStep(extent(floats(pp, 'TEXCOORD_0'), 2), b.TEXCOORD) * (1 + 1e-3) + F32,
      normal: octahedralAngle(b.NORMAL) + 1e-6,
      tangent: componentAngle(1 / (2 ** b.TANGENT - 1)) + 1e-6,
    };
    const m = matchDraco(back.primitives[0], pp, bounds);
    expect([m.unmatched, m.lost, m.wDiffers]).toEqual([0, 0, 0]);
    expect(m.tangentDeg).toBeLessThanOrEqual(bounds.tangent * RAD);
    const meshopt = await bake(input, path.join(d, 'meshopt.glb'), ['--compression', 'meshopt']);
    expect(meshopt.primitives[0].compression).toEqual({ in: 'none', out: 'meshopt' });
    await expectValid(path.join(d, 'meshopt.glb'));
    const mo = await readGltf(path.join(d, 'meshopt.glb'));
    // Lossless: the meshopt codecs without a filter give back the plain bake's values.
    for (const sem of Object.keys(pp.attributes)) expect(mo.primitives[0].attributes[sem].array, sem).toEqual(pp.attributes[sem].array);
    figures.push(`barrel --compression draco: ${draco.bytesIn} -> ${draco.bytesOut}; --compression meshopt: ${meshopt.bytesIn} -> ${meshopt.bytesOut}`);
  });

  it('an OBJ demo prop comes out Draco-compressed with --compression draco; validator clean', async () => {
    const d = dir();
    const file = await bake(path.join(repoRoot, 'examples/harbor-props/dock/dock_plank.obj'), path.join(d, 'plank.glb'), ['--compression', 'draco']);
    expect(file.primitives.filter((p: any) => p.action === 'baked').map((p: any) => p.compression)).toEqual(file.primitives.filter((p: any) => p.action === 'baked').map(() => ({ in: 'none', out: 'draco' })));
    await expectValid(path.join(d, 'plank.glb'));
    const out = await readGltf(path.join(d, 'plank.glb'));
    expect(out.json.extensionsRequired).toEqual([DRACO]);
    for (const p of out.primitives) expect(p.attributes.TANGENT).toBeDefined();
  });

  // A unit quad with one morph target lifting vertex 2 (the top right corner) by 0.5 in z,
  // its NORMAL deltas tilting the normals there:
  //   3 ---- 2 (+0.5 z)
  //   |    / |
  //   0 ---- 1
  it('a morph-target primitive goes into Draco with the sequential method, so its target accessors follow the stream\'s vertex order', async () => {
    const d = dir();
    const q = unitQuad();
    q.targets = [{
      POSITION: { array: new Float32Array([0, 0, 0, 0, 0, 0, 0, 0, 0.5, 0, 0, 0]), type: 'VEC3' },
      NORMAL: { array: new Float32Array([0, 0, 0, 0, 0, 0, -0.3, -0.3, -0.1, 0, 0, 0]), type: 'VEC3' },
    }];
    const { json, bin } = buildGltf([q]);
    json.meshes[0].weights = [0];
    const input = await writeGlb(d, 'morph', json, bin);
    await bake(input, path.join(d, 'none.glb'), ['--compression', 'none']);
    const file = await bake(input, path.join(d, 'draco.glb'), ['--compression', 'draco']);
    expect(file.primitives[0].compression).toEqual({ in: 'none', out: 'draco' });
    await expectValid(path.join(d, 'draco.glb'));
    const out = await readGltf(path.join(d, 'draco.glb'));
    const plain = await readGltf(path.join(d, 'none.glb'));
    const jp = out.json.meshes[0].primitives[0];
    expect((await readDracoSettings(dracoStreamOf(out, jp), jp.extensions[DRACO].attributes, 'out')).method).toBe(0);
    const o = out.primitives[0], p = plain.primitives[0];
    expect(o.indices).toEqual(p.indices);
    const op = floats(o, 'POSITION'), pp = floats(p, 'POSITION');
    const step = uniformHalfStep(extent(pp, 3), DRACO_DEFAULT_BITS.POSITION) + F32;
    for (let k = 0; k < pp.length; k++) expect(Math.abs(op[k] - pp[k])).toBeLessThanOrEqual(step);
    // The target's deltas are plain accessors, value for value the plain bake's, on the same vertices.
    for (const sem of Object.keys(p.targets[0])) expect(o.targets[0][sem].array, sem).toEqual(p.targets[0][sem].array);
  });

  it.skipIf(!present)('--compression none writes a Draco sample decoded and plain, and says so', async () => {
    const d = dir();
    const file = await bake(path.join(samples, 'Duck/glTF-Draco/Duck.gltf'), path.join(d, 'none.gltf'), ['--compression', 'none']);
    expect(file.notes).toEqual(['decompressed KHR_draco_mesh_compression (written uncompressed: --compression none)']);
    expect(file.primitives[0].compression).toEqual({ in: 'draco', out: 'none' });
    const out = await readGltf(path.join(d, 'none.gltf'));
    expect(out.json.extensionsUsed).toBeUndefined();
    expect(out.decompressed ?? []).toEqual([]);
  });
});

describe('the report and the summary', () => {
  it('the summary shows a file\'s size change when it exceeds 10%, and only then; the report gives bytesIn and bytesOut', async () => {
    const d = dir();
    const input = path.join(repoRoot, 'examples/harbor-props/barrel/barrel.glb');
    const r = await runCli(['bake', input, '-o', path.join(d, 'draco.glb'), '--no-config', '--compression', 'draco', '--report', path.join(d, 'r.json')], d);
    expect(r.code).toBe(0);
    const file = JSON.parse(readFileSync(path.join(d, 'r.json'), 'utf8')).files[0];
    expect(file.bytesIn).toBe(readFileSync(input).byteLength);
    expect(file.bytesOut).toBe(readFileSync(path.join(d, 'draco.glb')).byteLength);
    const percent = Math.round((file.bytesOut / file.bytesIn - 1) * 100);
    expect(percent).toBeLessThan(-10);
    expect(r.stdout).toContain(`size ${(file.bytesIn / 1024).toFixed(0)} KB -> ${(file.bytesOut / 1024).toFixed(1)} KB (${percent}%)`);
    // Within 10%: not shown (an octahedral meshopt barrel, its tangents in one byte per component).
    const { json, bin } = await meshoptCompressGlb(new Uint8Array(readFileSync(input)), { octahedralNormals: true });
    const small = await writeGlb(d, 'oct', json, bin);
    const s = await runCli(['bake', small, '-o', path.join(d, 'oct.out.glb'), '--no-config', '--report', path.join(d, 's.json')], d);
    const sf = JSON.parse(readFileSync(path.join(d, 's.json'), 'utf8')).files[0];
    expect(Math.abs(sf.bytesOut / sf.bytesIn - 1)).toBeLessThanOrEqual(0.1);
    expect(s.stdout).not.toContain('size ');
  });
});

describe('determinism', () => {
  it('compressed outputs are byte-identical across runs and --jobs 1 / 2', async () => {
    const d = dir();
    const inputs = path.join(d, 'in');
    mkdirSync(inputs);
    for (const src of meshoptSources()) {
      const { json, bin } = await meshoptCompressGlb(new Uint8Array(readFileSync(src.file)), { octahedralNormals: src.octahedral });
      await writeGlb(inputs, src.name, json, bin);
    }
    const { json, bin } = await twoDracoQuads();
    await writeGlb(inputs, 'two-draco', json, bin);
    if (present) cpSync(path.join(samples, 'Duck/glTF-Draco'), path.join(inputs, 'duck-draco'), { recursive: true });
    const runs: Record<string, Buffer>[] = [];
    for (const [k, jobs] of [['a', '1'], ['b', '2'], ['c', '2']] as const) {
      const out = path.join(d, k);
      const r = await runCli(['bake', inputs, '-o', out, '--all-primitives', '--no-config', '--jobs', jobs], d);
      expect(r.code, r.stderr).toBe(0);
      const files: Record<string, Buffer> = {};
      const walk = (sub: string) => {
        for (const e of readdirSync(path.join(out, sub), { withFileTypes: true })) {
          const rel = path.join(sub, e.name);
          if (e.isDirectory()) walk(rel);
          else if (!e.name.startsWith('.tanframe-state')) files[rel] = readFileSync(path.join(out, rel));
        }
      };
      walk('');
      runs.push(files);
    }
    expect(Object.keys(runs[0]).length).toBeGreaterThan(4);
    for (const other of runs.slice(1)) {
      expect(Object.keys(other).sort()).toEqual(Object.keys(runs[0]).sort());
      for (const f of Object.keys(runs[0])) expect(other[f].equals(runs[0][f]), f).toBe(true);
    }
  }, 60000);
});
