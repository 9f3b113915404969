/**
 * An OBJ unit quad (v measured upward, the OBJ convention) with an MTL naming a uniform normal
 * map, as files in memory for readAssetBytes.
 *   4 ---- 3   vt (0,1) .. (1,1)
 *   |      |
 *   1 ---- 2   vt (0,0) .. (1,0)
 */
import { encodePngRgba8 } from '../helpers/png.js';

export function writeRawObj(texel: [number, number, number, number]): Record<string, Uint8Array> {
  const obj = [
    'mtllib plane.mtl',
    'v 0 0 0', 'v 1 0 0', 'v 1 1 0', 'v 0 1 0',
    'vt 0 0', 'vt 1 0', 'vt 1 1', 'vt 0 1',
    'vn 0 0 1',
    'usemtl m',
    'f 1/1/1 2/2/1 3/3/1', 'f 1/1/1 3/3/1 4/4/1', '',
  ].join('\n');
  const mtl = ['newmtl m', 'Kd 0.4 0.4 0.4', 'norm flat.png', ''].join('\n');
  const data = new Uint8Array(16 * 4);
  for (let i = 0; i < 16; i++) data.set(texel, i * 4);
  const enc = new TextEncoder();
  return { 'plane.obj': enc.encode(obj), 'plane.mtl': enc.encode(mtl), 'flat.png': encodePngRgba8(4, 4, data) };
}
