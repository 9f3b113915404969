// The reference we time against: three's BufferGeometry.computeTangents on the same arrays.
import { BufferAttribute, BufferGeometry } from 'three';

/** Builds the geometry once (not timed by callers that pass `prepared`). */
export function prepareThree(m) {
  const g = new BufferGeometry();
  g.setAttribute('position', new BufferAttribute(m.positions, 3));
  g.setAttribute('normal', new BufferAttribute(m.normals, 3));
  g.setAttribute('uv', new BufferAttribute(m.uvs, 2));
  g.setIndex(new BufferAttribute(m.indices, 1));
  return g;
}

/** Runs computeTangents on a prepared geometry. */
export function runThree(g) {
  g.computeTangents();
}

/** Prepare and run in one go. */
export function threeTangents(m) {
  runThree(prepareThree(m));
}
