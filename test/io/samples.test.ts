import { existsSync } from 'node:fs';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writeFilesAtomic } from '../../src/io/files.js';
import { readGltf } from '../../src/io/gltfRead.js';
import { encodeGltf } from '../../src/io/gltfWrite.js';
import type { AttributeData, PrimitiveData } from '../../src/mesh/asset.js';
import { validateGltfFile } from '../helpers/validate.js';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const samples = path.resolve(repoRoot, '../shared/datasets/gltf-samples');
const present = existsSync(samples);
if (!present) console.warn(`SKIPPED: glTF sample assets not found at ${samples}`);

const FILES = [
  'NormalTangentMirrorTest/glTF-Binary/NormalTangentMirrorTest.glb',
  'BoxInterleaved/glTF-Binary/BoxInterleaved.glb',
  'SimpleSparseAccessor/glTF/SimpleSparseAccessor.gltf',
  'MultiUVTest/glTF-Binary/MultiUVTest.glb',
  'TriangleWithoutIndices/glTF/TriangleWithoutIndices.gltf',
  'Avocado/glTF-Quantized/Avocado.gltf',
];

const COUNTED = ['nodes', 'meshes', 'materials', 'textures', 'images', 'animations', 'skins'];
const counts = (json: any) => Object.fromEntries(COUNTED.map((k) => [k, json[k]?.length ?? 0]));

/** Per triangle corner, the element of `a` that corner uses. */
function corners(p: PrimitiveData, a: AttributeData): number[][] {
  const n = a.itemSize;
  const idx = p.indices ?? Uint32Array.from({ length: a.array.length / n }, (_, i) => i);
  return Array.from(idx, (v) => Array.from(a.array.subarray(v * n, (v + 1) * n)));
}

function allCorners(p: PrimitiveData) {
  return {
    attributes: Object.fromEntries(Object.entries(p.attributes).map(([k, a]) => [k, [a.componentType, a.normalized, corners(p, a)]])),
    targets: p.targets.map((t) => Object.fromEntries(Object.entries(t).map(([k, a]) => [k, corners(p, a)]))),
  };
}

/** Per-component min and max of decoded values. */
function minMax(a: AttributeData): { min: number[]; max: number[] } {
  const min = new Array(a.itemSize).fill(Infinity);
  const max = new Array(a.itemSize).fill(-Infinity);
  for (let i = 0; i < a.array.length; i++) {
    min[i % a.itemSize] = Math.min(min[i % a.itemSize], a.array[i]);
    max[i % a.itemSize] = Math.max(max[i % a.itemSize], a.array[i]);
  }
  return { min, max };
}

describe.skipIf(!present)('real glTF sample assets', () => {
  let out: string;
  beforeAll(async () => {
    out = await mkdtemp(path.join(tmpdir(), 'tanframe-samples-'));
  });
  afterAll(async () => {
    await rm(out, { recursive: true, force: true });
  });

  for (const rel of FILES) {
    it(`${rel}: decodes, re-encodes unchanged, validates with 0 errors, keeps counts and corners`, async () => {
      const src = path.join(samples, rel);
      const input = await readGltf(src);
      expect(input.primitives.length).toBeGreaterThan(0);
      for (const p of input.primitives) {
        const acc = input.json.accessors[input.json.meshes[p.mesh].primitives[p.primitive].attributes.POSITION];
        // Source: the sample file's own POSITION min/max, which glTF 2.0 (3.6.2.5) defines
        // over the values after sparse substitution, in stored (unnormalized) units.
        const mm = minMax(p.attributes.POSITION);
        for (let c = 0; c < 3; c++) {
          expect(mm.min[c]).toBeCloseTo(acc.min[c], 5);
          expect(mm.max[c]).toBeCloseTo(acc.max[c], 5);
        }
      }
      const format = rel.endsWith('.glb') ? 'glb' : 'gltf';
      const outPath = path.join(out, path.dirname(rel), `copy.${format}`);
      await writeFilesAtomic(encodeGltf(input, new Map(), { format, outPath }));
      // Source: Khronos gltf-validator. Images the sample folder itself lacks (see the
      // datasets MANIFEST) are reported as IO errors; those are the reader's warnings.
      const v = await validateGltfFile(outPath);
      const io = v.messages.filter((m) => m.startsWith('ERROR IO_ERROR /images/'));
      expect(io).toHaveLength(input.warnings.length);
      expect(v.errors - io.length, v.messages.join('\n')).toBe(0);
      const back = await readGltf(outPath);
      expect(counts(back.json)).toEqual(counts(input.json));
      expect(back.primitives.map(allCorners)).toEqual(input.primitives.map(allCorners));
    });
  }

  it('NormalTangentMirrorTest: stored tangents have the handedness counts the dataset manifest lists', async () => {
    const a = await readGltf(path.join(samples, FILES[0]));
    let plus = 0;
    let minus = 0;
    for (const p of a.primitives) {
      const t = p.attributes.TANGENT.array;
      for (let i = 3; i < t.length; i += 4) t[i] === 1 ? plus++ : t[i] === -1 ? minus++ : 0;
    }
    // Source: datasets/gltf-samples/MANIFEST.md: "w = ±1 (2690 × +1, 80 × −1)".
    expect([plus, minus]).toEqual([2690, 80]);
  });

  it('Avocado (quantized): integer attribute types and 406 vertices, images missing as warnings', async () => {
    const a = await readGltf(path.join(samples, FILES[5]));
    const p = a.primitives[0];
    // Source: datasets/gltf-samples/MANIFEST.md: 406 vertices; int8-normalized NORMAL/TANGENT,
    // uint16 POSITION/TEXCOORD_0; its three PNGs are not in the glTF-Quantized folder.
    expect(p.attributes.POSITION.array.length / 3).toBe(406);
    expect(p.attributes.POSITION.array).toBeInstanceOf(Uint16Array);
    expect(p.attributes.TEXCOORD_0.array).toBeInstanceOf(Uint16Array);
    expect(p.attributes.NORMAL.array).toBeInstanceOf(Int8Array);
    expect(p.attributes.NORMAL.normalized).toBe(true);
    expect(p.attributes.TANGENT.array).toBeInstanceOf(Int8Array);
    expect(a.warnings).toHaveLength(3);
  });

  it('TriangleWithoutIndices: non-indexed, three vertices', async () => {
    const a = await readGltf(path.join(samples, FILES[4]));
    expect(a.primitives[0].indices).toBeNull();
    // Source: the sample's name and README: one triangle without indices.
    expect(a.primitives[0].attributes.POSITION.array.length).toBe(9);
  });

  it('MultiUVTest: both texture coordinate sets are decoded', async () => {
    const a = await readGltf(path.join(samples, FILES[3]));
    // Source: the sample's README: a model with two UV sets.
    expect(Object.keys(a.primitives[0].attributes)).toEqual(expect.arrayContaining(['TEXCOORD_0', 'TEXCOORD_1']));
  });
});
