/**
 * An independent PNG writer for test inputs: any colour type and bit depth, optional PLTE and
 * tRNS chunks, filter type 0 on every row, no interlace.
 * Source: PNG specification (W3C / ISO/IEC 15948): signature, IHDR (width, height, bit depth,
 * colour type, compression 0, filter 0, interlace 0), PLTE, tRNS, IDAT (zlib stream of
 * scanlines, each prefixed by its filter byte; samples of 16 bits are big-endian; samples below
 * 8 bits are packed from the most significant bit), IEND, CRC-32 over type + data.
 */
import { deflateSync, inflateSync } from 'node:zlib';

const CRC_TABLE = (() => {
  const t = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[n] = c >>> 0;
  }
  return t;
})();

function crc32(bytes: Uint8Array): number {
  let c = 0xffffffff;
  for (let i = 0; i < bytes.length; i++) c = CRC_TABLE[(c ^ bytes[i]) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

/** One framed chunk: length, type, data, CRC-32 over type + data. */
export function chunk(type: string, data: Uint8Array): Uint8Array {
  const out = new Uint8Array(12 + data.length);
  const dv = new DataView(out.buffer);
  dv.setUint32(0, data.length);
  for (let i = 0; i < 4; i++) out[4 + i] = type.charCodeAt(i);
  out.set(data, 8);
  dv.setUint32(8 + data.length, crc32(out.subarray(4, 8 + data.length)));
  return out;
}

/** Samples per pixel of each PNG colour type. */
const CHANNELS: Record<number, number> = { 0: 1, 2: 3, 3: 1, 4: 2, 6: 4 };

/** What to write. `samples` holds CHANNELS[colorType] values per pixel, top row first. */
export interface RawPng {
  width: number;
  height: number;
  colorType: 0 | 2 | 3 | 4 | 6;
  depth: 1 | 2 | 4 | 8 | 16;
  samples: ArrayLike<number>;
  /** PLTE entries (r, g, b). */
  palette?: [number, number, number][];
  /** tRNS chunk payload as given (already laid out for the colour type). */
  trns?: Uint8Array;
}

/** Writes a PNG file following the specification; returns its bytes. */
export function writeRawPng(p: RawPng): Uint8Array {
  const ch = CHANNELS[p.colorType];
  const rowBits = p.width * ch * p.depth;
  const rowBytes = Math.ceil(rowBits / 8);
  const raw = new Uint8Array(p.height * (rowBytes + 1));
  for (let y = 0; y < p.height; y++) {
    const base = y * (rowBytes + 1) + 1;
    for (let i = 0; i < p.width * ch; i++) {
      const s = p.samples[y * p.width * ch + i];
      if (p.depth === 16) {
        raw[base + i * 2] = (s >>> 8) & 0xff;
        raw[base + i * 2 + 1] = s & 0xff;
      } else if (p.depth === 8) {
        raw[base + i] = s;
      } else {
        const bit = i * p.depth;
        raw[base + (bit >> 3)] |= s << (8 - p.depth - (bit & 7));
      }
    }
  }
  const ihdr = new Uint8Array(13);
  const dv = new DataView(ihdr.buffer);
  dv.setUint32(0, p.width);
  dv.setUint32(4, p.height);
  ihdr[8] = p.depth;
  ihdr[9] = p.colorType;
  const parts: Uint8Array[] = [new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), chunk('IHDR', ihdr)];
  if (p.palette) parts.push(chunk('PLTE', new Uint8Array(p.palette.flat())));
  if (p.trns) parts.push(chunk('tRNS', p.trns));
  parts.push(chunk('IDAT', new Uint8Array(deflateSync(raw))), chunk('IEND', new Uint8Array(0)));
  const out = new Uint8Array(parts.reduce((s, q) => s + q.length, 0));
  let o = 0;
  for (const q of parts) { out.set(q, o); o += q.length; }
  return out;
}

/** What `readRawPng` finds: IHDR fields and the unpacked samples (8 and 16 bit only). */
export interface RawPngRead {
  width: number;
  height: number;
  depth: number;
  colorType: number;
  interlace: number;
  samples: number[];
}

/**
 * Reads a non-interlaced 8- or 16-bit PNG independently of the codec under test: chunks,
 * zlib, and the five scanline filters (None, Sub, Up, Average, Paeth).
 * Source: PNG specification (W3C / ISO/IEC 15948), sections 5 (chunks) and 9 (filtering).
 */
export function readRawPng(bytes: Uint8Array): RawPngRead {
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  let off = 8;
  let width = 0, height = 0, depth = 0, colorType = 0, interlace = 0;
  const idat: Uint8Array[] = [];
  while (off < bytes.length) {
    const len = dv.getUint32(off);
    const type = String.fromCharCode(...bytes.subarray(off + 4, off + 8));
    const data = bytes.subarray(off + 8, off + 8 + len);
    if (type === 'IHDR') {
      width = dv.getUint32(off + 8); height = dv.getUint32(off + 12);
      depth = data[8]; colorType = data[9]; interlace = data[12];
    } else if (type === 'IDAT') idat.push(data);
    off += 12 + len;
  }
  const ch = CHANNELS[colorType];
  const bpp = Math.max(1, (ch * depth) / 8);
  const rowBytes = (width * ch * depth) / 8;
  const all = new Uint8Array(idat.reduce((s, q) => s + q.length, 0));
  let o = 0;
  for (const q of idat) { all.set(q, o); o += q.length; }
  const raw = new Uint8Array(inflateSync(all));
  const rows = new Uint8Array(height * rowBytes);
  for (let y = 0; y < height; y++) {
    const f = raw[y * (rowBytes + 1)];
    const src = y * (rowBytes + 1) + 1;
    for (let i = 0; i < rowBytes; i++) {
      const x = raw[src + i];
      const a = i >= bpp ? rows[y * rowBytes + i - bpp] : 0;
      const b = y > 0 ? rows[(y - 1) * rowBytes + i] : 0;
      const c = i >= bpp && y > 0 ? rows[(y - 1) * rowBytes + i - bpp] : 0;
      let pred = 0;
      if (f === 1) pred = a;
      else if (f === 2) pred = b;
      else if (f === 3) pred = (a + b) >> 1;
      else if (f === 4) {
        const p = a + b - c, pa = Math.abs(p - a), pb = Math.abs(p - b), pc = Math.abs(p - c);
        pred = pa <= pb && pa <= pc ? a : pb <= pc ? b : c;
      }
      rows[y * rowBytes + i] = (x + pred) & 0xff;
    }
  }
  const samples: number[] = [];
  const n = width * height * ch;
  for (let i = 0; i < n; i++) samples.push(depth === 16 ? (rows[i * 2] << 8) | rows[i * 2 + 1] : rows[i]);
  return { width, height, depth, colorType, interlace, samples };
}
