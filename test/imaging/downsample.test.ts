// Box-filter shrinking of the normal map drawn behind UV pictures: each output texel is the
// mean of the source texels mapping onto it (area averaging; means worked by hand below).
import { describe, expect, it } from 'vitest';
import { boxDownsampleRgb8, fitSize } from '../../src/imaging/downsample.js';

describe('fitSize', () => {
  it('keepsTheAspectWithTheLongerSideAtTheLimit', () => {
    expect(fitSize(4096, 2048, 160)).toEqual({ width: 160, height: 80 });
    expect(fitSize(100, 4000, 160)).toEqual({ width: 4, height: 160 });
    expect(fitSize(1, 4000, 160)).toEqual({ width: 1, height: 160 }); // never below 1
    expect(fitSize(64, 32, 160)).toEqual({ width: 64, height: 32 }); // small images keep their size
  });
});

describe('boxDownsampleRgb8', () => {
  it('averagesEachBlockOfRgbTexels', () => {
    // 4 x 2 RGB -> 2 x 1: the left block holds red 0, 10, 20, 30 (mean 15), the right 100,
    // 100, 200, 200 (mean 150); green and blue are 255 - red and a constant 7.
    //   row 0: [0 10 | 100 200]   row 1: [20 30 | 100 200]
    const reds = [0, 10, 100, 200, 20, 30, 100, 200];
    const src = new Uint8Array(reds.flatMap((r) => [r, 255 - r, 7]));
    const out = boxDownsampleRgb8(new Uint8Array(6), src, 4, 2, 3, 2, 1);
    expect([...out]).toEqual([15, 240, 7, 150, 105, 7]);
  });

  it('readsRgba16AndGreyImages', () => {
    // 2 x 1 RGBA16 -> 1 x 1: red 0 and 65535 average to 32767.5 -> 127.5 -> 128 of 255.
    const src16 = new Uint16Array([0, 65535, 65535, 65535, 65535, 65535, 0, 0]);
    expect([...boxDownsampleRgb8(new Uint8Array(3), src16, 2, 1, 4, 1, 1)]).toEqual([128, 255, 128]);
    // Grey 2 x 2 -> 1 x 1: mean of 10, 20, 30, 40 = 25 in all three channels.
    expect([...boxDownsampleRgb8(new Uint8Array(3), new Uint8Array([10, 20, 30, 40]), 2, 2, 1, 1, 1)]).toEqual([25, 25, 25]);
  });

  it('coversUnevenBlocksWithoutGaps', () => {
    // 5 x 3 -> 2 x 2 (blocks of 3 + 2 columns, 2 + 1 rows): a constant image stays constant.
    const src = new Uint8Array(5 * 3 * 3).fill(90);
    expect([...boxDownsampleRgb8(new Uint8Array(12), src, 5, 3, 3, 2, 2)]).toEqual(new Array(12).fill(90));
  });
});
