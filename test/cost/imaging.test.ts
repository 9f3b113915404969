/**
 * Cost growth of convert-map's inputs: PNG decompression bombs are refused at the size their
 * header declares, UVs wrapping over many tiles are refused by the texel budget, and an
 * ordinary conversion grows linearly with the map (test/helpers/costGrowth.ts: x1 and x4).
 */
import { deflateSync } from 'node:zlib';
import { describe, it } from 'vitest';
import { encodePng } from '../../src/imaging/png.js';
import { chunk } from '../imaging/pngBytes.js';
import { checkGrowth, costTask, expectBoundedGrowth } from '../helpers/costGrowth.js';

const SIGNATURE = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);

function concat(parts: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(parts.reduce((s, p) => s + p.length, 0));
  let o = 0;
  for (const p of parts) { out.set(p, o); o += p.length; }
  return out;
}

/** A PNG whose IHDR says 1 x 1 RGB and whose IDAT inflates to `mib` MiB of zeros. */
function bombPng(mib: number): Uint8Array {
  const ihdr = new Uint8Array(13);
  new DataView(ihdr.buffer).setUint32(0, 1);
  new DataView(ihdr.buffer).setUint32(4, 1);
  ihdr[8] = 8; ihdr[9] = 2;
  return concat([SIGNATURE, chunk('IHDR', ihdr), chunk('IDAT', deflateSync(new Uint8Array(Math.ceil(mib * 1048576)), { level: 9 })), chunk('IEND', new Uint8Array(0))]);
}

/** A flat tangent-space normal map, side x side, 8-bit RGB. */
function flatMap(side: number): Uint8Array {
  const data = new Uint8Array(side * side * 3);
  for (let i = 0; i < side * side; i++) { data[i * 3] = 128; data[i * 3 + 1] = 128; data[i * 3 + 2] = 255; }
  return encodePng({ width: side, height: side, channels: 3, depth: 8, data });
}

/** A unit quad whose UVs span `tiles` x `tiles` texture tiles (1: the ordinary [0, 1] square). */
function quadObj(tiles: number): string {
  const t = tiles === 1 ? 1 : tiles - 0.1, lo = tiles === 1 ? 0 : 0.05;
  return `v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nvt 0 ${lo}\nvt ${t} ${lo}\nvt ${t} ${t + lo}\nvt 0 ${t + lo}\nvn 0 0 1\n` +
    'f 1/1/1 2/2/1 3/3/1\nf 1/1/1 3/3/1 4/4/1\n';
}

describe('convert-map cost', () => {
  it('refuses a PNG decompression bomb with bad-png, however far it would inflate', async () => {
    const r = await checkGrowth({
      name: 'PNG bomb declaring 1 x 1',
      files: (scale) => ({ 'bomb.png': bombPng(16 * scale) }),
      task: costTask('decodePngFile', 'bomb.png'),
    }, { mustRefuse: 'bad-png' });
    // And the refusal itself costs no more than linear time and memory.
    expectBoundedGrowth({ ...r, large: { ...r.large, refused: null }, small: { ...r.small, refused: null } });
  });

  it('refuses UVs wrapping over 32 x 32 tiles with too-large before rasterising', async () => {
    await checkGrowth({
      name: 'triangles over 32 x 32 UV tiles',
      files: (scale) => ({ 'm.obj': quadObj(32), 'map.png': flatMap(Math.ceil(128 * Math.sqrt(scale))) }),
      task: costTask('convertMapFiles', 'm.obj', 'map.png'),
    }, { mustRefuse: 'too-large' });
  });

  it('grows linearly with the map for an ordinary layout', async () => {
    await checkGrowth({
      name: 'convert-map over the unit square',
      files: (scale) => ({ 'm.obj': quadObj(1), 'map.png': flatMap(Math.ceil(256 * Math.sqrt(scale))) }),
      task: costTask('convertMapFiles', 'm.obj', 'map.png'),
    });
  });
});
