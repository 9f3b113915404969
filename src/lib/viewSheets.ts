/**
 * Based on: DESIGN.md (`--views <dir>`: one shaded PNG sheet per file with findings, as
 * `render` makes them; `--html` embeds them). The sheets of one file: the full sheet for the
 * --views folder (render's defaults) and a smaller copy for the HTML page, kept within a
 * byte budget so the page stays loadable.
 */
import type { Asset } from '../mesh/asset.js';
import type { ProcessOptions } from './options.js';
import { encodePng } from '../imaging/png.js';
import { renderSheet } from '../render/index.js';
import { buildRenderScene, defaultRenderOptions, type RenderAssetOptions } from './renderAsset.js';

/**
 * Pixels per side of one view in the sheet the HTML page embeds. A choice of ours: 4 views x 3
 * modes at 200 px and the legend column make a sheet 947 x 617 px, about the width of the
 * page's column (1180 px less its padding), so it is shown near 1:1.
 */
export const PAGE_VIEW_SIZE = 200;

/**
 * Most PNG bytes of one sheet on the HTML page (before base64, which adds a third); a larger
 * sheet is left out of the page with a note (the --views folder still has it). A choice of
 * ours: 400 KiB; measured at PAGE_VIEW_SIZE: the demo's 11 and 20 KiB, the shared samples 7 to 186 KiB.
 */
export const PAGE_SHEET_BYTES = 400 * 1024;

/** What --views asks of one file: the full sheet (the folder), the page's copy (--html too). */
export interface ViewWants {
  sheet: boolean;
  page: boolean;
}

/** One file's view sheets, PNG bytes; null where not asked for or left out (`notes` say why). */
export interface ViewSheet {
  /** The file as the report names it. */
  input: string;
  /** The sheet for the --views folder, as `render` makes it with its defaults. */
  sheet: Uint8Array | null;
  /** The smaller sheet for the HTML page (PAGE_VIEW_SIZE per view), within the page budget. */
  page: Uint8Array | null;
  /** One line each, for the user: what went wrong (a sheet that could not be drawn). */
  notes: string[];
  /** Why `page` is null although it was asked for (a few words), or absent. */
  pageOmitted?: string;
}

/** The render options of a file's sheets: render's defaults with the run's method and UV set. */
export function viewRenderOptions(options: ProcessOptions, size?: number): RenderAssetOptions {
  const d = defaultRenderOptions();
  return { ...d, method: options.method, uv: options.uv ?? null, size: size ?? d.size };
}

/**
 * Renders the sheets `want` asks for of `asset` (a pure function of the asset and options):
 * the full sheet with render's defaults and the page's copy at PAGE_VIEW_SIZE, left out with
 * a note when its PNG is over `pageBudget` bytes. `input` is left empty (the caller names it).
 */
export async function renderViewSheets(asset: Asset, options: ProcessOptions, want: ViewWants, pageBudget: number = PAGE_SHEET_BYTES): Promise<ViewSheet> {
  const out: ViewSheet = { input: '', sheet: null, page: null, notes: [] };
  if (!want.sheet && !want.page) return out;
  // One scene (solve, textures) for both sizes. render's own notes (which frames the mismatch
  // compares, a texture drawn without) are in the sheet's legend or are informational; they
  // are not repeated per file here.
  const full = viewRenderOptions(options);
  const built = await buildRenderScene(asset, full);
  const draw = (size: number) => {
    const sheet = renderSheet(built.scene, { views: full.views, modes: full.modes, size, light: full.light, labels: built.labels });
    return { png: encodePng({ width: sheet.width, height: sheet.height, channels: 4, depth: 8, data: sheet.rgba }) };
  };
  if (want.sheet) out.sheet = own(draw(full.size).png);
  if (want.page) {
    const r = draw(PAGE_VIEW_SIZE);
    if (r.png.length <= pageBudget) out.page = own(r.png);
    else {
      out.pageOmitted = `${r.png.length.toLocaleString('en-US')} bytes, over the budget of ${pageBudget.toLocaleString('en-US')} for one sheet; see --views`;
    }
  }
  return out;
}

/** `bytes` on an ArrayBuffer of its own (so it can be transferred without taking others along). */
function own(bytes: Uint8Array): Uint8Array {
  return bytes.byteOffset === 0 && bytes.byteLength === bytes.buffer.byteLength ? bytes : bytes.slice();
}
