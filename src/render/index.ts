/**
 * Based on: DESIGN.md `render` (views, modes, shading, camera, sheet). The CPU renderer's
 * entry: build a RenderScene (src/lib/renderAsset.ts does it from an asset), then renderSheet.
 * No file system, console or process here.
 */
export { VIEW_NAMES, lightInView, orthoCamera, type Camera, type ViewName } from './camera.js';
export { MODE_NAMES, prepareInstance, shadeView, type ModeName, type PreparedInstance } from './shade.js';
export { countFindings, renderSheet, renderViewCells, SUPERSAMPLE, type RenderedSheet, type SheetOptions } from './sheet.js';
export { FINDING_KINDS, HEAT_LEGEND_DEG, NEUTRAL_GREY, findingColour, mismatchColour } from './palette.js';
export { clearVisibility, createVisibility, rasterizeInstance, SUBPIXEL, type VisibilityBuffer } from './rasterize.js';
export { linearToSrgb, sampleTexture, srgbToLinear } from './texture.js';
export {
  WRAP_CLAMP, WRAP_MIRROR, WRAP_REPEAT, defaultMaterial, nodeMatrix, sceneBounds,
  type RenderImage, type RenderInstance, type RenderMaterial, type RenderPrimitive, type RenderScene, type RenderTextureRef,
} from './scene.js';
