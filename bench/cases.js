// Benchmark cases: mesh kinds by name, sized by triangle count.
import { noisySurface, uvSphere } from './meshes.js';

/** Builds a mesh of about `triangles` triangles: 'sphere' (indexed UV sphere) or 'scan' (noisy surface with seams). */
export function makeMesh(kind, triangles) {
  if (kind === 'sphere') {
    const rings = Math.max(2, Math.round(Math.sqrt(triangles / 4)));
    return uvSphere(rings, Math.max(3, Math.round(triangles / (2 * rings))));
  }
  if (kind === 'scan') return noisySurface(Math.max(2, Math.round(Math.sqrt(triangles / 2))));
  throw new Error(`unknown mesh kind ${kind}`);
}
