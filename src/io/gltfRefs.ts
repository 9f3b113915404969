/**
 * Finding every place in a glTF JSON that holds an accessor or buffer-view index, so the
 * writer can keep what is referenced, drop the rest and renumber.
 * Based on: glTF 2.0 specification (mesh.primitive attributes/targets/indices, skin
 * inverseBindMatrices, animation sampler input/output, accessor bufferView and sparse
 * views, image bufferView) and the extensions EXT_mesh_gpu_instancing (node attributes) and
 * KHR_draco_mesh_compression (primitive bufferView). References held by extensions not
 * listed here are not known to us and are not followed.
 */
import { TanframeError } from '../mesh/errors.js';

/** A slot holding an index: `holder[key]`, with a label for messages. */
export interface IndexRef {
  holder: any;
  key: string | number;
  label: string;
}

function isObject(v: unknown): v is Record<string, any> {
  return v !== null && typeof v === 'object' && !Array.isArray(v);
}

function list(v: unknown): any[] {
  return Array.isArray(v) ? v : [];
}

/** Adds refs for every value of an attribute-style map (semantic -> index). */
function pushMap(out: IndexRef[], map: unknown, label: string): void {
  if (!isObject(map)) return;
  for (const key of Object.keys(map)) out.push({ holder: map, key, label: `${label} ${key}` });
}

/**
 * Every accessor reference in `json`, skipping the primitives for which `skip(m, p)` is true
 * (they get new accessors). Order is deterministic (json order).
 */
export function accessorRefs(json: any, skip: (mesh: number, primitive: number) => boolean): IndexRef[] {
  const out: IndexRef[] = [];
  list(json.meshes).forEach((mesh, m) => {
    list(mesh?.primitives).forEach((prim, p) => {
      if (skip(m, p) || !isObject(prim)) return;
      const where = `mesh ${m} primitive ${p}`;
      pushMap(out, prim.attributes, where);
      list(prim.targets).forEach((t, i) => pushMap(out, t, `${where} target ${i}`));
      if (prim.indices !== undefined) out.push({ holder: prim, key: 'indices', label: `${where} indices` });
    });
  });
  list(json.skins).forEach((skin, s) => {
    if (isObject(skin) && skin.inverseBindMatrices !== undefined) {
      out.push({ holder: skin, key: 'inverseBindMatrices', label: `skin ${s} inverseBindMatrices` });
    }
  });
  list(json.animations).forEach((anim, a) => {
    list(anim?.samplers).forEach((sampler, s) => {
      if (!isObject(sampler)) return;
      for (const key of ['input', 'output']) {
        if (sampler[key] !== undefined) out.push({ holder: sampler, key, label: `animation ${a} sampler ${s} ${key}` });
      }
    });
  });
  list(json.nodes).forEach((node, n) => {
    pushMap(out, node?.extensions?.EXT_mesh_gpu_instancing?.attributes, `node ${n} EXT_mesh_gpu_instancing`);
  });
  return out;
}

/** Every buffer-view reference in `json`: accessors (incl. sparse), images, Draco primitives. */
export function bufferViewRefs(json: any): IndexRef[] {
  const out: IndexRef[] = [];
  list(json.accessors).forEach((acc, i) => {
    if (!isObject(acc)) return;
    if (acc.bufferView !== undefined) out.push({ holder: acc, key: 'bufferView', label: `accessor ${i}` });
    for (const part of ['indices', 'values']) {
      const o = acc.sparse?.[part];
      if (isObject(o) && o.bufferView !== undefined) out.push({ holder: o, key: 'bufferView', label: `accessor ${i} sparse ${part}` });
    }
  });
  list(json.images).forEach((img, i) => {
    if (isObject(img) && img.bufferView !== undefined) out.push({ holder: img, key: 'bufferView', label: `image ${i}` });
  });
  list(json.meshes).forEach((mesh, m) => {
    list(mesh?.primitives).forEach((prim, p) => {
      const draco = prim?.extensions?.KHR_draco_mesh_compression;
      if (isObject(draco) && draco.bufferView !== undefined) {
        out.push({ holder: draco, key: 'bufferView', label: `mesh ${m} primitive ${p} KHR_draco_mesh_compression` });
      }
    });
  });
  return out;
}

/**
 * Keeps the referenced entries of an array and renumbers the references in place.
 * Returns the kept old indices in ascending order. Throws 'bad-gltf' for a reference
 * to an index that does not exist.
 */
export function keepReferenced(refs: IndexRef[], length: number, what: string): number[] {
  const used = new Uint8Array(length);
  for (const r of refs) {
    const v = r.holder[r.key];
    if (typeof v !== 'number' || !Number.isInteger(v) || v < 0 || v >= length) {
      throw new TanframeError('bad-gltf', `${r.label} names ${what} ${JSON.stringify(v)}, which does not exist`);
    }
    used[v] = 1;
  }
  const kept: number[] = [];
  const map = new Int32Array(length).fill(-1);
  for (let i = 0; i < length; i++) {
    if (used[i]) {
      map[i] = kept.length;
      kept.push(i);
    }
  }
  for (const r of refs) r.holder[r.key] = map[r.holder[r.key]];
  return kept;
}
