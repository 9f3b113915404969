import { describe, expect, it } from 'vitest';
import { decodePng, detectImageKind, encodePng, type PngImage } from '../../src/imaging/png.js';
import { TanframeError } from '../../src/mesh/errors.js';
import { readRawPng, writeRawPng } from './pngBytes.js';

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
