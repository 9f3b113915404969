/**
 * Based on: glTF 2.0 specification, sections 3.8 (textures, images: a bufferView or a URI,
 * PNG or JPEG), 3.8.4 (samplers: wrapS / wrapT) and 3.9 (materials: normalTexture), and the
 * KHR_texture_transform and KHR_materials_clearcoat extensions. The normal map a UV picture
 * draws faintly behind its layout: found through the primitive's material, decoded, shrunk
 * to a small image and encoded as PNG once per image and asset.
 */
import { boxDownsampleRgb8, fitSize } from '../imaging/downsample.js';
import { decodePng, detectImageKind, encodePng } from '../imaging/png.js';
import { resolveResourceUri } from '../io/uri.js';
import type { Asset } from '../mesh/asset.js';
import { uvTransformMatrix, uvTransformOf } from '../mesh/uvTransform.js';
import type { PictureBackground, UvPicture } from '../report/uvPicture.js';

/**
 * Longest side, in pixels, of the normal map drawn behind a UV picture. A choice of ours:
 * faint detail only; at 160 px the demo's maps are 12-30 KB of PNG and a noisy 4096 px map
 * at most 160 * 160 * 3 bytes plus deflate overhead (about 77 KB, 103 KB as base64).
 */
export const PICTURE_BACKGROUND_SIDE = 160;

/** glTF sampler wrap modes (specification, 5.26 sampler): 10497 repeat (the default), 33648 mirrored repeat, 33071 clamp to edge. */
function wrapOf(mode: unknown): 'repeat' | 'mirror' | 'clamp' {
  return mode === 33648 ? 'mirror' : mode === 33071 ? 'clamp' : 'repeat';
}

/** The background of a picture, or why there is none (null note: the material has no normal map). */
export interface BackgroundResult {
  background: PictureBackground | null;
  note: string | null;
}

/** Decoded-and-shrunk images of one asset, by json.images index (an image is decoded once). */
export type BackgroundCache = Map<number, { png: Uint8Array; width: number; height: number } | string>;

function normalTextureInfo(json: any, material: number | null): any {
  if (material === null || material === undefined) return null;
  const m = json?.materials?.[material];
  if (!m || typeof m !== 'object') return null;
  if (m.normalTexture && typeof m.normalTexture === 'object') return m.normalTexture;
  const cc = m.extensions?.KHR_materials_clearcoat?.clearcoatNormalTexture;
  return cc && typeof cc === 'object' ? cc : null;
}

/** The bytes of json.images[index]: its bufferView, data: URI or external file; or a reason. */
function imageBytes(asset: Asset, index: number): Uint8Array | string {
  const image = asset.json?.images?.[index];
  if (!image || typeof image !== 'object') return 'the normal texture names no image';
  if (Number.isInteger(image.bufferView)) {
    const bv = asset.json.bufferViews?.[image.bufferView];
    const buffer = bv ? asset.buffers[bv.buffer] : undefined;
    const offset = bv?.byteOffset ?? 0, length = bv?.byteLength;
    if (!buffer || !Number.isInteger(offset) || !Number.isInteger(length) || offset < 0 || length < 0 || offset + length > buffer.length) {
      return 'the normal map\'s buffer view cannot be read';
    }
    return buffer.subarray(offset, offset + length);
  }
  if (typeof image.uri === 'string' && /^data:/i.test(image.uri)) {
    try {
      const r = resolveResourceUri(image.uri, '.');
      return r.kind === 'data' ? r.bytes : 'the normal map\'s data: URI cannot be read';
    } catch {
      return 'the normal map\'s data: URI cannot be read';
    }
  }
  const ext = asset.externalImages.find((e) => e.image === index);
  return ext?.bytes ?? 'the normal map image was not found';
}

/** A JPEG decoder (jpeg-js's `decode`, loaded by the caller), RGBA 8-bit out. */
export type JpegDecode = (bytes: Uint8Array, opts: { useTArray: true; formatAsRGBA: true; maxResolutionInMP: number; maxMemoryUsageInMB: number }) => { width: number; height: number; data: Uint8Array };

/** Most texels of a normal map decoded for a picture (4096 x 4096); a larger one is not drawn. A choice of ours. */
export const MAX_BACKGROUND_TEXELS = 4096 * 4096;

/** Width and height from a PNG's IHDR (PNG specification, 11.2.2: bytes 16-23, big-endian), or null. */
function pngSize(bytes: Uint8Array): [number, number] | null {
  if (bytes.length < 24) return null;
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  return [dv.getUint32(16), dv.getUint32(20)];
}

function shrink(bytes: Uint8Array, jpeg: JpegDecode | null): { png: Uint8Array; width: number; height: number } | string {
  const kind = detectImageKind(bytes);
  if (kind === 'jpeg' && !jpeg) return 'a JPEG normal map is not drawn behind the layout here (no JPEG decoder given)';
  if (kind !== 'png' && kind !== 'jpeg') {
    return `${kind === 'unknown' ? 'an unrecognised' : `a ${kind.toUpperCase()}`} normal map is not drawn behind the layout (PNG and JPEG only)`;
  }
  let image: { width: number; height: number; channels: number; data: Uint8Array | Uint16Array };
  try {
    if (kind === 'png') {
      const size = pngSize(bytes);
      if (size && size[0] * size[1] > MAX_BACKGROUND_TEXELS) return `the normal map (${size[0]} x ${size[1]}) is too large to draw behind the layout`;
      image = decodePng(bytes);
    } else {
      const d = jpeg!(bytes, { useTArray: true, formatAsRGBA: true, maxResolutionInMP: MAX_BACKGROUND_TEXELS / 1e6, maxMemoryUsageInMB: 256 });
      image = { width: d.width, height: d.height, channels: 4, data: d.data };
    }
  } catch {
    return 'the normal map could not be decoded';
  }
  const size = fitSize(image.width, image.height, PICTURE_BACKGROUND_SIDE);
  const rgb = boxDownsampleRgb8(new Uint8Array(size.width * size.height * 3), image.data, image.width, image.height, image.channels, size.width, size.height);
  return { png: encodePng({ width: size.width, height: size.height, channels: 3, depth: 8, data: rgb }), ...size };
}

/**
 * The normal map of material `material` as a picture background for UV set `uvSet`: null
 * with a null note when the material has no normal map; null with a note (one line, our
 * wording) when it cannot be drawn (another UV set, a missing image, a format other than PNG,
 * or JPEG without `jpeg`, the decoder the caller loaded). The PNG
 * bytes are a fresh copy per call (each picture owns its buffers, for transfer between
 * threads); the decode is shared through `cache`.
 */
export function normalMapBackground(asset: Asset, material: number | null, uvSet: number, cache: BackgroundCache, jpeg: JpegDecode | null = null): BackgroundResult {
  const info = normalTextureInfo(asset.json, material);
  if (!info) return { background: null, note: null };
  const transformExt = info.extensions?.KHR_texture_transform;
  const texCoord = Number.isInteger(transformExt?.texCoord) ? transformExt.texCoord : Number.isInteger(info.texCoord) ? info.texCoord : 0;
  if (texCoord !== uvSet) return { background: null, note: `the normal map samples TEXCOORD_${texCoord}, not this set; it is not drawn` };
  const texture = asset.json?.textures?.[info.index];
  const source = texture?.source;
  if (!Number.isInteger(source)) return { background: null, note: 'the normal texture has no image glTF core can read; it is not drawn' };
  let shrunk = cache.get(source);
  if (shrunk === undefined) {
    const bytes = imageBytes(asset, source);
    shrunk = typeof bytes === 'string' ? bytes : shrink(bytes, jpeg);
    cache.set(source, shrunk);
  }
  if (typeof shrunk === 'string') return { background: null, note: shrunk };
  const sampler = Number.isInteger(texture.sampler) ? asset.json.samplers?.[texture.sampler] : undefined;
  const t = uvTransformOf(info);
  return {
    background: {
      png: shrunk.png.slice(),
      width: shrunk.width,
      height: shrunk.height,
      wrapS: wrapOf(sampler?.wrapS),
      wrapT: wrapOf(sampler?.wrapT),
      transform: t ? Array.from(uvTransformMatrix(t)) : null,
    },
    note: null,
  };
}

/**
 * Sets each picture's `background` and `backgroundNote` from the normal map of its
 * primitive's material (normalMapBackground; pictures are matched to asset.primitives by mesh
 * and primitive index), decoding each image once. `jpeg` decodes JPEG maps (null: they get a note).
 */
export function attachBackgrounds(asset: Asset, pictures: UvPicture[], jpeg: JpegDecode | null): void {
  const cache: BackgroundCache = new Map();
  const material = new Map<string, number | null>();
  for (const p of asset.primitives) material.set(`${p.mesh}/${p.primitive}`, p.material);
  for (const pic of pictures) {
    const b = normalMapBackground(asset, material.get(`${pic.mesh}/${pic.primitive}`) ?? null, pic.uvSet, cache, jpeg);
    pic.background = b.background;
    pic.backgroundNote = b.note;
  }
}
