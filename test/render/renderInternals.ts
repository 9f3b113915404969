/** The renderer's lower-level pieces the tests drive directly. */
export {
  createVisibility, lightInView, orthoCamera, prepareInstance, rasterizeInstance, sceneBounds, shadeView,
  type RenderScene,
} from '../../src/render/index.js';
export { FRAME_MARGIN as FRAME_MARGIN_FOR_TESTS } from '../../src/render/camera.js';
