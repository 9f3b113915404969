/**
 * Based on: the view names and camera of DESIGN.md `render` (front: camera on +Z looking
 * toward -Z, +Y up, glTF's front; an orthographic camera framing the scene's bounding sphere)
 * and the usual look-at and orthographic projection matrices (gl-matrix `mat4.lookAt`,
 * `mat4.ortho`, OpenGL conventions: view space looks down -Z, NDC in [-1, 1]).
 */
import { mat4, vec3 } from 'gl-matrix';
import { VIEW_NAMES, type ViewName } from './names.js';

/** View names (DESIGN.md). */
export { VIEW_NAMES, type ViewName };

/** Direction from the scene centre to the camera, and the camera's up, per view. */
const VIEWS: Record<ViewName, { eye: [number, number, number]; up: [number, number, number] }> = {
  front: { eye: [0, 0, 1], up: [0, 1, 0] },
  back: { eye: [0, 0, -1], up: [0, 1, 0] },
  // left: the camera on the model's left (-X) looking toward +X; right: on +X.
  left: { eye: [-1, 0, 0], up: [0, 1, 0] },
  right: { eye: [1, 0, 0], up: [0, 1, 0] },
  // top: looking down, the front (+Z) at the bottom of the picture; bottom: looking up, front at the top.
  top: { eye: [0, 1, 0], up: [0, 0, -1] },
  bottom: { eye: [0, -1, 0], up: [0, 0, 1] },
  // iso: from front, right and above alike.
  iso: { eye: [1 / Math.sqrt(3), 1 / Math.sqrt(3), 1 / Math.sqrt(3)], up: [0, 1, 0] },
};

/** A camera: world -> clip matrix and world -> view matrix (column-major, float64). */
export interface Camera {
  viewProjection: Float64Array;
  view: Float64Array;
}

/** Fraction of the picture left empty around the bounding sphere on each side. Our choice. */
export const FRAME_MARGIN = 0.04;

/**
 * The orthographic camera of `view` framing the sphere (cx, cy, cz, r): it looks at the centre
 * from outside the sphere along the view's direction, the sphere's diameter filling the
 * picture less FRAME_MARGIN on each side; near and far planes enclose the sphere.
 */
export function orthoCamera(view: ViewName, sphere: [number, number, number, number]): Camera {
  const [cx, cy, cz, r] = sphere;
  const v = VIEWS[view];
  const dist = 2 * r;
  const eye = vec3.fromValues(cx + v.eye[0] * dist, cy + v.eye[1] * dist, cz + v.eye[2] * dist);
  const viewM = new Float64Array(16) as unknown as mat4;
  mat4.lookAt(viewM, eye, [cx, cy, cz], v.up);
  const half = r / (1 - 2 * FRAME_MARGIN);
  const proj = new Float64Array(16) as unknown as mat4;
  mat4.ortho(proj, -half, half, -half, half, dist - r * 1.01, dist + r * 1.01);
  const vp = new Float64Array(16) as unknown as mat4;
  mat4.multiply(vp, proj, viewM);
  return { viewProjection: vp as unknown as Float64Array, view: viewM as unknown as Float64Array };
}

/**
 * The light direction (unit, toward the light) in view space from azimuth and elevation in
 * degrees: azimuth from +Z toward +X, elevation above the horizontal (DESIGN.md `--light`).
 */
export function lightInView(azimuthDeg: number, elevationDeg: number): [number, number, number] {
  const az = (azimuthDeg * Math.PI) / 180, el = (elevationDeg * Math.PI) / 180;
  return [Math.cos(el) * Math.sin(az), Math.sin(el), Math.cos(el) * Math.cos(az)];
}

/** A view-space direction taken to world space by the inverse of the view's rotation (its transpose). */
export function viewToWorldDirection(view: Float64Array, d: [number, number, number]): [number, number, number] {
  // Rows of the view rotation are the camera axes in world space.
  const x = view[0] * d[0] + view[1] * d[1] + view[2] * d[2];
  const y = view[4] * d[0] + view[5] * d[1] + view[6] * d[2];
  const z = view[8] * d[0] + view[9] * d[1] + view[10] * d[2];
  const l = Math.hypot(x, y, z);
  return [x / l, y / l, z / l];
}
