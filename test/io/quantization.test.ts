// KHR_mesh_quantization in and out: every component type the extension allows reads, bakes and
// writes back unchanged; --tangent-type writes TANGENT as normalized SHORT / BYTE and declares
// the extension.
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { computeFrames } from '../../src/frames/computeFrames.js';
import { readGltf } from '../../src/io/gltfRead.js';
import { toFloat32 } from '../../src/mesh/decode.js';
import { runCli } from '../helpers/cli.js';
import { GltfBuilder, componentTypeOf, minMax as minMax_, writeGlb, type TypedArray } from '../helpers/gltfBuilder.js';
import { encodePngRgba8 } from '../helpers/png.js';
import { validateGltfFile } from '../helpers/validate.js';

let root = '';
let n = 0;
beforeAll(async () => {
  root = await mkdtemp(path.join(tmpdir(), 'tanframe-quant-'));
});
afterAll(async () => {
  await rm(root, { recursive: true, force: true });
});

// A unit quad in the z = 0 plane, uv = (x, 1 - y) scaled to each type's range:
//   3 ---- 2
//   |    / |     expected frame everywhere: t = +x, w = +1
//   |  /   |
//   0 ---- 1
const UNIT_POS = [0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0];
const UNIT_UV = [0, 1, 1, 1, 1, 0, 0, 0];
const IDX = new Uint16Array([0, 1, 2, 0, 2, 3]);

type Fmt = { name: string; make: (v: number[]) => TypedArray; normalized: boolean };
const fmt = (name: string, ctor: any, scale: number, normalized: boolean): Fmt => ({ name, normalized, make: (v) => ctor.from(v.map((x) => Math.round(x * scale))) });
const B = fmt('byte', Int8Array, 1, false);
const BN = fmt('byte normalized', Int8Array, 127, true);
const UB = fmt('unsigned byte', Uint8Array, 1, false);
const UBN = fmt('unsigned byte normalized', Uint8Array, 255, true);
const S = fmt('short', Int16Array, 1, false);
const SN = fmt('short normalized', Int16Array, 32767, true);
const US = fmt('unsigned short', Uint16Array, 1, false);
const USN = fmt('unsigned short normalized', Uint16Array, 65535, true);

// Source: KHR_mesh_quantization, "Extending Mesh Attributes" and "Extending Morph Target
// Attributes" tables (the formats the extension adds).
const POSITION = [B, BN, UB, UBN, S, SN, US, USN];
const NORMAL = [BN, SN];
const TANGENT = [BN, SN];
const TEXCOORD = [B, BN, UB, UBN, S, SN, US, USN];
const TARGET_POSITION = [B, BN, S, SN];
const TARGET_NORMAL = [BN, SN];
const TARGET_TANGENT = [BN, SN];

/**
 * Stores a vertex attribute with every element padded to 4 bytes (byteStride declared when
 * padding was needed), as glTF 2.0 3.6.2.4 requires of vertex attributes; returns the accessor.
 */
function padded(b: GltfBuilder, array: TypedArray, itemSize: number, normalized: boolean, minMax = false): number {
  const count = array.length / itemSize;
  const elem = itemSize * array.BYTES_PER_ELEMENT;
  const stride = (elem + 3) & ~3;
  const bytes = new Uint8Array(count * stride);
  const src = new Uint8Array(array.buffer, array.byteOffset, array.byteLength);
  for (let i = 0; i < count; i++) bytes.set(src.subarray(i * elem, (i + 1) * elem), i * stride);
  const view = b.addView(bytes, stride !== elem ? { byteStride: stride, target: 34962 } : { target: 34962 });
  const type = ['SCALAR', 'VEC2', 'VEC3', 'VEC4'][itemSize - 1];
  const acc: any = { bufferView: view, componentType: componentTypeOf(array), count, type };
  if (normalized) acc.normalized = true;
  if (minMax) Object.assign(acc, minMax_(array, itemSize));
  return b.addAccessorObject(acc);
}

function withNormalMap(b: GltfBuilder): void {
  const png = encodePngRgba8(1, 1, new Uint8Array([128, 128, 255, 255]));
  b.json.images = [{ uri: `data:image/png;base64,${Buffer.from(png).toString('base64')}` }];
  b.json.textures = [{ source: 0 }];
  b.json.materials[0].normalTexture = { index: 0 };
}

describe('KHR_mesh_quantization inputs of every allowed component type', () => {
  for (let i = 0; i < 8; i++) {
    const pf = POSITION[i], nf = NORMAL[i % 2], tf = TANGENT[(i + 1) % 2], uf = TEXCOORD[(i + 3) % 8];
    const tp = TARGET_POSITION[i % 4], tn = TARGET_NORMAL[(i + 1) % 2], tt = TARGET_TANGENT[i % 2];
    it(`POSITION ${pf.name}, NORMAL ${nf.name}, TANGENT ${tf.name}, TEXCOORD ${uf.name}; targets ${tp.name} / ${tn.name} / ${tt.name}`, async () => {
      const b = new GltfBuilder();
      const prim = {
        attributes: {
          POSITION: padded(b, pf.make(UNIT_POS), 3, pf.normalized, true),
          NORMAL: padded(b, nf.make([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]), 3, true),
          TANGENT: padded(b, tf.make([0, 1, 0, 1, 0, 1, 0, 1, 0, 1, 0, 1, 0, 1, 0, 1]), 4, true),
          TEXCOORD_0: padded(b, uf.make(UNIT_UV), 2, uf.normalized),
        },
        indices: b.addAccessor(IDX, 'SCALAR', { target: 34963 }),
        material: 0,
        targets: [{
          POSITION: padded(b, tp.make([0, 0, 0, 0, 0, 1, 0, 0, 0, 0, 0, 0]), 3, tp.normalized, true),
          NORMAL: padded(b, tn.make(new Array(12).fill(0)), 3, true),
          TANGENT: padded(b, tt.make(new Array(12).fill(0)), 3, true),
        }],
      };
      b.json.meshes = [{ primitives: [prim] }];
      b.json.nodes = [{ mesh: 0 }];
      b.json.scenes = [{ nodes: [0] }];
      b.json.materials = [{}];
      withNormalMap(b);
      const { json, bin } = b.build({ extensionsUsed: ['KHR_mesh_quantization'], extensionsRequired: ['KHR_mesh_quantization'] });
      const dir = path.join(root, `case${n++}`);
      const input = await writeGlb(dir, 'q', json, bin);
      // Source: Khronos gltf-validator accepts the input as written (the formats are allowed).
      const vin = await validateGltfFile(input);
      expect(vin.errors, vin.messages.join('\n')).toBe(0);
      const out = path.join(dir, 'out.glb');
      const r = await runCli(['bake', input, '-o', out], dir);
      expect(r.stderr).toBe('');
      expect(r.code).toBe(0);
      const a = await readGltf(input);
      const o = await readGltf(out);
      const pa = a.primitives[0], po = o.primitives[0];
      for (const sem of ['POSITION', 'NORMAL', 'TEXCOORD_0']) {
        expect(po.attributes[sem].componentType, sem).toBe(pa.attributes[sem].componentType);
        expect(po.attributes[sem].normalized, sem).toBe(pa.attributes[sem].normalized);
        expect(Array.from(po.attributes[sem].array), sem).toEqual(Array.from(pa.attributes[sem].array));
      }
      expect(po.targets[0].POSITION.array).toEqual(pa.targets[0].POSITION.array);
      // The frames come from the decoded values: t = +x, w = +1 (the stored +y tangents were wrong).
      const t = toFloat32(po.attributes.TANGENT);
      for (let v = 0; v < 4; v++) expect(Array.from(t.subarray(4 * v, 4 * v + 4), (x) => Math.round(x * 1e5) / 1e5 + 0)).toEqual([1, 0, 0, 1]);
      expect(o.json.extensionsRequired).toContain('KHR_mesh_quantization');
      // Source: Khronos gltf-validator.
      const v = await validateGltfFile(out);
      expect(v.errors, v.messages.join('\n')).toBe(0);
    });
  }
});

describe('--tangent-type', () => {
  /** A float quad with a morph target that tilts it (POSITION and NORMAL deltas). */
  async function floatQuad(): Promise<{ input: string; dir: string }> {
    const b = new GltfBuilder();
    const tilt = [0, 0, 0, 0, 0, 0.5, 0, 0, 0.5, 0, 0, 0];
    const l = Math.hypot(0.5, 1);
    const dn: number[] = [];
    for (let v = 0; v < 4; v++) dn.push(-0.5 / l, 0, 1 / l - 1);
    b.addPrimitive({
      attributes: {
        POSITION: { array: new Float32Array(UNIT_POS), type: 'VEC3' },
        NORMAL: { array: new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]), type: 'VEC3' },
        TEXCOORD_0: { array: new Float32Array(UNIT_UV), type: 'VEC2' },
      },
      indices: IDX,
      material: 0,
      targets: [{ POSITION: { array: new Float32Array(tilt), type: 'VEC3' }, NORMAL: { array: new Float32Array(dn), type: 'VEC3' } }],
    });
    withNormalMap(b);
    const { json, bin } = b.build();
    const dir = path.join(root, `case${n++}`);
    return { input: await writeGlb(dir, 'f', json, bin), dir };
  }

  for (const [type, ct, max] of [['snorm16', 5122, 32767], ['snorm8', 5120, 127]] as const) {
    it(`${type}: normalized ${ct === 5122 ? 'SHORT' : 'BYTE'} codes round(x * ${max}), w = +-${max}, KHR_mesh_quantization required, validator clean`, async () => {
      const { input, dir } = await floatQuad();
      const outF = path.join(dir, 'float.glb');
      const outQ = path.join(dir, `${type}.glb`);
      expect((await runCli(['bake', input, '-o', outF], dir)).code).toBe(0);
      expect((await runCli(['bake', input, '-o', outQ, '--tangent-type', type], dir)).code).toBe(0);
      const f = await readGltf(outF);
      const q = await readGltf(outQ);
      expect(f.json.extensionsUsed ?? []).not.toContain('KHR_mesh_quantization');
      const tq = q.primitives[0].attributes.TANGENT;
      expect(tq.componentType).toBe(ct);
      expect(tq.normalized).toBe(true);
      const tf = f.primitives[0].attributes.TANGENT.array;
      // Source: KHR_mesh_quantization / glTF 2.0 3.11 (signed normalized: c / (2^(n-1) - 1)).
      expect(Array.from(tq.array)).toEqual(Array.from(tf, (x) => Math.round(x * max)));
      for (let v = 0; v < 4; v++) expect(Math.abs(tq.array[4 * v + 3])).toBe(max);
      expect(q.json.extensionsUsed).toContain('KHR_mesh_quantization');
      expect(q.json.extensionsRequired).toContain('KHR_mesh_quantization');
      // The morph delta is measured from the quantized base: base + delta is the morphed frame.
      const base = toFloat32(tq);
      const d = q.primitives[0].targets[0].TANGENT.array;
      const pos = new Float32Array(UNIT_POS.map((x, i) => x + [0, 0, 0, 0, 0, 0.5, 0, 0, 0.5, 0, 0, 0][i]));
      const l = Math.hypot(0.5, 1);
      const nrm = new Float32Array([-0.5 / l, 0, 1 / l, -0.5 / l, 0, 1 / l, -0.5 / l, 0, 1 / l, -0.5 / l, 0, 1 / l]);
      const direct = computeFrames({ positions: pos, normals: nrm, uvs: new Float32Array(UNIT_UV), indices: Uint32Array.from(IDX) });
      const idx = q.primitives[0].indices!;
      for (let c = 0; c < idx.length; c++) {
        for (let k = 0; k < 3; k++) expect(Math.abs(base[4 * idx[c] + k] + d[3 * idx[c] + k] - direct.tangents[4 * direct.indices[c] + k])).toBeLessThan(1e-6);
      }
      // Source: Khronos gltf-validator.
      const v = await validateGltfFile(outQ);
      expect(v.errors, v.messages.join('\n')).toBe(0);
    });
  }
});
