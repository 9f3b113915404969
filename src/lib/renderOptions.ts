/**
 * What `render` draws and its defaults (DESIGN.md `render`), on their own so the command line
 * can give its option defaults without loading the renderer (src/cli/commands.ts).
 */
import type { FrameMethod } from '../mesh/types.js';
import type { ModeName, ViewName } from '../render/names.js';

/** What to render. */
export interface RenderAssetOptions {
  views: ViewName[];
  modes: ModeName[];
  /** Pixels per side of one view. */
  size: number;
  /** Light azimuth and elevation in degrees. */
  light: [number, number];
  method: FrameMethod;
  /** TEXCOORD set the frames derive from; null for the normal texture's set (else 0). */
  uv: number | null;
}

/** The defaults of DESIGN.md: front, right, back, left; every mode; 512 px; light 30,40; mikktspace. */
export function defaultRenderOptions(): RenderAssetOptions {
  return { views: ['front', 'right', 'back', 'left'], modes: ['shaded', 'mismatch', 'findings'], size: 512, light: [30, 40], method: 'mikktspace', uv: null };
}
