import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readGltf, readGltfBytes } from '../../src/io/gltfRead.js';
import { TanframeError } from '../../src/mesh/errors.js';
import { GltfBuilder, buildGltf, glbBytes, writeGlb, writeGltf, type BuildPrimitive } from '../helpers/gltfBuilder.js';

let root: string;
let n = 0;
/** A fresh folder per case. */
const dir = () => path.join(root, `case${n++}`);

beforeAll(async () => {
  root = await mkdtemp(path.join(tmpdir(), 'tanframe-read-'));
});
afterAll(async () => {
  await rm(root, { recursive: true, force: true });
});

// A unit quad in the z = 0 plane, two triangles:
//   3 ---- 2
//   |    / |
//   |  /   |
//   0 ---- 1
const POS = new Float32Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0]);
const NRM = new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]);
const UV = new Float32Array([0, 1, 1, 1, 1, 0, 0, 0]);
const TAN = new Float32Array([1, 0, 0, 1, 1, 0, 0, 1, 1, 0, 0, 1, 1, 0, 0, 1]);
const IDX = new Uint16Array([0, 1, 2, 0, 2, 3]);

function quad(extra: Partial<BuildPrimitive> = {}): BuildPrimitive {
  return {
    attributes: {
      POSITION: { array: POS, type: 'VEC3' },
      NORMAL: { array: NRM, type: 'VEC3' },
      TEXCOORD_0: { array: UV, type: 'VEC2' },
      TANGENT: { array: TAN, type: 'VEC4' },
    },
    indices: IDX,
    ...extra,
  };
}

async function codeOf(p: Promise<unknown>): Promise<string> {
  try {
    await p;
  } catch (err) {
    expect(err).toBeInstanceOf(TanframeError);
    expect((err as Error).message).not.toMatch(/\n/);
    return (err as TanframeError).code;
  }
  return 'no error';
}

describe('decoded arrays over the file bytes', () => {
  it('tightly packed aligned data is a view of the file, strided and sparse data are copies, with the same values', async () => {
    const sparse = quad();
    sparse.attributes.TEXCOORD_0 = { array: UV, type: 'VEC2', sparse: { indices: [1], values: new Float32Array([0.5, 0.5]) } };
    for (const interleaved of [false, true]) {
      const { json, bin } = buildGltf([interleaved ? quad() : sparse], { interleaved });
      const asset = await readGltfBytes(glbBytes(json, bin), 'x.glb');
      const file = asset.buffers[0].buffer;
      const a = asset.primitives[0].attributes;
      expect([...a.POSITION.array]).toEqual([...POS]);
      expect([...a.NORMAL.array]).toEqual([...NRM]);
      expect([...a.TEXCOORD_0.array]).toEqual(interleaved ? [...UV] : [0, 1, 0.5, 0.5, 1, 0, 0, 0]);
      expect(a.POSITION.array.buffer === file).toBe(!interleaved);
      expect(a.NORMAL.array.buffer === file).toBe(!interleaved);
      expect(a.TEXCOORD_0.array.buffer === file).toBe(false);
      // 16-bit indices are widened to 32 bits: a copy.
      expect([...asset.primitives[0].indices!]).toEqual([...IDX]);
      expect(asset.primitives[0].indices!.buffer === file).toBe(false);
    }
  });

  it('32-bit indices stored aligned are a view of the file', async () => {
    const { json, bin } = buildGltf([quad({ indices: new Uint32Array(IDX) })]);
    const asset = await readGltfBytes(glbBytes(json, bin), 'x.glb');
    expect([...asset.primitives[0].indices!]).toEqual([...IDX]);
    expect(asset.primitives[0].indices!.buffer === asset.buffers[0].buffer).toBe(true);
  });
});

describe('readGltf decodes accessors', () => {
  for (const layout of ['separate', 'interleaved', 'offset'] as const) {
    for (const container of ['glb', 'gltf'] as const) {
      it(`reads a ${layout} layout from ${container}`, async () => {
        const { json, bin } = buildGltf([quad()], { interleaved: layout === 'interleaved', attributeByteOffset: layout === 'offset' ? 8 : 0 });
        const file = container === 'glb' ? await writeGlb(dir(), 'q', json, bin) : await writeGltf(dir(), 'q', json, bin);
        const asset = await readGltf(file);
        expect(asset.container).toBe(container);
        expect(asset.primitives).toHaveLength(1);
        const p = asset.primitives[0];
        expect(p.mode).toBe(4);
        expect(p.attributes.POSITION.array).toEqual(POS);
        expect(p.attributes.NORMAL.array).toEqual(NRM);
        expect(p.attributes.TEXCOORD_0.array).toEqual(UV);
        expect(p.attributes.TANGENT.array).toEqual(TAN);
        expect(p.attributes.TANGENT.itemSize).toBe(4);
        expect(p.indices).toEqual(Uint32Array.from(IDX));
        expect(asset.warnings).toEqual([]);
      });
    }
  }

  it('copies attributes whose offset is not aligned to the component size', async () => {
    // 2 stray bytes before the floats: Float32Array could not view them in place.
    const { json, bin } = buildGltf([quad()], { attributeByteOffset: 2 });
    const asset = await readGltf(await writeGltf(dir(), 'u', json, bin));
    expect(asset.primitives[0].attributes.POSITION.array).toEqual(POS);
    expect(asset.primitives[0].attributes.TEXCOORD_0.array).toEqual(UV);
  });

  it('keeps normalized integer attributes in their stored type and flags', async () => {
    const uv16 = new Uint16Array([0, 65535, 65535, 65535, 65535, 0, 0, 0]);
    const color = new Uint8Array([255, 0, 0, 255, 0, 255, 0, 255, 0, 0, 255, 255, 9, 9, 9, 255]);
    const joints = new Uint8Array([0, 1, 0, 0, 1, 0, 0, 0, 0, 0, 0, 0, 1, 1, 0, 0]);
    const weights = new Uint8Array([255, 0, 0, 0, 128, 127, 0, 0, 255, 0, 0, 0, 200, 55, 0, 0]);
    const prim = quad();
    prim.attributes.TEXCOORD_0 = { array: uv16, type: 'VEC2', normalized: true };
    prim.attributes.COLOR_0 = { array: color, type: 'VEC4', normalized: true };
    prim.attributes.JOINTS_0 = { array: joints, type: 'VEC4' };
    prim.attributes.WEIGHTS_0 = { array: weights, type: 'VEC4', normalized: true };
    const { json, bin } = buildGltf([prim], { interleaved: true });
    const a = (await readGltf(await writeGlb(dir(), 'n', json, bin))).primitives[0].attributes;
    expect(a.TEXCOORD_0.array).toBeInstanceOf(Uint16Array);
    expect(a.TEXCOORD_0.array).toEqual(uv16);
    expect(a.TEXCOORD_0.normalized).toBe(true);
    expect(a.COLOR_0.array).toEqual(color);
    expect(a.JOINTS_0.array).toEqual(joints);
    expect(a.JOINTS_0.normalized).toBe(false);
    expect(a.WEIGHTS_0.array).toEqual(weights);
  });

  it('accepts integer POSITION and byte NORMAL/TANGENT only with KHR_mesh_quantization', async () => {
    // Source: KHR_mesh_quantization attribute table (POSITION short, NORMAL/TANGENT byte normalized).
    const pos = new Int16Array([0, 0, 0, 100, 0, 0, 100, 100, 0, 0, 100, 0]);
    const nrm = new Int8Array([0, 0, 127, 0, 0, 127, 0, 0, 127, 0, 0, 127]);
    const tan = new Int8Array([127, 0, 0, 127, 127, 0, 0, 127, 127, 0, 0, 127, 127, 0, 0, -127]);
    const prim = quad();
    prim.attributes.POSITION = { array: pos, type: 'VEC3' };
    prim.attributes.NORMAL = { array: nrm, type: 'VEC3', normalized: true };
    prim.attributes.TANGENT = { array: tan, type: 'VEC4', normalized: true };
    const q = buildGltf([prim], { interleaved: true, extensionsUsed: ['KHR_mesh_quantization'], extensionsRequired: ['KHR_mesh_quantization'] });
    const a = (await readGltf(await writeGlb(dir(), 'q', q.json, q.bin))).primitives[0].attributes;
    expect(a.POSITION.array).toEqual(pos);
    expect(a.NORMAL.array).toEqual(nrm);
    expect(a.TANGENT.array).toEqual(tan);

    const plain = buildGltf([prim], { interleaved: true });
    const file = await writeGlb(dir(), 'p', plain.json, plain.bin);
    expect(await codeOf(readGltf(file))).toBe('bad-accessor');
    await expect(readGltf(file)).rejects.toThrow(/POSITION must be float.*KHR_mesh_quantization/);
  });

  it('refuses a wrong accessor type for a semantic', async () => {
    const prim = quad();
    prim.attributes.NORMAL = { array: new Float32Array(16), type: 'VEC4' };
    const { json, bin } = buildGltf([prim]);
    await expect(readGltf(await writeGlb(dir(), 't', json, bin))).rejects.toMatchObject({ code: 'bad-accessor', message: expect.stringMatching(/NORMAL must be VEC3, not VEC4/) });
  });

  it('applies sparse substitution over stored data and over zeros', async () => {
    const prim = quad();
    prim.attributes.POSITION = { array: POS, type: 'VEC3', sparse: { indices: [1, 3], values: new Float32Array([5, 6, 7, 8, 9, 10]), indexComponentType: 5123 } };
    prim.attributes._DELTA = { array: new Float32Array(4), type: 'SCALAR', noBufferView: true, sparse: { indices: [2], values: new Float32Array([42]) } };
    prim.targets = [{ POSITION: { array: new Float32Array(12), type: 'VEC3', noBufferView: true, sparse: { indices: [0], values: new Float32Array([0, 0, 1]), indexComponentType: 5125 } } }];
    const { json, bin } = buildGltf([prim]);
    const p = (await readGltf(await writeGltf(dir(), 's', json, bin))).primitives[0];
    expect(p.attributes.POSITION.array).toEqual(new Float32Array([0, 0, 0, 5, 6, 7, 1, 1, 0, 8, 9, 10]));
    expect(p.attributes._DELTA.array).toEqual(new Float32Array([0, 0, 42, 0]));
    expect(p.targets[0].POSITION.array).toEqual(new Float32Array([0, 0, 1, 0, 0, 0, 0, 0, 0, 0, 0, 0]));
  });

  it('decodes an accessor without bufferView or sparse as zeros', async () => {
    const prim = quad();
    prim.attributes.COLOR_0 = { array: new Float32Array(16).fill(7), type: 'VEC4', noBufferView: true };
    const { json, bin } = buildGltf([prim]);
    const p = (await readGltf(await writeGlb(dir(), 'z', json, bin))).primitives[0];
    expect(p.attributes.COLOR_0.array).toEqual(new Float32Array(16));
  });

  it('removes matrix column padding (MAT2 of unsigned bytes)', async () => {
    // Source: glTF 2.0 specification, 3.6.2.4: each column of a 1-byte MAT2 starts 4-byte aligned.
    // element i, column c = [10i + 2c, 10i + 2c + 1], then 2 padding bytes (0xEE).
    const b = new GltfBuilder();
    b.addPrimitive(quad());
    const stored = new Uint8Array(4 * 8).fill(0xee);
    for (let i = 0; i < 4; i++) for (let c = 0; c < 2; c++) stored.set([10 * i + 2 * c, 10 * i + 2 * c + 1], i * 8 + c * 4);
    const acc = b.addAccessorObject({ bufferView: b.addView(stored), componentType: 5121, count: 4, type: 'MAT2' });
    b.json.meshes[0].primitives[0].attributes._M = acc;
    const { json, bin } = b.build();
    const m = (await readGltf(await writeGlb(dir(), 'm', json, bin))).primitives[0].attributes._M;
    expect(m.itemSize).toBe(4);
    expect([...m.array]).toEqual([0, 1, 2, 3, 10, 11, 12, 13, 20, 21, 22, 23, 30, 31, 32, 33]);
  });

  it('reads non-indexed primitives and widens every index type to Uint32', async () => {
    const { json, bin } = buildGltf([
      quad({ indices: undefined }),
      quad({ indices: new Uint8Array([0, 1, 2]) }),
      quad({ indices: new Uint32Array([3, 2, 0]), mode: 5, material: 1 }),
    ]);
    const asset = await readGltf(await writeGlb(dir(), 'i', json, bin));
    const [a, b, c] = asset.primitives;
    expect(a.indices).toBeNull();
    expect(a.attributes.POSITION.array).toEqual(POS);
    expect(b.indices).toEqual(new Uint32Array([0, 1, 2]));
    expect(c.indices).toEqual(new Uint32Array([3, 2, 0]));
    expect([c.mesh, c.primitive, c.mode, c.material]).toEqual([0, 2, 5, 1]);
    expect(a.material).toBeNull();
  });

  it('reads a buffer embedded as a base64 data: URI', async () => {
    const { json, bin } = buildGltf([quad()]);
    const asset = await readGltf(await writeGltf(dir(), 'd', json, bin, true));
    expect(asset.primitives[0].attributes.TANGENT.array).toEqual(TAN);
    expect(asset.buffers[0].byteLength).toBe(bin.byteLength);
  });

  it('locates external images and warns (without failing) about missing ones', async () => {
    const d = dir();
    const { json, bin } = buildGltf([quad()]);
    json.images = [{ uri: 'tex/present%20one.png' }, { uri: 'absent.png' }, { uri: 'data:image/png;base64,iVBORw0KGgo=' }];
    const file = await writeGltf(d, 'img', json, bin);
    await writeFile(path.join(d, 'tmp.txt'), '');
    await import('node:fs/promises').then((f) => f.mkdir(path.join(d, 'tex'))).then(() => writeFile(path.join(d, 'tex', 'present one.png'), new Uint8Array([1, 2])));
    const asset = await readGltf(file);
    expect(asset.externalImages.map((e) => [e.image, e.uri, e.bytes && [...e.bytes]])).toEqual([
      [0, 'tex/present%20one.png', [1, 2]],
      [1, 'absent.png', null],
    ]);
    expect(asset.warnings).toEqual(["image 'absent.png' not found; its URI is kept"]);
  });
});

describe('readGltf refuses bad files with the right code', () => {
  async function glbFile(bytes: Uint8Array): Promise<string> {
    const file = path.join(dir(), 'x.glb');
    await import('node:fs/promises').then((f) => f.mkdir(path.dirname(file), { recursive: true }));
    await writeFile(file, bytes);
    return file;
  }
  const good = () => {
    const { json, bin } = buildGltf([quad()]);
    return glbBytes(json, bin);
  };

  it('empty file', async () => {
    expect(await codeOf(readGltf(await glbFile(new Uint8Array(0))))).toBe('empty-file');
    expect(await codeOf(readGltfBytes(new Uint8Array(0), 'x.gltf'))).toBe('empty-file');
  });

  it('bad magic', async () => {
    const b = good();
    b[3] = 0x58; // 'glTX'
    await expect(readGltf(await glbFile(b))).rejects.toMatchObject({ code: 'bad-glb', message: expect.stringMatching(/glTF/) });
  });

  it('wrong container version', async () => {
    const b = good();
    new DataView(b.buffer).setUint32(4, 1, true);
    await expect(readGltf(await glbFile(b))).rejects.toMatchObject({ code: 'bad-glb', message: expect.stringMatching(/version 1/) });
  });

  it('truncated file', async () => {
    const b = good();
    expect(await codeOf(readGltf(await glbFile(b.subarray(0, b.length - 10))))).toBe('bad-glb');
    expect(await codeOf(readGltf(await glbFile(b.subarray(0, 7))))).toBe('bad-glb');
    await expect(readGltf(await glbFile(b.subarray(0, b.length - 10)))).rejects.toThrow(/truncated/);
  });

  it('length field disagreeing with the file size, and chunks overrunning the file', async () => {
    const longer = new Uint8Array(good().length + 4);
    longer.set(good());
    expect(await codeOf(readGltf(await glbFile(longer)))).toBe('bad-glb');
    const b = good();
    new DataView(b.buffer).setUint32(12, 1 << 30, true); // JSON chunk length beyond the file
    expect(await codeOf(readGltf(await glbFile(b)))).toBe('bad-glb');
  });

  it('first chunk not JSON', async () => {
    const b = good();
    new DataView(b.buffer).setUint32(16, 0x004e4942, true);
    expect(await codeOf(readGltf(await glbFile(b)))).toBe('bad-glb');
  });

  it('bad JSON, in GLB and in .gltf', async () => {
    const b = glbBytes({ asset: { version: '2.0' } }, new Uint8Array(0));
    b.fill(0x20, 20);
    b.set(new TextEncoder().encode('{"a":'), 20);
    expect(await codeOf(readGltf(await glbFile(b)))).toBe('bad-json');
    const f = path.join(dir(), 'x.gltf');
    await import('node:fs/promises').then((m) => m.mkdir(path.dirname(f), { recursive: true }));
    await writeFile(f, '{"asset": {"version": "2.0"},');
    expect(await codeOf(readGltf(f))).toBe('bad-json');
    await writeFile(f, '[1, 2]');
    expect(await codeOf(readGltf(f))).toBe('bad-gltf');
    await writeFile(f, new Uint8Array([0x7b, 0xff, 0x7d]));
    expect(await codeOf(readGltf(f))).toBe('bad-json');
  });

  it('GLB whose buffer 0 needs a BIN chunk it does not have', async () => {
    const { json } = buildGltf([quad()]);
    expect(await codeOf(readGltf(await glbFile(glbBytes(json, new Uint8Array(0)))))).toBe('bad-glb');
  });

  it('accessor running past its buffer view', async () => {
    const { json, bin } = buildGltf([quad()]);
    json.accessors[json.meshes[0].primitives[0].attributes.NORMAL].count = 5;
    await expect(readGltf(await glbFile(glbBytes(json, bin)))).rejects.toMatchObject({ code: 'bad-accessor', message: expect.stringMatching(/needs 60 bytes.*has 48/) });
  });

  it('accessor fields of the wrong JSON type (numeric strings, inherited names)', async () => {
    for (const [field, value] of [['componentType', '5126'], ['type', 'constructor'], ['type', 'toString'], ['count', '4']]) {
      // on an application-specific attribute, which no semantic table would catch
      const prim = quad();
      prim.attributes._X = { array: new Float32Array(4), type: 'SCALAR' };
      const { json, bin } = buildGltf([prim]);
      json.accessors[json.meshes[0].primitives[0].attributes._X][field] = value;
      await expect(readGltf(await glbFile(glbBytes(json, bin))), `${field}=${value}`).rejects.toMatchObject({ code: 'bad-accessor' });
    }
  });

  it('accessor index that does not exist', async () => {
    const { json, bin } = buildGltf([quad()]);
    json.meshes[0].primitives[0].attributes.NORMAL = 99;
    expect(await codeOf(readGltf(await glbFile(glbBytes(json, bin))))).toBe('bad-accessor');
  });

  it('byteStride smaller than the element', async () => {
    const { json, bin } = buildGltf([quad()], { interleaved: true });
    json.bufferViews[json.accessors[0].bufferView].byteStride = 8;
    expect(await codeOf(readGltf(await glbFile(glbBytes(json, bin))))).toBe('bad-accessor');
  });

  it('attributes with different counts', async () => {
    const prim = quad();
    prim.attributes.TEXCOORD_0 = { array: new Float32Array(6), type: 'VEC2' };
    const { json, bin } = buildGltf([prim]);
    await expect(readGltf(await glbFile(glbBytes(json, bin)))).rejects.toMatchObject({ code: 'bad-accessor', message: expect.stringMatching(/3 elements.*4/) });
  });

  it('sparse index out of range', async () => {
    const prim = quad();
    prim.attributes._X = { array: new Float32Array(4), type: 'SCALAR', sparse: { indices: [4], values: new Float32Array(1) } };
    const { json, bin } = buildGltf([prim]);
    expect(await codeOf(readGltf(await glbFile(glbBytes(json, bin))))).toBe('bad-accessor');
  });

  it('index out of range', async () => {
    const { json, bin } = buildGltf([quad({ indices: new Uint16Array([0, 1, 4]) })]);
    await expect(readGltf(await glbFile(glbBytes(json, bin)))).rejects.toMatchObject({ code: 'bad-index', message: expect.stringMatching(/index 4 at position 2.*4 vertices/) });
  });

  it('a huge zero-filled accessor is refused before allocating', async () => {
    const { json, bin } = buildGltf([quad()]);
    // 2^31 MAT4 floats would be 128 GiB; the file is a few hundred bytes.
    json.accessors.push({ componentType: 5126, count: 2 ** 31, type: 'MAT4' });
    json.meshes[0].primitives[0] = { attributes: { _HUGE: json.accessors.length - 1 } };
    expect(await codeOf(readGltf(await glbFile(glbBytes(json, bin))))).toBe('too-large');
  });

  for (const [uri, why] of [
    ['../outside.bin', '..'],
    ['sub/%2e%2e/%2e%2e/outside.bin', 'encoded ..'],
    ['http://example.com/x.bin', 'http'],
    ['/etc/passwd', 'absolute'],
    ['file:///etc/passwd', 'file:'],
  ]) {
    it(`buffer URI refused: ${why}`, async () => {
      const { json, bin } = buildGltf([quad()]);
      const file = await writeGltf(dir(), 'u', json, bin);
      const text = JSON.parse(await import('node:fs/promises').then((m) => m.readFile(file, 'utf8')));
      text.buffers[0].uri = uri;
      await writeFile(file, JSON.stringify(text));
      expect(await codeOf(readGltf(file))).toBe('bad-uri');
    });
  }

  it('image URI with a scheme is refused too', async () => {
    const { json, bin } = buildGltf([quad()]);
    json.images = [{ uri: 'https://example.com/a.png' }];
    expect(await codeOf(readGltf(await writeGltf(dir(), 'i', json, bin)))).toBe('bad-uri');
  });

  it('missing .bin', async () => {
    const d = dir();
    const { json, bin } = buildGltf([quad()]);
    const file = await writeGltf(d, 'm', json, bin);
    await rm(path.join(d, 'm.bin'));
    await expect(readGltf(file)).rejects.toMatchObject({ code: 'missing-resource', message: expect.stringMatching(/m\.bin/) });
  });

  it('buffer declaring more bytes than it has', async () => {
    const { json, bin } = buildGltf([quad()]);
    json.buffers[0].byteLength += 4;
    expect(await codeOf(readGltf(await glbFile(glbBytes(json, bin))))).toBe('bad-gltf');
  });

  it('bufferView overrunning its buffer', async () => {
    const { json, bin } = buildGltf([quad()]);
    json.bufferViews[0].byteOffset = bin.length;
    expect(await codeOf(readGltf(await glbFile(glbBytes(json, bin))))).toBe('bad-gltf');
  });

  it('an unknown required extension is refused with its name; required compression extensions are not', async () => {
    const { json, bin } = buildGltf([quad()], { extensionsUsed: ['VENDOR_future_geometry'], extensionsRequired: ['VENDOR_future_geometry'] });
    await expect(readGltf(await glbFile(glbBytes(json, bin)))).rejects.toMatchObject({ code: 'unsupported-feature', message: expect.stringMatching(/VENDOR_future_geometry is not supported/) });
    // Declared but unused compression: nothing to decode, the file reads as plain data.
    for (const ext of ['KHR_draco_mesh_compression', 'EXT_meshopt_compression']) {
      const plain = buildGltf([quad()], { extensionsUsed: [ext], extensionsRequired: [ext] });
      const asset = await readGltf(await glbFile(glbBytes(plain.json, plain.bin)));
      expect(asset.primitives[0].attributes.POSITION.array).toEqual(POS);
    }
  });

  it('a Draco primitive whose stream is not Draco data is refused', async () => {
    const { json, bin } = buildGltf([quad()], { extensionsUsed: ['KHR_draco_mesh_compression'] });
    json.bufferViews.push({ buffer: 0, byteOffset: 0, byteLength: 4 });
    json.meshes[0].primitives[0].extensions = { KHR_draco_mesh_compression: { bufferView: json.bufferViews.length - 1, attributes: { POSITION: 0 } } };
    await expect(readGltf(await glbFile(glbBytes(json, bin)))).rejects.toMatchObject({ code: 'bad-draco', message: expect.stringMatching(/KHR_draco_mesh_compression data does not decode/) });
  });

  it('glTF 1.0 and a missing asset.version', async () => {
    const { json, bin } = buildGltf([quad()]);
    json.asset.version = '1.0';
    expect(await codeOf(readGltf(await glbFile(glbBytes(json, bin))))).toBe('unsupported-format');
    delete json.asset;
    expect(await codeOf(readGltf(await glbFile(glbBytes(json, bin))))).toBe('bad-gltf');
  });
});
