import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildGltf, writeGltf } from '../helpers/gltfBuilder.js';
import { convertNormalMap } from '../../src/imaging/convert.js';
import { mapPartsForAsset } from '../../src/lib/mapFrames.js';
import { readAsset } from '../../src/lib/processFile.js';
import { paint } from '../imaging/mapHelpers.js';

let tmp = '';
beforeAll(() => { tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-mapframes-')); });
afterAll(() => { fs.rmSync(tmp, { recursive: true, force: true }); });

/**
 * A unit quad in the z = 0 plane whose UVs span [0,1]^2:
 *
 *   uv (0,0) 0 ---- 1 (1,0)
 *            |    / |
 *            |  /   |
 *   uv (0,1) 2 ---- 3 (1,1)
 */
async function quadAsset(textureInfo: any, images: any[]): Promise<string> {
  const { json, bin } = buildGltf([{
    attributes: {
      POSITION: { array: new Float32Array([0, 1, 0, 1, 1, 0, 0, 0, 0, 1, 0, 0]), type: 'VEC3' },
      NORMAL: { array: new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]), type: 'VEC3' },
      TEXCOORD_0: { array: new Float32Array([0, 0, 1, 0, 0, 1, 1, 1]), type: 'VEC2' },
    },
    indices: new Uint16Array([0, 2, 1, 1, 2, 3]),
    material: 0,
  }]);
  json.images = images;
  json.textures = [{ source: 0 }];
  json.materials = [{ normalTexture: textureInfo }];
  if (textureInfo.extensions) json.extensionsUsed = Object.keys(textureInfo.extensions);
  return writeGltf(tmp, `quad${Math.random().toString(36).slice(2)}`, json, bin);
}

describe('map parts: which texels a primitive lands on', () => {
  it("applies the normal texture's KHR_texture_transform (the extension's lower-left-quadrant example)", async () => {
    // Source: KHR_texture_transform (Khronos), example JSON: offset [0, 1], rotation pi/2 and
    // scale [0.5, 0.5] use "only the lower left quadrant of the source image".
    const file = await quadAsset(
      { index: 0, extensions: { KHR_texture_transform: { offset: [0, 1], rotation: 1.57079632679, scale: [0.5, 0.5] } } },
      [{ uri: 'n.png' }],
    );
    const asset = await readAsset(file);
    const sel = mapPartsForAsset(asset, { imageName: 'n.png', from: 'tangent', to: 'object', fromMethod: 'mikktspace', toMethod: 'mikktspace', uv: null, primitives: null });
    expect(sel.selectedBy).toBe('image');
    expect(sel.primitives[0].uvTransformed).toBe(true);
    const W = 16, H = 16;
    const { image, stats } = convertNormalMap(paint(W, H, 8, () => [0, 0, 1]), sel.parts, { from: 'tangent', to: 'object', inGreen: 'up', outGreen: 'up', padding: 0 });
    expect(stats.covered).toBe((W / 2) * (H / 2));
    for (let y = 0; y < H; y++) {
      for (let x = 0; x < W; x++) {
        // Object space +Z encodes as (128, 128, 255); the background as (128, 128, 128).
        const inLowerLeft = x < W / 2 && y >= H / 2;
        expect(image.data[(y * W + x) * 3 + 2], `texel ${x},${y}`).toBe(inLowerLeft ? 255 : 128);
      }
    }
  });

  it('matches the image by URI base name (percent-encoded) or by image name, else takes all', async () => {
    const byUri = await readAsset(await quadAsset({ index: 0 }, [{ uri: 'maps/my%20normal.png' }]));
    const req = { from: 'tangent' as const, to: 'object' as const, fromMethod: 'mikktspace' as const, toMethod: 'mikktspace' as const, uv: null, primitives: null };
    expect(mapPartsForAsset(byUri, { ...req, imageName: '/somewhere/my normal.png' }).selectedBy).toBe('image');
    expect(mapPartsForAsset(byUri, { ...req, imageName: 'other.png' }).selectedBy).toBe('all');
    const byName = await readAsset(await quadAsset({ index: 0 }, [{ uri: 'data:image/png;base64,AAAA', name: 'hull_normal' }]));
    expect(mapPartsForAsset(byName, { ...req, imageName: 'hull_normal.png' }).selectedBy).toBe('image');
  });

  it('uses the texCoord of the normal texture unless --uv says otherwise, and refuses a missing set', async () => {
    const asset = await readAsset(await quadAsset({ index: 0, texCoord: 1 }, [{ uri: 'n.png' }]));
    const req = { imageName: 'n.png', from: 'tangent' as const, to: 'object' as const, fromMethod: 'mikktspace' as const, toMethod: 'mikktspace' as const, primitives: null };
    // The quad has TEXCOORD_0 only: set 1 is missing, so nothing can be converted.
    expect(() => mapPartsForAsset(asset, { ...req, uv: null })).toThrow(/no primitive with triangles and texture coordinates/);
    const sel = mapPartsForAsset(asset, { ...req, uv: 0 });
    expect(sel.primitives[0].uvSet).toBe(0);
  });
});
