/**
 * Based on: the SVG 1.1 specification (W3C; path data, patterns, text) for the drawing, and
 * the glTF 2.0 specification, section 3.8.4 (texture coordinates: origin at the image's
 * top-left, v downward) for the layout, so the picture matches the texture image.
 * Renders one primitive's UV layout: triangles outlined, mirrored ones tinted, overlapping
 * ones hatched, degenerate ones marked at their centroid (with a count where several fall on
 * one point), the material's normal map faintly behind, and a legend in words.
 */
import { markupText } from '../mesh/text.js';
import { MAX_PICTURE_TRIANGLES, PICTURE_DEGENERATE_UV, PICTURE_MIRRORED, PICTURE_OVERLAP, type PictureBackground, type UvPicture } from './uvPicture.js';

/** UVs this far outside the unit square (in UV units) still fit in the picture; beyond, they are off it. */
export const UV_VIEW_LIMIT = 15;

/** Our palette (colours of our own choosing). */
const INK = '#2b2f36';
const PAPER = '#fbfaf6';
const PLAIN_FILL = '#e7e1cf';
const EDGE = '#8a826d';
const MIRROR_FILL = '#86c2c6';
const OVERLAP_INK = '#d9822b';
const DEGENERATE_INK = '#c0283e';
const UNIT_SQUARE = '#5d6b7a';

/** Opacity of the normal map behind the layout, and of the triangle fills over it (ours). */
const MAP_OPACITY = 0.4;
const FILL_OVER_MAP = 0.45;

/** Base64 of bytes (RFC 4648, section 4), through the global btoa of browsers and Node.js. */
function base64(bytes: Uint8Array): string {
  let s = '';
  for (let i = 0; i < bytes.length; i += 0x8000) s += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
  return btoa(s);
}

/** A number for an SVG attribute: up to 6 decimals, no trailing zeros, "-0" written "0". */
function num(x: number): string {
  const s = (Math.round(x * 1e6) / 1e6).toString();
  return s === '-0' ? '0' : s;
}

/**
 * The pattern that paints the normal map over the UV plane: pattern space is texture space
 * (one unit per image), mapped to the picture through the inverse of the map's
 * KHR_texture_transform and the picture's own UV-to-pixel scale (patternTransform). A
 * repeating axis tiles the image (SVG 1.1, 13.3 patterns), a mirrored one tiles it with every
 * other copy flipped (glTF 2.0, sampler wrap modes), a clamped one is drawn once.
 */
function mapPattern(id: string, b: PictureBackground, scale: number, ox: number, oy: number): string {
  // UV -> texture: s = m0 u + m3 v + m6, t = m1 u + m4 v + m7; its inverse, then to pixels.
  const m = b.transform ?? [1, 0, 0, 0, 1, 0, 0, 0, 1];
  const det = m[0] * m[4] - m[3] * m[1];
  const i0 = m[4] / det, i2 = -m[3] / det, i4 = (m[3] * m[7] - m[4] * m[6]) / det;
  const i1 = -m[1] / det, i3 = m[0] / det, i5 = (m[1] * m[6] - m[0] * m[7]) / det;
  const matrix = [scale * i0, scale * i1, scale * i2, scale * i3, ox + scale * i4, oy + scale * i5].map(num).join(' ');
  const href = `data:image/png;base64,${base64(b.png)}`;
  // A clamped axis: one tile far wider than the picture, the image at its origin.
  const far = 100000;
  const w = b.wrapS === 'mirror' ? 2 : b.wrapS === 'clamp' ? 2 * far : 1;
  const h = b.wrapT === 'mirror' ? 2 : b.wrapT === 'clamp' ? 2 * far : 1;
  const px = b.wrapS === 'clamp' ? -far : 0, py = b.wrapT === 'clamp' ? -far : 0;
  const copies: string[] = [`<image id="${id}map-image" href="${href}" width="1" height="1" preserveAspectRatio="none"/>`];
  if (b.wrapS === 'mirror') copies.push(`<use href="#${id}map-image" transform="translate(2 0) scale(-1 1)"/>`);
  if (b.wrapT === 'mirror') copies.push(`<use href="#${id}map-image" transform="translate(0 2) scale(1 -1)"/>`);
  if (b.wrapS === 'mirror' && b.wrapT === 'mirror') copies.push(`<use href="#${id}map-image" transform="translate(2 2) scale(-1 -1)"/>`);
  return `<pattern id="${id}map" patternUnits="userSpaceOnUse" x="${px}" y="${py}" width="${w}" height="${h}" patternTransform="matrix(${matrix})">${copies.join('')}</pattern>`;
}

/** Drawing options. */
export interface UvMapSvgOptions {
  /** Prefix of the ids inside the SVG (several pictures inlined in one page need distinct ids). */
  idPrefix?: string;
  /** Side of the drawing area in pixels (default 640). */
  size?: number;
}

/** Escapes text for XML content and attribute values. */
export function escapeXml(s: string): string {
  return markupText(s);
}

function n(x: number): string {
  return x.toLocaleString('en-US');
}

/** A coordinate with one decimal, "-0.0" written "0". */
function c(x: number): string {
  const s = x.toFixed(1);
  return s === '-0.0' ? '0' : s.endsWith('.0') ? s.slice(0, -2) : s;
}

/** The UV window drawn: the unit square, grown to the drawn UVs, clipped at UV_VIEW_LIMIT. */
function viewOf(uvs: Float32Array): { u0: number; v0: number; u1: number; v1: number; clipped: boolean } {
  let u0 = 0, v0 = 0, u1 = 1, v1 = 1;
  for (let i = 0; i < uvs.length; i += 2) {
    const u = uvs[i], v = uvs[i + 1];
    if (u < u0) u0 = u;
    if (u > u1) u1 = u;
    if (v < v0) v0 = v;
    if (v > v1) v1 = v;
  }
  const lo = -UV_VIEW_LIMIT, hi = 1 + UV_VIEW_LIMIT;
  const clipped = u0 < lo || v0 < lo || u1 > hi || v1 > hi;
  u0 = Math.max(u0, lo); v0 = Math.max(v0, lo);
  u1 = Math.min(u1, hi); v1 = Math.min(v1, hi);
  // Whole UV units, so the grid lines of the texture's tiles fall on the frame.
  return { u0: Math.floor(u0), v0: Math.floor(v0), u1: Math.ceil(u1), v1: Math.ceil(v1), clipped };
}

/** The picture's title line: file, mesh, primitive and UV set. */
export function pictureTitle(p: UvPicture): string {
  const mesh = p.meshName ? `mesh ${p.mesh} "${p.meshName}"` : `mesh ${p.mesh}`;
  return `${p.input}: ${mesh}, primitive ${p.primitive}, TEXCOORD_${p.uvSet}`;
}

/**
 * Renders `p` as a standalone SVG document (UTF-8 text, no external references). Same input,
 * same bytes. The drawing maps u to the right and v downward (as the texture image), the
 * unit square dashed; the legend names what each mark means with the counts over all the
 * primitive's triangles and says when the drawing was capped or some UVs fall off it.
 */
export function renderUvMapSvg(p: UvPicture, options: UvMapSvgOptions = {}): string {
  const id = options.idPrefix ?? 'uv-';
  const size = options.size ?? 640;
  const margin = 16;
  const view = viewOf(p.uvs);
  const spanU = view.u1 - view.u0, spanV = view.v1 - view.v0;
  const scale = size / Math.max(spanU, spanV);
  const width = Math.round(spanU * scale) + 2 * margin;
  const drawH = Math.round(spanV * scale);
  const top = margin + 22;
  const x = (u: number) => margin + (u - view.u0) * scale;
  const y = (v: number) => top + (v - view.v0) * scale;

  const bg = p.background ?? null;
  const drawn = p.flags.length;
  const plain: string[] = [];
  const mirrored: string[] = [];
  const overlap: string[] = [];
  // Degenerate markers by the pixel they land on (rounded): one ring per pixel, with the
  // number of triangles there when more than one (they would otherwise hide one another).
  const stacks = new Map<string, { cx: number; cy: number; count: number }>();
  for (let t = 0; t < drawn; t++) {
    const f = p.flags[t];
    const o = t * 6;
    const x0 = x(p.uvs[o]), y0 = y(p.uvs[o + 1]);
    let x1 = x(p.uvs[o + 2]), y1 = y(p.uvs[o + 3]);
    let x2 = x(p.uvs[o + 4]), y2 = y(p.uvs[o + 5]);
    // Every sub-path is written with one winding (clockwise on screen): under SVG's default
    // nonzero fill rule (SVG 1.1, section 11.3 'fill-rule') sub-paths of opposite winding
    // cancel where they overlap, which hid the hatching exactly where a mirrored triangle lies
    // on an unmirrored one.
    if ((x1 - x0) * (y2 - y0) - (y1 - y0) * (x2 - x0) < 0) {
      const sx = x1, sy = y1;
      x1 = x2; y1 = y2; x2 = sx; y2 = sy;
    }
    const d = `M${c(x0)} ${c(y0)}L${c(x1)} ${c(y1)}L${c(x2)} ${c(y2)}Z`;
    if (f & PICTURE_MIRRORED) mirrored.push(d);
    else plain.push(d);
    if (f & PICTURE_OVERLAP) overlap.push(d);
    if (f & PICTURE_DEGENERATE_UV) {
      const cx = x((p.uvs[o] + p.uvs[o + 2] + p.uvs[o + 4]) / 3);
      const cy = y((p.uvs[o + 1] + p.uvs[o + 3] + p.uvs[o + 5]) / 3);
      const key = `${Math.round(cx)} ${Math.round(cy)}`;
      const s = stacks.get(key);
      if (s) s.count++;
      else stacks.set(key, { cx, cy, count: 1 });
    }
  }
  const marks: string[] = [];
  const counts: string[] = [];
  let stackedMarks = 0;
  for (const s of stacks.values()) {
    // A ring with a cross: visible whatever the triangle's (zero) size.
    marks.push(`M${c(s.cx - 5)} ${c(s.cy)}a5 5 0 1 0 10 0a5 5 0 1 0 -10 0M${c(s.cx - 3.5)} ${c(s.cy - 3.5)}l7 7M${c(s.cx - 3.5)} ${c(s.cy + 3.5)}l7 -7`);
    if (s.count > 1) {
      stackedMarks++;
      counts.push(`<text x="${c(s.cx + 7)}" y="${c(s.cy - 6)}" data-count="${s.count}">${n(s.count)}</text>`);
    }
  }

  const legend: { swatch: string; text: string }[] = [];
  const sw = (fill: string, stroke = EDGE) => `<rect width="14" height="14" fill="${fill}" stroke="${stroke}" stroke-width="1"/>`;
  legend.push({ swatch: sw(PLAIN_FILL), text: 'triangle, UVs in the usual orientation' });
  legend.push({ swatch: sw(MIRROR_FILL), text: `mirrored: UVs flipped, handedness w = -1 (${n(p.mirrored)})` });
  legend.push({ swatch: sw(`url(#${id}hatch)`, OVERLAP_INK), text: `overlaps another triangle in UV space (${n(p.overlap)})` });
  legend.push({
    swatch: `<path d="M2 7a5 5 0 1 0 10 0a5 5 0 1 0 -10 0M3.5 3.5l7 7M3.5 10.5l7 -7" fill="none" stroke="${DEGENERATE_INK}" stroke-width="1.8"/>`,
    text: `degenerate UVs: no UV area, marked at the centroid (${n(p.degenerateUv)})`,
  });
  const notes: string[] = [];
  notes.push(`u to the right, v downward as in the texture image; dashed square: UV 0..1; ${n(drawn)} of ${n(p.triangles)} triangles drawn`);
  if (drawn + p.nonFinite < p.triangles) {
    notes.push(`drawing capped at ${n(MAX_PICTURE_TRIANGLES)} triangles: flagged ones first, then an even sample of the rest`);
  }
  if (bg) notes.push(`behind the layout, faintly: the normal map of the material (a ${bg.width} x ${bg.height} copy)${bg.transform ? ', placed through its KHR_texture_transform' : ''}`);
  else if (p.backgroundNote) notes.push(p.backgroundNote);
  if (stackedMarks > 0) notes.push('a number beside a degenerate mark counts the triangles on that point');
  if (p.nonFinite > 0) notes.push(`${n(p.nonFinite)} triangle${p.nonFinite === 1 ? '' : 's'} with NaN or infinite UVs cannot be drawn`);
  if (view.clipped) notes.push(`UVs beyond ${-UV_VIEW_LIMIT}..${1 + UV_VIEW_LIMIT} lie off the picture`);

  const legendTop = top + drawH + 14;
  const lineH = 20;
  const height = legendTop + legend.length * lineH + notes.length * 17 + margin;
  const out: string[] = [];
  out.push(
    `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" ` +
      `font-family="system-ui, sans-serif" font-size="12" role="img" aria-label="${escapeXml(`UV layout of ${pictureTitle(p)}`)}">`,
  );
  out.push(
    `<defs><pattern id="${id}hatch" patternUnits="userSpaceOnUse" width="6" height="6" patternTransform="rotate(45)">` +
      `<rect width="6" height="6" fill="${PAPER}" fill-opacity="0.35"/><line x1="1" y1="0" x2="1" y2="6" stroke="${OVERLAP_INK}" stroke-width="2.2"/></pattern>` +
      (bg ? mapPattern(id, bg, scale, x(0), y(0)) : '') + '</defs>',
  );
  out.push(`<rect width="${width}" height="${height}" fill="${PAPER}"/>`);
  // About 7 px per character of the 12 px bold title; a long path keeps its end.
  const fit = Math.max(24, Math.floor((width - 2 * margin) / 7));
  const title = pictureTitle(p);
  const shownTitle = title.length > fit ? '\u2026' + title.slice(title.length - fit + 1) : title;
  out.push(`<text x="${margin}" y="${margin + 6}" fill="${INK}" font-weight="600">${escapeXml(shownTitle)}</text>`);
  // Tiles of the UV plane (one per whole UV unit), the unit square dashed on top.
  out.push(`<rect x="${c(x(view.u0))}" y="${c(y(view.v0))}" width="${c(spanU * scale)}" height="${c(spanV * scale)}" fill="#ffffff" stroke="#d4d0c4" stroke-width="1"/>`);
  const edge = `stroke="${EDGE}" stroke-width="0.6" stroke-linejoin="round"`;
  if (bg) {
    out.push(`<rect class="normal-map" x="${c(x(view.u0))}" y="${c(y(view.v0))}" width="${c(spanU * scale)}" height="${c(spanV * scale)}" fill="url(#${id}map)" opacity="${MAP_OPACITY}"/>`);
  }
  const over = bg ? ` fill-opacity="${FILL_OVER_MAP}"` : '';
  if (plain.length) out.push(`<path class="plain" d="${plain.join('')}" fill="${PLAIN_FILL}"${over} ${edge}/>`);
  if (mirrored.length) out.push(`<path class="mirrored" d="${mirrored.join('')}" fill="${MIRROR_FILL}"${over} ${edge}/>`);
  if (overlap.length) out.push(`<path class="overlap" d="${overlap.join('')}" fill="url(#${id}hatch)" stroke="${OVERLAP_INK}" stroke-width="0.8"/>`);
  // The unit square over the triangles, so it shows even where they cover it.
  out.push(`<rect x="${c(x(0))}" y="${c(y(0))}" width="${c(scale)}" height="${c(scale)}" fill="none" stroke="${UNIT_SQUARE}" stroke-width="1.2" stroke-dasharray="6 4"/>`);
  if (marks.length) out.push(`<path class="degenerate" d="${marks.join('')}" fill="none" stroke="${DEGENERATE_INK}" stroke-width="1.8"/>`);
  if (counts.length) {
    // Paper-coloured halo under each number (paint-order: SVG 2), so it reads over any fill.
    out.push(`<g class="stack-counts" fill="${DEGENERATE_INK}" font-size="11" font-weight="700" stroke="${PAPER}" stroke-width="3" paint-order="stroke" stroke-linejoin="round">${counts.join('')}</g>`);
  }
  let ly = legendTop;
  for (const l of legend) {
    out.push(`<g transform="translate(${margin} ${ly})">${l.swatch}<text x="22" y="11" fill="${INK}">${escapeXml(l.text)}</text></g>`);
    ly += lineH;
  }
  for (const note of notes) {
    out.push(`<text x="${margin}" y="${ly + 11}" fill="#5b5f66" font-size="11">${escapeXml(note)}</text>`);
    ly += 17;
  }
  out.push('</svg>');
  return out.join('\n') + '\n';
}

/**
 * The file name of a picture: the file's path as the report names it with every path
 * separator (and every character outside [A-Za-z0-9._-]) replaced, `.` and `..` segments and
 * a leading root left out, then `__m<mesh>p<primitive>.svg`. Example: `props/crate.gltf`,
 * mesh 0, primitive 1 -> `props_crate.gltf__m0p1.svg`; `../assets/crate.gltf` ->
 * `assets_crate.gltf__m0p1.svg` (the caller adds a `~2` suffix when two names meet).
 */
export function pictureFileName(input: string, mesh: number, primitive: number): string {
  return `${flatName(input)}__m${mesh}p${primitive}.svg`;
}

/** The report's path of a file flattened into one file name (see pictureFileName). */
function flatName(input: string): string {
  const parts = input.split(/[\\/]+/).filter((s) => s !== '' && s !== '.' && s !== '..').map((s) => s.replace(/[^A-Za-z0-9._-]/g, '-'));
  return parts.join('_') || 'input';
}

/**
 * The file name of a file's view sheet under --views: its path flattened as pictureFileName
 * does, then `.png`. Example: `props/crate.gltf` -> `props_crate.gltf.png` (the caller adds
 * `~2` before `.png` when two names meet).
 */
export function viewFileName(input: string): string {
  return `${flatName(input)}.png`;
}
