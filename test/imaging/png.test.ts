import { deflateSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { decodePng, detectImageKind, encodePng, type PngImage } from '../../src/imaging/png.js';
import { TanframeError } from '../../src/mesh/errors.js';
import { chunk, readRawPng, writeRawPng } from './pngBytes.js';

/** Deterministic samples covering the whole range of a depth. */
function samplesFor(n: number, depth: 8 | 16): number[] {
  const max = depth === 16 ? 65535 : 255;
  const out: number[] = [];
  for (let i = 0; i < n; i++) out.push((i * 7919 + (i >> 3) * 104729) % (max + 1));
  out[0] = 0;
  out[n - 1] = max;
  return out;
}

// PNG colour types by channel count. Source: PNG specification, 11.2.2 (IHDR colour type).
const COLOR_TYPE: Record<number, 0 | 2 | 4 | 6> = { 1: 0, 2: 4, 3: 2, 4: 6 };

describe('PNG decoding follows the specification', () => {
  for (const depth of [8, 16] as const) {
    for (const channels of [1, 2, 3, 4] as const) {
      it(`reads ${depth}-bit ${channels}-channel samples written by an independent writer`, () => {
        const width = 7, height = 5;
        const samples = samplesFor(width * height * channels, depth);
        // Source: PNG specification (independent writer in pngBytes.ts).
        const bytes = writeRawPng({ width, height, colorType: COLOR_TYPE[channels], depth, samples });
        const img = decodePng(bytes);
        expect(img.width).toBe(width);
        expect(img.height).toBe(height);
        expect(img.channels).toBe(channels);
        expect(img.depth).toBe(depth);
        expect(img.data instanceof (depth === 16 ? Uint16Array : Uint8Array)).toBe(true);
        expect(Array.from(img.data)).toEqual(samples);
      });
    }
  }

  it('expands a palette image to RGB', () => {
    // 3 x 1 pixels, 2-bit indices 2, 0, 1 into a three-entry palette.
    const palette: [number, number, number][] = [[10, 20, 30], [128, 128, 255], [250, 5, 0]];
    const bytes = writeRawPng({ width: 3, height: 1, colorType: 3, depth: 2, samples: [2, 0, 1], palette });
    const img = decodePng(bytes);
    expect(img.channels).toBe(3);
    expect(img.depth).toBe(8);
    expect(Array.from(img.data)).toEqual([250, 5, 0, 10, 20, 30, 128, 128, 255]);
  });

  it('turns an RGB tRNS colour key into an alpha channel', () => {
    // Source: PNG specification 11.3.2.1: pixels equal to the key are fully transparent.
    const trns = new Uint8Array([0, 128, 0, 128, 0, 255]); // key (128,128,255) as three 16-bit values
    const samples = [128, 128, 255, 1, 2, 3, 128, 128, 254];
    const bytes = writeRawPng({ width: 3, height: 1, colorType: 2, depth: 8, samples, trns });
    const img = decodePng(bytes);
    expect(img.channels).toBe(4);
    expect(Array.from(img.data)).toEqual([128, 128, 255, 0, 1, 2, 3, 255, 128, 128, 254, 255]);
  });

  it('refuses grey below 8 bits with a one-line reason', () => {
    const bytes = writeRawPng({ width: 8, height: 1, colorType: 0, depth: 4, samples: [0, 1, 2, 3, 4, 5, 6, 7] });
    expect(() => decodePng(bytes)).toThrow(/4-bit grey PNG is not supported/);
  });

  it('refuses JPEG, WebP and other containers by name', () => {
    // Signatures: JPEG SOI FF D8 FF; WebP 'RIFF' .... 'WEBP' (from memory of the formats).
    const jpeg = new Uint8Array([0xff, 0xd8, 0xff, 0xe0, 0, 16, 0x4a, 0x46, 0x49, 0x46, 0, 1]);
    const webp = new Uint8Array([0x52, 0x49, 0x46, 0x46, 8, 0, 0, 0, 0x57, 0x45, 0x42, 0x50, 0x56, 0x50, 0x38, 0x20]);
    expect(detectImageKind(jpeg)).toBe('jpeg');
    expect(detectImageKind(webp)).toBe('webp');
    for (const [bytes, name] of [[jpeg, 'JPEG'], [webp, 'WebP']] as const) {
      let err: unknown;
      try { decodePng(bytes); } catch (e) { err = e; }
      expect(err).toBeInstanceOf(TanframeError);
      expect((err as TanframeError).code).toBe('unsupported-format');
      expect((err as TanframeError).message).toBe(`${name} images are not supported (convert-map reads and writes PNG only)`);
    }
    expect(() => decodePng(new TextEncoder().encode('hello'))).toThrow(/not a PNG image/);
  });

  it('refuses an image too large to convert before decoding it', () => {
    // A valid 1 x 1 PNG whose IHDR then claims 20000 x 20000 (CRC not rechecked: the size test
    // comes first, so nothing of that size is ever allocated).
    const bytes = writeRawPng({ width: 1, height: 1, colorType: 2, depth: 8, samples: [1, 2, 3] });
    const dv = new DataView(bytes.buffer);
    dv.setUint32(16, 20000);
    dv.setUint32(20, 20000);
    let err: unknown;
    try { decodePng(bytes); } catch (e) { err = e; }
    expect((err as TanframeError).code).toBe('too-large');
    expect((err as TanframeError).message).toMatch(/^image is 20000 x 20000; at most 32768 texels per side and 268435456 in all/);
  });

  it('reports a truncated PNG as damaged', () => {
    const bytes = writeRawPng({ width: 16, height: 16, colorType: 2, depth: 8, samples: samplesFor(768, 8) });
    let err: unknown;
    try { decodePng(bytes.subarray(0, 60)); } catch (e) { err = e; }
    expect(err).toBeInstanceOf(TanframeError);
    expect((err as TanframeError).message).toMatch(/^damaged PNG/);
  });
});

describe('PNG encoding follows the specification', () => {
  for (const depth of [8, 16] as const) {
    for (const channels of [1, 2, 3, 4] as const) {
      it(`writes ${depth}-bit ${channels}-channel images an independent reader reads back exactly`, () => {
        const width = 9, height = 4;
        const samples = samplesFor(width * height * channels, depth);
        const data = depth === 16 ? new Uint16Array(samples) : new Uint8Array(samples);
        const image: PngImage = { width, height, channels, depth, data };
        const bytes = encodePng(image);
        // Source: PNG specification (independent reader in pngBytes.ts).
        const raw = readRawPng(bytes);
        expect(raw.interlace).toBe(0);
        expect(raw.depth).toBe(depth);
        expect(raw.colorType).toBe(COLOR_TYPE[channels]);
        expect(raw.samples).toEqual(samples);
        // And our own decoder gives the same image back, bit for bit.
        const back = decodePng(bytes);
        expect(back.channels).toBe(channels);
        expect(back.depth).toBe(depth);
        expect(Array.from(back.data)).toEqual(samples);
      });
    }
  }
});

/** The chunks of a PNG as [type, data] (no checks: the test inputs are our own). */
function chunksOf(bytes: Uint8Array): [string, Uint8Array][] {
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const out: [string, Uint8Array][] = [];
  for (let at = 8; at < bytes.length;) {
    const length = dv.getUint32(at);
    out.push([String.fromCharCode(...bytes.subarray(at + 4, at + 8)), bytes.slice(at + 8, at + 8 + length)]);
    at += 12 + length;
  }
  return out;
}

/** A PNG file from the signature and these chunks. */
function pngOf(chunks: [string, Uint8Array][]): Uint8Array {
  const parts = [new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), ...chunks.map(([t, d]) => chunk(t, d))];
  const out = new Uint8Array(parts.reduce((s, p) => s + p.length, 0));
  let o = 0;
  for (const p of parts) { out.set(p, o); o += p.length; }
  return out;
}

function codeOf(fn: () => unknown): { code: string; message: string } {
  try { fn(); } catch (e) { return { code: (e as TanframeError).code, message: (e as Error).message }; }
  return { code: 'none', message: '' };
}

describe('PNG structure is checked before decoding (PNG specification 5.3, 5.6, 11.2)', () => {
  const good = writeRawPng({ width: 4, height: 3, colorType: 2, depth: 8, samples: samplesFor(36, 8) });

  it('refuses a decompression bomb whose header says 1 x 1, stopping at the declared size', () => {
    // 1 x 1 RGB declares 4 bytes of scanlines (a filter byte and three samples); the stream
    // holds 64 MiB of zeros. Source: PNG specification 11.2.2 / 7.2 (scanline layout).
    const ihdr = chunksOf(good)[0][1].slice();
    new DataView(ihdr.buffer).setUint32(0, 1);
    new DataView(ihdr.buffer).setUint32(4, 1);
    const bomb = pngOf([['IHDR', ihdr], ['IDAT', deflateSync(new Uint8Array(64 << 20))], ['IEND', new Uint8Array(0)]]);
    const r = codeOf(() => decodePng(bomb));
    expect(r.code).toBe('bad-png');
    expect(r.message).toBe('damaged PNG: image data inflates beyond the 4 bytes its header declares');
  });

  it('refuses image data shorter than the header declares', () => {
    const c = chunksOf(good);
    const short = pngOf([c[0], ['IDAT', deflateSync(new Uint8Array(10))], ['IEND', new Uint8Array(0)]]);
    expect(codeOf(() => decodePng(short))).toEqual({ code: 'bad-png', message: 'damaged PNG: image data holds 10 of the 39 bytes its header declares' });
  });

  it('refuses a file whose first chunk is not IHDR', () => {
    const c = chunksOf(good);
    const text = new TextEncoder().encode('Comment\0harbour');
    expect(codeOf(() => decodePng(pngOf([['tEXt', text], ...c]))).code).toBe('bad-png');
  });

  it('refuses a chunk whose CRC does not match', () => {
    const bytes = good.slice();
    bytes[8 + 8 + 13] ^= 1; // the IHDR CRC's first byte
    expect(codeOf(() => decodePng(bytes))).toEqual({ code: 'bad-png', message: 'damaged PNG: IHDR chunk CRC mismatch' });
    const idat = good.slice();
    idat[8 + 25 + 8] ^= 0x40; // a byte of the IDAT data
    expect(codeOf(() => decodePng(idat)).message).toBe('damaged PNG: IDAT chunk CRC mismatch');
  });

  it('refuses unknown critical chunks and a missing IEND, and ignores unknown ancillary ones', () => {
    const c = chunksOf(good);
    expect(codeOf(() => decodePng(pngOf([c[0], ['ABCD', new Uint8Array(1)], ...c.slice(1)]))).message).toBe('damaged PNG: unknown critical chunk ABCD');
    expect(codeOf(() => decodePng(pngOf(c.slice(0, -1)))).message).toBe('damaged PNG: no IEND chunk');
    // An iCCP chunk whose profile inflates hugely is never inflated.
    const iccp = new Uint8Array([...new TextEncoder().encode('p'), 0, 0, ...deflateSync(new Uint8Array(16 << 20))]);
    const withIccp = decodePng(pngOf([c[0], ['iCCP', iccp], ...c.slice(1)]));
    expect(Array.from(withIccp.data)).toEqual(samplesFor(36, 8));
  });

  it('still reads images split over several IDAT chunks, and Adam7-interlaced ones', () => {
    const c = chunksOf(good);
    const idat = c[1][1];
    const split = pngOf([c[0], ['IDAT', idat.slice(0, 1)], ['IDAT', idat.slice(1, 5)], ['IDAT', idat.slice(5)], c[2]]);
    expect(Array.from(decodePng(split).data)).toEqual(samplesFor(36, 8));
    // Interlaced: a 3 x 3 grey image in Adam7 passes (PNG specification 8.2); passes 2 and 3
    // are empty, each row is a filter byte and its samples: pass 1 (0,0): 1 row of 1; pass 4
    // (2,0): 1 of 1; pass 5 (0,2): 1 row of 2; pass 6 (1,0): 2 rows of 1; pass 7 (0,1): 1 row of 3.
    const img = [10, 20, 30, 40, 50, 60, 70, 80, 90];
    const rows = [[0, 10], [0, 30], [0, 70, 90], [0, 20], [0, 80], [0, 40, 50, 60]];
    const ihdr = new Uint8Array(13);
    new DataView(ihdr.buffer).setUint32(0, 3);
    new DataView(ihdr.buffer).setUint32(4, 3);
    ihdr[8] = 8; ihdr[9] = 0; ihdr[12] = 1;
    const laced = pngOf([['IHDR', ihdr], ['IDAT', deflateSync(new Uint8Array(rows.flat()))], ['IEND', new Uint8Array(0)]]);
    expect(Array.from(decodePng(laced).data)).toEqual(img);
  });
});
