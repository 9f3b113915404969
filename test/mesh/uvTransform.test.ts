import { describe, expect, it } from 'vitest';
import { applyUvTransform, changesFrames, uvTransformOf } from '../../src/mesh/uvTransform.js';

// The unit UV square, corners (0,0) (1,0) (0,1) (1,1):
//   (0,0) ---- (1,0)      v grows downward (glTF)
//     |          |
//   (0,1) ---- (1,1)
const SQUARE = new Float32Array([0, 0, 1, 0, 0, 1, 1, 1]);

function transformed(info: any): number[] {
  const t = uvTransformOf(info);
  expect(t).not.toBeNull();
  const out = new Float32Array(8);
  applyUvTransform(out, SQUARE, 4, t!);
  return Array.from(out, (x) => Math.round(x * 1e6) / 1e6 + 0);
}

describe('KHR_texture_transform', () => {
  it('the extension example "lower left quadrant, rotated clockwise 90 degrees" maps the square onto [0,0.5] x [0.5,1]', () => {
    // Source: KHR_texture_transform README (ratified), first JSON example: offset [0, 1],
    // rotation 1.57079632679, scale [0.5, 0.5] uses only the lower left quadrant of the image.
    const uv = transformed({ extensions: { KHR_texture_transform: { offset: [0, 1], rotation: 1.57079632679, scale: [0.5, 0.5] } } });
    // Source: the same README's GLSL (translation * rotation * scale, rotation = mat3(c,-s,0, s,c,0, 0,0,1)).
    expect(uv).toEqual([0, 1, 0, 0.5, 0.5, 1, 0.5, 0.5]);
  });

  it('the extension example "inverts the T axis" gives v\' = 1 - v', () => {
    // Source: KHR_texture_transform README, second JSON example: offset [0, 1], scale [1, -1].
    expect(transformed({ extensions: { KHR_texture_transform: { offset: [0, 1], scale: [1, -1] } } })).toEqual([0, 1, 1, 1, 0, 0, 1, 0]);
  });

  it('identity and absent transforms read as null; malformed fields take their defaults', () => {
    expect(uvTransformOf({})).toBeNull();
    expect(uvTransformOf({ extensions: { KHR_texture_transform: {} } })).toBeNull();
    expect(uvTransformOf({ extensions: { KHR_texture_transform: { offset: [0, 0], scale: [1, 1], rotation: 0, texCoord: 1 } } })).toBeNull();
    expect(uvTransformOf({ extensions: { KHR_texture_transform: { offset: 'x', scale: [2], rotation: 0.5 } } })).toEqual({ offset: [0, 0], rotation: 0.5, scale: [1, 1] });
  });

  it('only a rotation or a negative scale changes the frames', () => {
    // Offsets and positive scales keep the directions of increasing u and v (differential geometry of
    // the reparametrisation u' = a u + b, v' = c v + d with a, c > 0).
    expect(changesFrames(uvTransformOf({ extensions: { KHR_texture_transform: { offset: [0.3, 0.1], scale: [2, 0.5] } } }))).toBe(false);
    expect(changesFrames(uvTransformOf({ extensions: { KHR_texture_transform: { rotation: 0.2 } } }))).toBe(true);
    expect(changesFrames(uvTransformOf({ extensions: { KHR_texture_transform: { scale: [-1, 1] } } }))).toBe(true);
    expect(changesFrames(uvTransformOf({ extensions: { KHR_texture_transform: { scale: [1, -1] } } }))).toBe(true);
    expect(changesFrames(null)).toBe(false);
  });
});
