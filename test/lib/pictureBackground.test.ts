// The normal map behind a UV picture: found through the material (glTF 2.0, 3.9
// normalTexture; 3.8 images in a bufferView, a data: URI or a file), shrunk, with the
// sampler's wrap modes and the KHR_texture_transform it is sampled through.
import { describe, expect, it } from 'vitest';
import { decodePng } from '../../src/imaging/png.js';
import { normalMapBackground, PICTURE_BACKGROUND_SIDE, type BackgroundCache } from '../../src/lib/pictureBackground.js';
import { readAssetBytes } from '../../src/lib/processFile.js';
import { buildGltf, glbBytes, unitQuad } from '../helpers/gltfBuilder.js';
import { encodePngRgba8 } from '../helpers/png.js';

/** A w x h RGBA map, flat (128, 128, 255) but for texel (0, 0), which is (255, 0, 0). */
function mapPng(w: number, h: number): Uint8Array {
  const px = new Uint8Array(w * h * 4);
  for (let i = 0; i < w * h; i++) px.set(i === 0 ? [255, 0, 0, 255] : [128, 128, 255, 255], i * 4);
  return encodePngRgba8(w, h, px);
}

/** A unit quad GLB whose material's normal texture is `image` (a json.images entry) via `sampler`. */
async function quadAsset(image: any, info: any = { index: 0 }, sampler?: any) {
  const { json, bin } = buildGltf([unitQuad()]);
  json.materials[0].normalTexture = info;
  json.textures = [{ source: 0, ...(sampler ? { sampler: 0 } : {}) }];
  if (sampler) json.samplers = [sampler];
  json.images = [image];
  return readAssetBytes(glbBytes(json, bin), 'quad.glb');
}

describe('normalMapBackground', () => {
  it('decodesAJpegMapWithTheDecoderItIsGiven', async () => {
    // A flat 16 x 16 JPEG (128, 128, 255), written by jpeg-js's own encoder; JPEG is lossy, so
    // the shrunk copy is compared within 3 levels.
    const jpegJs = (await import('jpeg-js')).default;
    const px = new Uint8Array(16 * 16 * 4);
    for (let i = 0; i < 256; i++) px.set([128, 128, 255, 255], i * 4);
    const bytes = jpegJs.encode({ data: px, width: 16, height: 16 }, 95).data;
    const asset = await quadAsset({ uri: `data:image/jpeg;base64,${Buffer.from(bytes).toString('base64')}` });
    const r = normalMapBackground(asset, 0, 0, new Map(), jpegJs.decode as any);
    expect(r.note).toBeNull();
    const img = decodePng(r.background!.png);
    expect([img.width, img.height]).toEqual([16, 16]);
    for (const [k, want] of [[0, 128], [1, 128], [2, 255]]) expect(Math.abs(img.data[40 * 3 + k] - want)).toBeLessThanOrEqual(3);
  });

  it('leavesOutAMapTooLargeToDecodeForAPicture', async () => {
    // Only the header is read: a PNG whose IHDR says 8192 x 4096 (PNG specification, 11.2.2).
    const png = mapPng(2, 2);
    new DataView(png.buffer, png.byteOffset).setUint32(16, 8192);
    new DataView(png.buffer, png.byteOffset).setUint32(20, 4096);
    const r = normalMapBackground(await quadAsset({ uri: `data:image/png;base64,${Buffer.from(png).toString('base64')}` }), 0, 0, new Map());
    expect(r).toEqual({ background: null, note: 'the normal map (8192 x 4096) is too large to draw behind the layout' });
  });

  it('shrinksADataUriMapAndKeepsItsColours', async () => {
    const png = mapPng(2 * PICTURE_BACKGROUND_SIDE, PICTURE_BACKGROUND_SIDE);
    const asset = await quadAsset({ uri: `data:image/png;base64,${Buffer.from(png).toString('base64')}` });
    const r = normalMapBackground(asset, 0, 0, new Map());
    expect(r.note).toBeNull();
    const b = r.background!;
    expect([b.width, b.height]).toEqual([PICTURE_BACKGROUND_SIDE, PICTURE_BACKGROUND_SIDE / 2]);
    expect([b.wrapS, b.wrapT, b.transform]).toEqual(['repeat', 'repeat', null]); // glTF defaults
    const img = decodePng(b.png);
    expect([img.width, img.height, img.channels]).toEqual([b.width, b.height, 3]);
    // Texel (0, 0) averages the red texel with three flat ones: (255 + 3 * 128) / 4 = 159.75.
    expect([...img.data.subarray(0, 3)]).toEqual([160, 96, 191]);
    expect([...img.data.subarray(3, 6)]).toEqual([128, 128, 255]);
  });

  it('readsAMapFromABufferViewOnceAndTakesTheSamplerAndTransform', async () => {
    const { json, bin } = buildGltf([unitQuad()]);
    const png = mapPng(4, 4);
    const at = (bin.length + 3) & ~3;
    const all = new Uint8Array(at + png.length);
    all.set(bin);
    all.set(png, at);
    json.buffers[0].byteLength = all.length;
    json.bufferViews.push({ buffer: 0, byteOffset: at, byteLength: png.length });
    json.images = [{ bufferView: json.bufferViews.length - 1, mimeType: 'image/png' }];
    json.textures = [{ source: 0, sampler: 0 }];
    json.samplers = [{ wrapS: 33648, wrapT: 33071 }]; // mirrored repeat, clamp to edge
    json.materials[0].normalTexture = { index: 0, extensions: { KHR_texture_transform: { offset: [0.5, 0], scale: [2, 2] } } };
    const asset = await readAssetBytes(glbBytes(json, all), 'quad.glb');
    const cache: BackgroundCache = new Map();
    const r = normalMapBackground(asset, 0, 0, cache);
    const b = r.background!;
    expect([b.width, b.height, b.wrapS, b.wrapT]).toEqual([4, 4, 'mirror', 'clamp']);
    // KHR_texture_transform: s = 2u + 0.5, t = 2v (column-major, translation in m[6], m[7]).
    expect(b.transform).toEqual([2, 0, 0, 0, 2, 0, 0.5, 0, 1]);
    // A second primitive of the same asset reuses the decode, and owns a copy of the bytes.
    const again = normalMapBackground(asset, 0, 0, cache).background!;
    expect(cache.size).toBe(1);
    expect(again.png).toEqual(b.png);
    expect(again.png.buffer).not.toBe(b.png.buffer);
  });

  it('saysWhyAMapIsNotDrawn', async () => {
    const png = mapPng(2, 2);
    const uri = `data:image/png;base64,${Buffer.from(png).toString('base64')}`;
    // The map samples TEXCOORD_1 while the picture shows TEXCOORD_0.
    expect((normalMapBackground(await quadAsset({ uri }, { index: 0, texCoord: 1 }), 0, 0, new Map())).note)
      .toBe('the normal map samples TEXCOORD_1, not this set; it is not drawn');
    // JPEG bytes (the format's signature FF D8 FF, from memory) without a decoder are named, not decoded.
    const jpeg = `data:image/jpeg;base64,${Buffer.from([0xff, 0xd8, 0xff, 0xe0, 0, 16]).toString('base64')}`;
    const j = normalMapBackground(await quadAsset({ uri: jpeg }), 0, 0, new Map());
    expect(j.background).toBeNull();
    expect(j.note).toBe('a JPEG normal map is not drawn behind the layout here (no JPEG decoder given)');
    // A GIF (signature "GIF8", from memory) is not one of glTF's image formats.
    const gif = `data:image/gif;base64,${Buffer.from('GIF89a\x01\x00').toString('base64')}`;
    expect(normalMapBackground(await quadAsset({ uri: gif }), 0, 0, new Map()).note).toBe('a GIF normal map is not drawn behind the layout (PNG and JPEG only)');
    // No normal texture at all: nothing to say.
    expect(normalMapBackground(await quadAsset({ uri }), null, 0, new Map())).toEqual({ background: null, note: null });
  });
});
