/**
 * Based on: DESIGN.md `render` (one PNG sheet: a row per mode, a column per view, labelled;
 * one view and one mode give exactly size x size pixels with no labels; background alpha 0),
 * 2 x 2 ordered-grid supersampling (each pixel the average of four samples in linear light,
 * its alpha the covered share; common practice) and the sRGB encoding of IEC 61966-2-1.
 */
import { FINDING_KINDS, HEAT_LEGEND_DEG, findingColour, mismatchColour } from './palette.js';
import { CELL_H, drawText, textWidth } from './font.js';
import { lightInView, orthoCamera, viewToWorldDirection, type ViewName } from './camera.js';
import { clearVisibility, createVisibility, rasterizeInstance, type VisibilityBuffer } from './rasterize.js';
import { prepareInstance, shadeView, type ModeName, type PreparedInstance } from './shade.js';
import { defaultMaterial, sceneBounds, type RenderScene } from './scene.js';
import { linearToSrgb8, srgbToLinear } from './texture.js';

/** Samples per pixel side (2 x 2 supersampling). */
export const SUPERSAMPLE = 2;

/** What to draw. */
export interface SheetOptions {
  views: readonly ViewName[];
  modes: readonly ModeName[];
  /** Pixels per side of one view. */
  size: number;
  /** Light azimuth and elevation in degrees, view space (DESIGN.md --light). */
  light: [number, number];
  /** Extra legend lines under each mode's name (what the frames and the comparison are). */
  labels?: Partial<Record<ModeName, string[]>>;
}

/** An RGBA8 picture. */
export interface RenderedSheet {
  width: number;
  height: number;
  /** 4 bytes per pixel, row-major, top row first; straight (not premultiplied) alpha. */
  rgba: Uint8Array;
}

/** Per kind of finding, how many triangles of the scene's primitives carry it (each primitive once). */
export function countFindings(scene: RenderScene): number[] {
  const counts = FINDING_KINDS.map(() => 0);
  for (const p of scene.primitives) {
    if (!p.findings) continue;
    for (let t = 0; t < p.findings.length; t++) {
      const b = p.findings[t];
      if (!b) continue;
      for (let k = 0; k < FINDING_KINDS.length; k++) if (b & FINDING_KINDS[k].bit) counts[k]++;
    }
  }
  return counts;
}

/** Half-side of a finding marker in pixels at a view size. Our choice: visible at 512, not covering much. */
function markerHalf(size: number): number {
  return Math.max(2, Math.round(size / 100));
}

/** Markers depth-test against the surface with this slack in NDC depth (the sphere spans about 2). */
const MARKER_DEPTH_SLACK = 0.02;

/**
 * Draws the flagged triangles that cover no sample of the view (no area: degenerate geometry,
 * or smaller than a sample) as squares of pixels at their projected centroids, in the colour
 * of their first kind, where they are not hidden behind the surface (a pixel's nearest sample).
 */
function drawMarkers(
  scene: RenderScene, prepared: PreparedInstance[], screens: Float64Array[], vis: VisibilityBuffer, ss: number,
  colour: Float32Array, covered: Uint8Array, size: number, half: number,
): void {
  const { depth, instance, triangle, width: side } = vis;
  const flagged = scene.primitives.map((p) => !!p.findings && p.findings.some((b) => b !== 0));
  if (!flagged.some((x) => x)) return;
  const seen: (Uint8Array | null)[] = scene.instances.map((inst) => {
    const f = scene.primitives[inst.primitive].findings;
    return f && flagged[inst.primitive] ? new Uint8Array(f.length) : null;
  });
  for (let o = 0; o < instance.length; o++) {
    const i = instance[o];
    if (i >= 0) { const s = seen[i]; if (s) s[triangle[o]] = 1; }
  }
  for (let i = 0; i < scene.instances.length; i++) {
    const prim = scene.primitives[scene.instances[i].primitive];
    const f = prim.findings, s = seen[i];
    if (!f || !s) continue;
    const P = prepared[i].positions, sc = screens[i];
    for (let t = 0; t < f.length; t++) {
      if (!f[t] || s[t]) continue;
      let x = 0, y = 0, z = 0, k = 0;
      for (let c = 0; c < 3; c++) {
        const v = prim.indices[t * 3 + c];
        const px = sc[v * 4], py = sc[v * 4 + 1], pz = sc[v * 4 + 2];
        if (px - px !== 0 || py - py !== 0 || pz - pz !== 0 || P[v * 3] - P[v * 3] !== 0) continue;
        x += px; y += py; z += pz; k++;
      }
      if (k === 0) continue;
      x /= k * ss; y /= k * ss; z /= k;
      let kind = 0;
      while (kind < FINDING_KINDS.length - 1 && !(f[t] & FINDING_KINDS[kind].bit)) kind++;
      const rgb = findingColour(FINDING_KINDS[kind].bit).map(srgbToLinear);
      const cx = Math.floor(x), cy = Math.floor(y);
      for (let py = cy - half; py <= cy + half; py++) {
        if (py < 0 || py >= size) continue;
        for (let px = cx - half; px <= cx + half; px++) {
          if (px < 0 || px >= size) continue;
          let near = Infinity;
          for (let sy = 0; sy < ss; sy++) for (let sx = 0; sx < ss; sx++) near = Math.min(near, depth[(py * ss + sy) * side + px * ss + sx]);
          if (!(z <= near + MARKER_DEPTH_SLACK)) continue;
          const o = py * size + px;
          colour[o * 3] = rgb[0]; colour[o * 3 + 1] = rgb[1]; colour[o * 3 + 2] = rgb[2];
          covered[o] = ss * ss;
        }
      }
    }
  }
}

/** Encodes per-pixel linear colour and covered-sample counts as an RGBA8 cell (alpha: the covered share). */
function encodeCell(colour: Float32Array, covered: Uint8Array, size: number, samples: number): Uint8Array {
  const out = new Uint8Array(size * size * 4);
  for (let p = 0; p < size * size; p++) {
    const n = covered[p];
    if (n === 0) continue;
    out[p * 4] = linearToSrgb8(colour[p * 3]);
    out[p * 4 + 1] = linearToSrgb8(colour[p * 3 + 1]);
    out[p * 4 + 2] = linearToSrgb8(colour[p * 3 + 2]);
    out[p * 4 + 3] = Math.round((n * 255) / samples);
  }
  return out;
}

/**
 * Renders one view in every mode: returns one RGBA8 size x size cell per mode. `prepared`
 * holds each instance's world-space data (prepareInstance); `bounds` is the sphere the camera
 * frames (sceneBounds); `scratch`, a visibility buffer of the view's sample size, is reused
 * when given (its contents are replaced).
 */
export function renderViewCells(
  scene: RenderScene, prepared: PreparedInstance[], view: ViewName, options: SheetOptions, bounds: [number, number, number, number] = sceneBounds(scene),
  scratch: VisibilityBuffer | null = null,
): Uint8Array[] {
  const side = options.size * SUPERSAMPLE;
  const camera = orthoCamera(view, bounds);
  const m = camera.viewProjection;
  let vis: VisibilityBuffer;
  if (scratch && scratch.width === side && scratch.height === side) { vis = scratch; clearVisibility(vis); }
  else vis = createVisibility(side, side);
  const screens: Float64Array[] = [];
  const backFacing: Uint8Array[] = [];
  const fallback = defaultMaterial();
  for (let i = 0; i < scene.instances.length; i++) {
    const prim = scene.primitives[scene.instances[i].primitive];
    const P = prepared[i].positions;
    const vc = P.length / 3;
    const sc = new Float64Array(vc * 4);
    for (let v = 0; v < vc; v++) {
      const x = P[v * 3], y = P[v * 3 + 1], z = P[v * 3 + 2];
      const cw = m[3] * x + m[7] * y + m[11] * z + m[15];
      const iw = 1 / cw;
      sc[v * 4] = ((m[0] * x + m[4] * y + m[8] * z + m[12]) * iw + 1) * 0.5 * side;
      sc[v * 4 + 1] = (1 - (m[1] * x + m[5] * y + m[9] * z + m[13]) * iw) * 0.5 * side;
      sc[v * 4 + 2] = (m[2] * x + m[6] * y + m[10] * z + m[14]) * iw;
      sc[v * 4 + 3] = iw;
    }
    screens.push(sc);
    const tc = prim.indices.length / 3;
    const back = new Uint8Array(tc);
    backFacing.push(back);
    const mat = prim.material >= 0 ? scene.materials[prim.material] : fallback;
    rasterizeInstance(vis, sc, prim.indices, tc, i, prepared[i].frontSign, !mat.doubleSided, back);
  }
  const light = viewToWorldDirection(camera.view, lightInView(options.light[0], options.light[1]));
  const shaded = shadeView(scene, prepared, vis, SUPERSAMPLE, backFacing, options.modes, light);
  return options.modes.map((mode, k) => {
    let covered = shaded.covered;
    if (mode === 'findings') {
      covered = shaded.covered.slice();
      drawMarkers(scene, prepared, screens, vis, SUPERSAMPLE, shaded.colour[k], covered, options.size, markerHalf(options.size));
    }
    return encodeCell(shaded.colour[k], covered, options.size, SUPERSAMPLE * SUPERSAMPLE);
  });
}

const BAND = [246, 246, 246, 255] as [number, number, number, number];
const INK = [34, 34, 34, 255] as [number, number, number, number];

const degrees = (d: number) => `${d}\u00b0`;

/** One legend line: text, and a swatch colour (sRGB 0..1) in front of it or none. */
type LegendLine = { text: string; swatch: [number, number, number] | null };

function legendOf(scene: RenderScene, mode: ModeName, options: SheetOptions): LegendLine[] {
  const lines: LegendLine[] = [{ text: mode, swatch: null }];
  for (const l of options.labels?.[mode] ?? []) lines.push({ text: l, swatch: null });
  if (mode === 'shaded') lines.push({ text: `light ${options.light[0]},${options.light[1]}`, swatch: null });
  if (mode === 'mismatch') {
    const c = new Float64Array(3);
    HEAT_LEGEND_DEG.forEach((d, i) => {
      mismatchColour(c, d);
      lines.push({ text: i === HEAT_LEGEND_DEG.length - 1 ? `${degrees(d)} +` : degrees(d), swatch: [c[0], c[1], c[2]] });
    });
  }
  if (mode === 'findings') {
    const counts = countFindings(scene);
    lines.push({ text: 'triangles:', swatch: null });
    FINDING_KINDS.forEach((k, i) => lines.push({ text: `${k.label} ${counts[i]}`, swatch: findingColour(k.bit) }));
  }
  return lines;
}

/**
 * Renders the sheet: a row per mode, a column per view. With one view and one mode the
 * picture is exactly that view, size x size, no labels; otherwise a header names the views
 * and a band on the left names each mode with its legend (the findings legend counts the
 * triangles of each kind). Pixels the model does not cover have alpha 0; the label bands are
 * opaque. A pure function of the scene and the options.
 */
export function renderSheet(scene: RenderScene, options: SheetOptions): RenderedSheet {
  const { size, views, modes } = options;
  const prepared = scene.instances.map((inst) => prepareInstance(scene, inst));
  const bounds = sceneBounds(scene);
  const scratch = createVisibility(size * SUPERSAMPLE, size * SUPERSAMPLE);
  const cells = views.map((v) => renderViewCells(scene, prepared, v, options, bounds, scratch)); // cells[view][mode]
  if (views.length === 1 && modes.length === 1) return { width: size, height: size, rgba: cells[0][0] };

  const scale = size >= 256 ? 2 : 1;
  const pad = 4 * scale, lineH = CELL_H * scale, swatch = lineH;
  const legends = modes.map((m) => legendOf(scene, m, options));
  let bandW = 0;
  for (const lines of legends) for (const l of lines) bandW = Math.max(bandW, textWidth(l.text, scale) + (l.swatch ? swatch + pad : 0));
  bandW += 2 * pad;
  const headerH = lineH + 2 * pad;
  const rowH = legends.map((lines) => Math.max(size, 2 * pad + lines.length * lineH));
  const width = bandW + views.length * size;
  const height = headerH + rowH.reduce((a, b) => a + b, 0);
  const rgba = new Uint8Array(width * height * 4);
  const fill = (x0: number, y0: number, w: number, h: number, c: readonly number[]) => {
    for (let y = y0; y < y0 + h; y++) for (let x = x0; x < x0 + w; x++) rgba.set(c, (y * width + x) * 4);
  };
  fill(0, 0, width, headerH, BAND);
  fill(0, headerH, bandW, height - headerH, BAND);
  views.forEach((v, j) => {
    const x = bandW + j * size + Math.max(0, Math.floor((size - textWidth(v, scale)) / 2));
    drawText(rgba, width, height, x, pad, v, scale, INK);
  });
  let y0 = headerH;
  modes.forEach((_, i) => {
    legends[i].forEach((l, k) => {
      const y = y0 + pad + k * lineH;
      let x = pad;
      if (l.swatch) {
        const c = l.swatch.map((s) => Math.round(s * 255));
        fill(x, y + scale, swatch - scale, swatch - 2 * scale, [c[0], c[1], c[2], 255]);
        x += swatch + pad;
      }
      drawText(rgba, width, height, x, y, l.text, scale, INK);
    });
    views.forEach((_, j) => {
      const cell = cells[j][i];
      const x0 = bandW + j * size;
      for (let y = 0; y < size; y++) rgba.set(cell.subarray(y * size * 4, (y + 1) * size * 4), ((y0 + y) * width + x0) * 4);
    });
    y0 += rowH[i];
  });
  return { width, height, rgba };
}
