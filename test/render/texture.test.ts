import { describe, expect, it } from 'vitest';
import { sampleTexture, WRAP_CLAMP, WRAP_MIRROR, WRAP_REPEAT, type RenderImage, type RenderTextureRef } from '../../src/render/index.js';
import { uvTransformMatrix } from '../../src/mesh/uvTransform.js';

/**
 * A 4 x 1 image whose red channel is the texel index times 1000 (16-bit samples):
 *   | 0 | 1000 | 2000 | 3000 |   texel i covers u in [i/4, (i+1)/4), centre (i + 0.5)/4
 */
const img: RenderImage = { width: 4, height: 1, data: new Uint16Array([0, 0, 0, 65535, 1000, 0, 0, 65535, 2000, 0, 0, 65535, 3000, 0, 0, 65535]) };
const ref = (wrapS: number, transform: ArrayLike<number> | null = null): RenderTextureRef => ({ image: 0, texCoord: 0, wrapS, wrapT: WRAP_CLAMP, transform });
const red = (r: RenderTextureRef, u: number) => {
  const out = new Float64Array(3);
  sampleTexture(out, img, r, u, 0.5, false);
  return Math.round(out[0] * 65535);
};

describe('texture sampling', () => {
  it('is bilinear between texel centres', () => {
    // Source: common practice (texel centres at (i + 0.5) / size; linear weights between the two nearest).
    expect(red(ref(WRAP_CLAMP), 0.375)).toBe(1000);
    expect(red(ref(WRAP_CLAMP), 0.5)).toBe(1500);
    expect(red(ref(WRAP_CLAMP), 0.4375)).toBe(1250);
  });

  it('honours the sampler wrap modes', () => {
    // Source: glTF 2.0, 3.8.4 (samplers: REPEAT 10497, CLAMP_TO_EDGE 33071, MIRRORED_REPEAT 33648; OpenGL semantics).
    expect(red(ref(WRAP_REPEAT), 1.375)).toBe(1000); // the same texel one period on
    expect(red(ref(WRAP_REPEAT), -0.625)).toBe(1000);
    expect(red(ref(WRAP_REPEAT), 0)).toBe(1500); // between the last texel (3000) and the first (0)
    expect(red(ref(WRAP_CLAMP), 1.375)).toBe(3000);
    expect(red(ref(WRAP_CLAMP), -0.5)).toBe(0);
    expect(red(ref(WRAP_MIRROR), 1.375)).toBe(2000); // mirrored: u = 2 - 1.375 = 0.625
    expect(red(ref(WRAP_MIRROR), -0.375)).toBe(1000); // mirrored about 0
  });

  it('applies KHR_texture_transform before sampling', () => {
    // Source: KHR_texture_transform: uv' = T(offset) R(rotation) S(scale) uv.
    expect(red(ref(WRAP_CLAMP, uvTransformMatrix({ offset: [0.25, 0], rotation: 0, scale: [1, 1] })), 0.125)).toBe(1000);
    expect(red(ref(WRAP_CLAMP, uvTransformMatrix({ offset: [0, 0], rotation: 0, scale: [0.5, 1] })), 0.75)).toBe(1000);
    // A rotation by pi/2 takes (u, v) to (v, -u) (u' = cos r u + sin r v): v = 0.375 lands on u' = 0.375.
    const out = new Float64Array(3);
    sampleTexture(out, img, ref(WRAP_CLAMP, uvTransformMatrix({ offset: [0, 0], rotation: Math.PI / 2, scale: [1, 1] })), 0.9, 0.375, false);
    expect(Math.round(out[0] * 65535)).toBe(1000);
  });
});
