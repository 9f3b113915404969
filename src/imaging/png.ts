/**
 * Based on: PNG specification (W3C / ISO/IEC 15948): colour types 0 (grey), 2 (RGB),
 * 3 (palette), 4 (grey-alpha), 6 (RGBA); bit depths; the tRNS chunk; chunk layout and CRC-32
 * (section 5); filter type 2, "Up" (section 9). Decoding is delegated to `fast-png`; encoding
 * is ours, on `fflate`'s zlib stream.
 *
 * Codec choice: `fast-png` (pinned 8.0.0, MIT, pure JavaScript on top of `fflate`). It keeps
 * the stored layout: 8-bit samples come back as a Uint8Array and 16-bit samples as a
 * Uint16Array with the file's own channel count, so grey, grey-alpha, RGB and RGBA survive a
 * round trip bit for bit and alpha passes through untouched; it reads every colour type, bit
 * depth and interlacing the specification allows. It is an ES module with its own TypeScript
 * types (this package is ESM + TypeScript) and is maintained (releases through 2025 and 2026).
 * The other common pure-JS codec, `pngjs`, is CommonJS without bundled types, always expands
 * to RGBA and rescales 16-bit samples to 8 bits unless told otherwise, and has had no release
 * since December 2024.
 *
 * Encoding: `fast-png`'s encoder stores every row unfiltered; on a 4096 x 4096 object-space
 * map that took 2.3 s of CPU and wrote 24 MB on this machine. Filtering each row with "Up" and
 * compressing with `fflate` at level 1 (pinned 0.8.3, the same pure-JS deflate fast-png uses,
 * so the bytes depend on nothing but the input: no native zlib build that may differ between
 * machines) took 1.2 s and wrote 9.6 MB (level 3: 2.1 s, 8.7 MB). Both read back identically.
 */
import { decode as fastPngDecode, convertIndexedToRgb } from 'fast-png';
import { Inflate, zlibSync } from 'fflate';
import { TanframeError } from '../mesh/errors.js';

/** Largest width or height accepted (the rasteriser's fixed-point bounds). */
export const MAX_IMAGE_SIDE = 32768;

/**
 * Most texels accepted (16384 x 16384): a conversion holds the input, the output and a byte of
 * state per texel, about 7 bytes per texel for 8-bit RGB (2 GB here), so larger images are
 * refused before decoding rather than exhausting memory. A choice of ours.
 */
export const MAX_IMAGE_TEXELS = 16384 * 16384;

/** A decoded PNG image, one layout for every colour type. */
export interface PngImage {
  width: number;
  height: number;
  /** 1 grey, 2 grey-alpha, 3 RGB, 4 RGBA. */
  channels: 1 | 2 | 3 | 4;
  /** Bits per sample: 8 (Uint8Array) or 16 (Uint16Array). */
  depth: 8 | 16;
  /** channels samples per texel, row-major, top row first. */
  data: Uint8Array | Uint16Array;
}

/** Image container formats recognised by their first bytes, so a wrong one is refused by name. */
export type ImageKind = 'png' | 'jpeg' | 'webp' | 'gif' | 'bmp' | 'tiff' | 'ktx2' | 'dds' | 'unknown';

/**
 * Tells the image container of `bytes` from its signature (PNG, JPEG, WebP, GIF, BMP, TIFF,
 * KTX2, DDS), or 'unknown'. Source: each format's published magic number (from memory).
 */
export function detectImageKind(bytes: Uint8Array): ImageKind {
  const b = bytes;
  const at = (i: number, ...v: number[]) => v.every((x, k) => b[i + k] === x);
  if (b.length >= 8 && at(0, 0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a)) return 'png';
  if (b.length >= 3 && at(0, 0xff, 0xd8, 0xff)) return 'jpeg';
  if (b.length >= 12 && at(0, 0x52, 0x49, 0x46, 0x46) && at(8, 0x57, 0x45, 0x42, 0x50)) return 'webp';
  if (b.length >= 4 && at(0, 0x47, 0x49, 0x46, 0x38)) return 'gif';
  if (b.length >= 2 && at(0, 0x42, 0x4d)) return 'bmp';
  if (b.length >= 4 && (at(0, 0x49, 0x49, 0x2a, 0x00) || at(0, 0x4d, 0x4d, 0x00, 0x2a))) return 'tiff';
  if (b.length >= 12 && at(0, 0xab, 0x4b, 0x54, 0x58, 0x20, 0x32, 0x30, 0xbb, 0x0d, 0x0a, 0x1a, 0x0a)) return 'ktx2';
  if (b.length >= 4 && at(0, 0x44, 0x44, 0x53, 0x20)) return 'dds';
  return 'unknown';
}

const KIND_NAMES: Record<ImageKind, string> = {
  png: 'PNG', jpeg: 'JPEG', webp: 'WebP', gif: 'GIF', bmp: 'BMP', tiff: 'TIFF', ktx2: 'KTX2', dds: 'DDS', unknown: 'unknown',
};

/** Samples per pixel of each PNG colour type and the bit depths it allows (PNG specification, 11.2.2). */
const COLOUR_TYPES: Record<number, { channels: number; depths: number[] }> = {
  0: { channels: 1, depths: [1, 2, 4, 8, 16] },
  2: { channels: 3, depths: [8, 16] },
  3: { channels: 1, depths: [1, 2, 4, 8] },
  4: { channels: 2, depths: [8, 16] },
  6: { channels: 4, depths: [8, 16] },
};

/** Adam7 passes: x start, y start, x step, y step (PNG specification, 8.2). */
const ADAM7 = [[0, 0, 8, 8], [4, 0, 8, 8], [0, 4, 4, 8], [2, 0, 4, 4], [0, 2, 2, 4], [1, 0, 2, 2], [0, 1, 1, 2]];

/** Compressed bytes handed to the inflater at a time: deflate expands at most ~1032x, so one step outputs at most ~4 MB. */
const INFLATE_STEP = 4096;

function badPng(reason: string): TanframeError {
  return new TanframeError('bad-png', `damaged PNG: ${reason}`);
}

/** Bytes of the filtered scanlines an image of this header holds (each row: a filter byte, then its packed samples). */
function rawImageBytes(width: number, height: number, bitsPerPixel: number, interlace: number): number {
  const rowBytes = (cols: number) => 1 + Math.ceil((cols * bitsPerPixel) / 8);
  if (interlace === 0) return height * rowBytes(width);
  let total = 0;
  for (const [x0, y0, dx, dy] of ADAM7) {
    const cols = width > x0 ? Math.ceil((width - x0) / dx) : 0;
    const rows = height > y0 ? Math.ceil((height - y0) / dy) : 0;
    if (cols > 0 && rows > 0) total += rows * rowBytes(cols);
  }
  return total;
}

/**
 * Walks the chunks of a PNG and checks them before anything is decoded: IHDR first (13 bytes,
 * valid colour type, bit depth, methods), the image size within MAX_IMAGE_SIDE and
 * MAX_IMAGE_TEXELS, every chunk inside the file with a matching CRC-32, no unknown critical
 * chunk, PLTE for palette images, IDAT chunks consecutive, IEND present. Then inflates the
 * IDAT stream a few kilobytes at a time and stops as soon as it would give more bytes than
 * the header's image holds (a decompression bomb costs what the header declares, not what the
 * stream expands to). Returns a PNG of the critical chunks and tRNS only, copied verbatim
 * (ancillary chunks, some of them compressed, are never decoded).
 * Source: PNG specification sections 5.3 (chunk layout, CRC), 5.6 (chunk ordering),
 * 11.2 (critical chunks), 10 (zlib stream; RFC 1950 header).
 */
function checkedPng(bytes: Uint8Array): Uint8Array {
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const n = bytes.length;
  if (n < 8 + 25) throw badPng('the file ends before the image header');
  if (dv.getUint32(8) !== 13 || bytes[12] !== 0x49 || bytes[13] !== 0x48 || bytes[14] !== 0x44 || bytes[15] !== 0x52) {
    throw badPng('the first chunk is not a 13-byte IHDR');
  }
  // Size from IHDR before anything is allocated.
  const width = dv.getUint32(16), height = dv.getUint32(20);
  if (width > MAX_IMAGE_SIDE || height > MAX_IMAGE_SIDE || width * height > MAX_IMAGE_TEXELS) {
    throw new TanframeError('too-large', `image is ${width} x ${height}; at most ${MAX_IMAGE_SIDE} texels per side and ${MAX_IMAGE_TEXELS} in all are supported`);
  }
  if (width === 0 || height === 0) throw badPng('zero width or height');
  const depth = bytes[24], colourType = bytes[25], compression = bytes[26], filter = bytes[27], interlace = bytes[28];
  const ct = COLOUR_TYPES[colourType];
  if (!ct) throw badPng(`colour type ${colourType} does not exist`);
  if (!ct.depths.includes(depth)) throw badPng(`bit depth ${depth} is not allowed for colour type ${colourType}`);
  if (compression !== 0 || filter !== 0 || interlace > 1) throw badPng('unknown compression, filter or interlace method');
  const expected = rawImageBytes(width, height, ct.channels * depth, interlace);

  const keep: Uint8Array[] = [bytes.subarray(0, 8)];
  const idat: [number, number][] = [];
  let idatDone = false, palette = false, ended = false;
  let at = 8;
  while (at < n) {
    if (at + 12 > n) throw badPng('truncated chunk');
    const length = dv.getUint32(at);
    if (length > 0x7fffffff || at + 12 + length > n) throw badPng('a chunk runs past the end of the file');
    const t0 = bytes[at + 4], t1 = bytes[at + 5], t2 = bytes[at + 6], t3 = bytes[at + 7];
    const type = String.fromCharCode(t0, t1, t2, t3);
    if (!/^[A-Za-z]{4}$/.test(type)) throw badPng('a chunk type is not four letters');
    if (crc32(bytes, at + 4, at + 8 + length) !== dv.getUint32(at + 8 + length)) throw badPng(`${type} chunk CRC mismatch`);
    const whole = bytes.subarray(at, at + 12 + length);
    if (type === 'IDAT') {
      if (idatDone) throw badPng('IDAT chunks are not consecutive');
      idat.push([at + 8, at + 8 + length]);
      keep.push(whole);
    } else {
      if (idat.length > 0) idatDone = true;
      if (type === 'IHDR') {
        if (at !== 8) throw badPng('a second IHDR chunk');
        keep.push(whole);
      } else if (type === 'PLTE') {
        if (length === 0 || length % 3 !== 0 || length > 768) throw badPng('PLTE length is not a multiple of 3 up to 768');
        palette = true;
        keep.push(whole);
      } else if (type === 'tRNS') {
        keep.push(whole);
      } else if (type === 'IEND') {
        keep.push(whole);
        ended = true;
        break;
      } else if (t0 >= 0x41 && t0 <= 0x5a) {
        throw badPng(`unknown critical chunk ${type}`);
      }
    }
    at += 12 + length;
  }
  if (!ended) throw badPng('no IEND chunk');
  if (idat.length === 0) throw badPng('no IDAT chunk');
  if (colourType === 3 && !palette) throw badPng('a palette image without PLTE');
  inflateBounded(bytes, idat, expected);
  let total = 0;
  for (const k of keep) total += k.length;
  const out = new Uint8Array(total);
  let o = 0;
  for (const k of keep) { out.set(k, o); o += k.length; }
  return out;
}

/** Inflates the zlib stream split over `ranges` of `bytes`; refuses it unless it gives exactly `expected` bytes, stopping early. */
function inflateBounded(bytes: Uint8Array, ranges: [number, number][], expected: number): void {
  let produced = 0;
  let header = 0;
  const head = new Uint8Array(2);
  let over = false;
  const inflater = new Inflate((chunk: Uint8Array) => {
    produced += chunk.length;
    if (produced > expected) over = true;
  });
  try {
    for (const [from, to] of ranges) {
      let p = from;
      // The two-byte zlib header (RFC 1950): deflate, no preset dictionary.
      while (header < 2 && p < to) head[header++] = bytes[p++];
      if (header === 2 && head[0] !== 0) {
        if ((head[0] & 0x0f) !== 8 || ((head[0] << 8) | head[1]) % 31 !== 0 || (head[1] & 0x20) !== 0) throw badPng('image data is not a zlib stream');
        head[0] = 0; // checked once
      }
      for (; p < to; p += INFLATE_STEP) {
        inflater.push(bytes.subarray(p, Math.min(to, p + INFLATE_STEP)), false);
        if (over) throw badPng(`image data inflates beyond the ${expected} bytes its header declares`);
      }
    }
    if (header < 2) throw badPng('image data is not a zlib stream');
    inflater.push(new Uint8Array(0), true);
  } catch (err) {
    if (err instanceof TanframeError) throw err;
    throw badPng(`image data does not inflate (${String((err as Error)?.message ?? err).split('\n')[0]})`);
  }
  if (over) throw badPng(`image data inflates beyond the ${expected} bytes its header declares`);
  if (produced < expected) throw badPng(`image data holds ${produced} of the ${expected} bytes its header declares`);
}

/**
 * Decodes PNG bytes. Grey, grey-alpha, RGB and RGBA at 8 or 16 bits come back as stored;
 * palette images are expanded to 8-bit RGB (RGBA when the palette has transparency); a tRNS
 * colour key on a grey or RGB image becomes an alpha channel (0 where the key matches, full
 * elsewhere), as the PNG specification defines it. The file is checked first (checkedPng:
 * IHDR first, CRCs, chunk layout, inflation capped by the header's size), so time and memory
 * stay proportional to the file and the image it declares. Throws TanframeError
 * 'unsupported-format' for other containers (JPEG, WebP, ...) and for grey at 1, 2 or 4 bits,
 * 'too-large' beyond MAX_IMAGE_SIDE / MAX_IMAGE_TEXELS, and 'bad-png' for a damaged or
 * malformed PNG (messages start "damaged PNG:"). Messages are one line.
 */
export function decodePng(bytes: Uint8Array): PngImage {
  if (!(bytes instanceof Uint8Array)) throw new TanframeError('invalid-argument', 'assertion failed: decodePng needs a Uint8Array');
  const kind = detectImageKind(bytes);
  if (kind !== 'png') {
    const what = kind === 'unknown' ? 'not a PNG image' : `${KIND_NAMES[kind]} images are not supported`;
    throw new TanframeError('unsupported-format', `${what} (convert-map reads and writes PNG only)`);
  }
  const checked = checkedPng(bytes);
  let png: ReturnType<typeof fastPngDecode>;
  try {
    png = fastPngDecode(checked);
  } catch (err) {
    const reason = String((err as Error)?.message ?? err).split('\n')[0];
    throw badPng(reason);
  }
  const { width, height } = png;
  if (!(width > 0 && height > 0)) throw badPng('zero width or height');
  if (png.palette) {
    const channels = png.palette[0]?.length === 4 ? 4 : 3;
    let data: Uint8Array;
    try {
      data = convertIndexedToRgb(png);
    } catch (err) {
      throw badPng(`palette: ${String((err as Error)?.message ?? err).split('\n')[0]}`);
    }
    return { width, height, channels, depth: 8, data };
  }
  if (png.depth !== 8 && png.depth !== 16) {
    throw new TanframeError('unsupported-format', `${png.depth}-bit grey PNG is not supported (use 8 or 16 bits per sample)`);
  }
  const channels = png.channels as 1 | 2 | 3 | 4;
  const depth = png.depth as 8 | 16;
  let data: Uint8Array | Uint16Array = png.data instanceof Uint16Array ? png.data : new Uint8Array(png.data.buffer, png.data.byteOffset, png.data.length);
  const expected = width * height * channels;
  if (data.length !== expected) throw badPng(`${data.length} samples for ${width} x ${height} x ${channels}`);
  const key = png.transparency;
  if (key && key.length === channels && (channels === 1 || channels === 3)) {
    return colourKeyToAlpha(width, height, channels, depth, data, key);
  }
  return { width, height, channels, depth, data };
}

/** Adds an alpha channel from a tRNS colour key (PNG specification, 11.3.2.1). */
function colourKeyToAlpha(
  width: number, height: number, channels: 1 | 3, depth: 8 | 16, data: Uint8Array | Uint16Array, key: Uint16Array,
): PngImage {
  const n = width * height;
  const outChannels = (channels + 1) as 2 | 4;
  const out = depth === 16 ? new Uint16Array(n * outChannels) : new Uint8Array(n * outChannels);
  const full = depth === 16 ? 65535 : 255;
  for (let i = 0; i < n; i++) {
    let match = true;
    for (let c = 0; c < channels; c++) {
      const s = data[i * channels + c];
      out[i * outChannels + c] = s;
      if (s !== key[c]) match = false;
    }
    out[i * outChannels + channels] = match ? 0 : full;
  }
  return { width, height, channels: outChannels, depth, data: out };
}

/** zlib compression level of written PNGs (0-9): 1, the fastest; higher levels save ~10% on normal maps at almost twice the time. */
export const PNG_COMPRESSION_LEVEL = 1;

const CRC_TABLE = (() => {
  const t = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[n] = c >>> 0;
  }
  return t;
})();

/** CRC-32 of bytes [start, end) (PNG specification, annex D). */
function crc32(bytes: Uint8Array, start: number, end: number): number {
  let c = 0xffffffff;
  for (let i = start; i < end; i++) c = CRC_TABLE[(c ^ bytes[i]) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

/** Colour type by channel count (PNG specification, 11.2.2). */
const COLOUR_TYPE = [0, 0, 4, 2, 6];

/**
 * Encodes an image as PNG: colour type from `channels`, bit depth from `depth`, no
 * interlace, every row filtered with "Up", zlib level PNG_COMPRESSION_LEVEL. Returns the
 * file's bytes, a pure function of the image. Preconditions: data holds width * height *
 * channels samples of the array type `depth` implies.
 */
export function encodePng(image: PngImage): Uint8Array {
  const { width, height, channels, depth, data } = image;
  if (data.length !== width * height * channels) {
    throw new TanframeError('invalid-argument', `assertion failed: encodePng needs ${width * height * channels} samples, got ${data.length}`);
  }
  if ((depth === 16) !== data instanceof Uint16Array) throw new TanframeError('invalid-argument', 'assertion failed: encodePng depth and array type disagree');
  const samplesPerRow = width * channels;
  const stride = depth === 16 ? samplesPerRow * 2 : samplesPerRow;
  const raw = new Uint8Array(height * (stride + 1));
  if (depth === 8) {
    const d = data as Uint8Array;
    for (let y = 0; y < height; y++) {
      const o = y * (stride + 1) + 1, r = y * stride;
      raw[o - 1] = 2; // Up: each byte minus the byte above (modulo 256; the row above row 0 is zeros)
      if (y === 0) { raw.set(d.subarray(0, stride), o); continue; }
      for (let i = 0; i < stride; i++) raw[o + i] = d[r + i] - d[r - stride + i];
    }
  } else {
    const d = data as Uint16Array;
    for (let y = 0; y < height; y++) {
      const o = y * (stride + 1) + 1, r = y * samplesPerRow;
      raw[o - 1] = 2;
      for (let i = 0; i < samplesPerRow; i++) {
        const s = d[r + i], a = y > 0 ? d[r - samplesPerRow + i] : 0;
        // Big-endian bytes, each minus the byte above.
        raw[o + 2 * i] = (s >>> 8) - (a >>> 8);
        raw[o + 2 * i + 1] = (s & 0xff) - (a & 0xff);
      }
    }
  }
  const idat = zlibSync(raw, { level: PNG_COMPRESSION_LEVEL });
  const out = new Uint8Array(8 + 25 + 12 + idat.length + 12);
  const dv = new DataView(out.buffer);
  out.set([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a], 0);
  let at = 8;
  const chunk = (type: string, length: number, fill: (at: number) => void) => {
    dv.setUint32(at, length);
    for (let i = 0; i < 4; i++) out[at + 4 + i] = type.charCodeAt(i);
    fill(at + 8);
    dv.setUint32(at + 8 + length, crc32(out, at + 4, at + 8 + length));
    at += 12 + length;
  };
  chunk('IHDR', 13, (p) => {
    dv.setUint32(p, width);
    dv.setUint32(p + 4, height);
    out[p + 8] = depth;
    out[p + 9] = COLOUR_TYPE[channels];
    // compression 0, filter method 0, interlace 0
  });
  chunk('IDAT', idat.length, (p) => out.set(idat, p));
  chunk('IEND', 0, () => undefined);
  return out;
}
