/**
 * Decoding of Draco-compressed mesh primitives (KHR_draco_mesh_compression).
 * Based on: KHR_draco_mesh_compression extension specification (the primitive extension
 * object names a bufferView holding the Draco stream and maps each attribute semantic to a
 * Draco attribute unique id; the accessors describe the decoded data; the stream's faces are
 * the primitive's triangles). Decoding uses @loaders.gl/draco's DracoLoader with the `draco3d`
 * decoder module its package depends on, supplied through the loader's `modules.draco3d`
 * option: the WebAssembly decoder is then read from node_modules and nothing is fetched from
 * a network at run time (without that option the loader first tries a CDN).
 */
import { createRequire } from 'node:module';
import { TanframeError } from '../mesh/errors.js';

/** One decoded Draco attribute: values as the decoder returns them. */
export interface DracoAttribute {
  array: Int8Array | Uint8Array | Int16Array | Uint16Array | Int32Array | Uint32Array | Float32Array;
  itemSize: number;
}

/** A decoded Draco primitive. */
export interface DracoMesh {
  /** By glTF semantic, for each semantic of the extension's attribute map found in the stream. */
  attributes: Record<string, DracoAttribute>;
  /** Triangle list. */
  indices: Uint32Array;
  /** Number of decoded vertices. */
  vertexCount: number;
}

interface DracoModules {
  parse: (data: ArrayBuffer, options: any) => Promise<any>;
  draco3d: unknown;
}

let modulesPromise: Promise<DracoModules> | null = null;

/** Loads DracoLoader and the draco3d module that @loaders.gl/draco itself resolves. */
function loadModules(): Promise<DracoModules> {
  modulesPromise ??= (async () => {
    const { DracoLoader } = await import('@loaders.gl/draco');
    const entry = createRequire(import.meta.url).resolve('@loaders.gl/draco');
    const draco3d = createRequire(entry)('draco3d');
    return { parse: (data, options) => DracoLoader.parse(data, options), draco3d };
  })();
  return modulesPromise;
}

/**
 * Decodes one Draco stream. `attributeIds` is the extension's map semantic -> Draco unique id.
 * Returns the attributes found (values as decoded: quantized streams come back dequantized),
 * the triangle list and the vertex count. Throws 'bad-gltf' when the stream does not decode
 * or names an attribute id it lacks.
 */
export async function decodeDracoPrimitive(stream: Uint8Array, attributeIds: Record<string, number>, where: string): Promise<DracoMesh> {
  const { parse, draco3d } = await loadModules();
  const data = stream.slice().buffer;
  let decoded: any;
  try {
    decoded = await parse(data, {
      modules: { draco3d },
      draco: { extraAttributes: attributeIds },
    });
  } catch (err) {
    throw new TanframeError('bad-gltf', `${where}: the KHR_draco_mesh_compression data does not decode (${String((err as Error)?.message ?? err).split('\n')[0]})`);
  }
  const vertexCount: number = decoded?.header?.vertexCount ?? 0;
  const attributes: Record<string, DracoAttribute> = {};
  for (const semantic of Object.keys(attributeIds)) {
    const a = decoded?.attributes?.[semantic];
    if (!a || !ArrayBuffer.isView(a.value)) {
      throw new TanframeError('bad-gltf', `${where}: KHR_draco_mesh_compression attribute ${semantic} (id ${attributeIds[semantic]}) is not in the Draco data`);
    }
    attributes[semantic] = { array: a.value as DracoAttribute['array'], itemSize: a.size };
  }
  const idx = decoded?.indices?.value;
  const indices = idx instanceof Uint32Array ? idx : Uint32Array.from(idx ?? []);
  return { attributes, indices, vertexCount };
}
