/**
 * The files an asset reads besides itself (external buffers, images, material libraries and
 * their images), listed without decoding any geometry, so a run can plan its writes before
 * any work starts.
 * Based on: glTF 2.0 specification, sections 3.6.1 (buffers, uri), 3.8.3 (images, uri) and
 * 4.4 (GLB: the JSON chunk comes first); Wavefront OBJ `mtllib` and MTL texture statements.
 * URIs resolve with the readers' own rules (resolveResourceUri), so the paths are the ones
 * the readers open.
 */
import * as path from 'node:path';
import { parseMtl } from './mtlRead.js';
import { fileNameToUri, splitMtllib } from './objRead.js';
import { openRegularFile, readRegularFile } from './files.js';
import { MAX_JSON_DEPTH, checkJsonBudget } from './jsonBudget.js';
import { resolveResourceUri } from './uri.js';

/** One file an asset reads. */
export interface ReferencedFile {
  kind: 'buffer' | 'image' | 'mtl';
  /** The URI as the asset writes it (for OBJ: as the reader turns the file name into one). */
  uri: string;
  /** Absolute real path it resolves to (it may not exist). */
  path: string;
}

/** What listAssetReferences finds. */
export interface AssetReferences {
  container: 'glb' | 'gltf' | 'obj';
  files: ReferencedFile[];
  /** A .gltf whose buffers (at least one) are all `data:` URIs: its output keeps them embedded. */
  embeddedBuffers: boolean;
}

/** Length of the GLB header plus the first chunk's header. Source: glTF 2.0, 4.4. */
const GLB_HEAD = 20;
const CHUNK_JSON = 0x4e4f534a;

/** The JSON chunk of a GLB, read without the rest of the file; null when the container is broken. */
async function glbJson(file: string): Promise<unknown> {
  const { handle, size } = await openRegularFile(file);
  try {
    const head = Buffer.alloc(GLB_HEAD);
    const { bytesRead } = await handle.read(head, 0, GLB_HEAD, 0);
    if (bytesRead < GLB_HEAD || head.readUInt32LE(16) !== CHUNK_JSON) return null;
    const length = head.readUInt32LE(12);
    if (GLB_HEAD + length > size) return null;
    const body = Buffer.alloc(length);
    await handle.read(body, 0, length, GLB_HEAD);
    return parseChecked(body);
  } finally {
    await handle.close();
  }
}

/** JSON text parsed within the readers' depth and size budget (jsonBudget.ts); throws past it. */
function parseChecked(bytes: Uint8Array): unknown {
  checkJsonBudget(bytes, MAX_JSON_DEPTH, 'the JSON');
  return JSON.parse(new TextDecoder('utf-8').decode(bytes));
}

function resolved(kind: ReferencedFile['kind'], uri: string, baseDir: string, out: ReferencedFile[]): void {
  try {
    const r = resolveResourceUri(uri, baseDir);
    if (r.kind === 'file') out.push({ kind, uri, path: r.path });
  } catch {
    // A URI the reader refuses fails the file in the reader, with its reason.
  }
}

/** glTF JSON: buffers and images named by URI. */
function gltfRefs(json: any, baseDir: string, container: 'glb' | 'gltf'): AssetReferences {
  const files: ReferencedFile[] = [];
  const buffers = Array.isArray(json?.buffers) ? json.buffers : [];
  let dataBuffers = 0;
  for (const b of buffers) {
    if (typeof b?.uri !== 'string') continue;
    if (/^data:/i.test(b.uri)) dataBuffers++;
    else resolved('buffer', b.uri, baseDir, files);
  }
  for (const img of Array.isArray(json?.images) ? json.images : []) {
    if (typeof img?.uri === 'string' && !/^data:/i.test(img.uri)) resolved('image', img.uri, baseDir, files);
  }
  return { container, files, embeddedBuffers: container === 'gltf' && buffers.length > 0 && dataBuffers === buffers.length };
}

/** OBJ text: its material libraries and every texture they name (used or not). */
async function objRefs(text: string, baseDir: string): Promise<AssetReferences> {
  const files: ReferencedFile[] = [];
  for (const m of text.matchAll(/^[ \t]*mtllib[ \t]+(.*?)[ \t]*\r?$/gm)) {
    for (const name of splitMtllib(m[1])) {
      const uri = fileNameToUri(name, '');
      const before = files.length;
      resolved('mtl', uri, baseDir, files);
      if (files.length === before) continue;
      let mtl: string;
      try {
        mtl = new TextDecoder('utf-8').decode(await readRegularFile(files[files.length - 1].path));
      } catch {
        continue;
      }
      const dir = path.posix.dirname(uri);
      for (const mat of parseMtl(mtl, name).materials.values()) {
        for (const tex of [mat.mapKd, mat.normal]) if (tex) resolved('image', fileNameToUri(tex.file, dir), baseDir, files);
      }
    }
  }
  return { container: 'obj', files, embeddedBuffers: false };
}

/**
 * Lists the files the asset at `file` reads besides itself. Returns null when the file
 * cannot be read or parsed far enough (the reader then fails it with its own reason).
 * Reads a .gltf's JSON, a GLB's JSON chunk only, an OBJ's text and its .mtl files.
 */
export async function listAssetReferences(file: string): Promise<AssetReferences | null> {
  const ext = path.extname(file).toLowerCase();
  const baseDir = path.dirname(path.resolve(file));
  try {
    if (ext === '.glb') {
      const json = await glbJson(file);
      return json ? gltfRefs(json, baseDir, 'glb') : null;
    }
    if (ext === '.gltf') return gltfRefs(parseChecked(await readRegularFile(file)), baseDir, 'gltf');
    if (ext === '.obj') return await objRefs(new TextDecoder('utf-8').decode(await readRegularFile(file)), baseDir);
  } catch {
    return null;
  }
  return null;
}
