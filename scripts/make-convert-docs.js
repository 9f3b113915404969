#!/usr/bin/env node
/**
 * Makes the before/after pictures of the README's convert-map section from the demo scenario:
 * the buoy's tangent-space normal map (embedded in examples/harbor-props/buoy/buoy.glb) and
 * the same map converted to object space by `tanframe convert-map`, each also enlarged 4x
 * (nearest texel) for the page.
 *
 * Based on: glTF 2.0 specification, 4.4 (GLB: header, JSON and BIN chunks) and 3.6
 * (bufferViews) to take the embedded image out of the GLB.
 *
 * Usage: npm run build && node scripts/make-convert-docs.js   (writes docs/convert-map/)
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { decodePng, encodePng, runCli } from '../dist/index.js';

const repo = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const out = path.join(repo, 'docs', 'convert-map');
const glbPath = path.join(repo, 'examples', 'harbor-props', 'buoy', 'buoy.glb');
fs.mkdirSync(out, { recursive: true });

// The normal texture's image, from the GLB's BIN chunk.
const glb = fs.readFileSync(glbPath);
const jsonLength = glb.readUInt32LE(12);
const json = JSON.parse(glb.subarray(20, 20 + jsonLength).toString('utf8'));
const binStart = 20 + jsonLength + 8;
const image = json.images[json.textures[json.materials[0].normalTexture.index].source];
const view = json.bufferViews[image.bufferView];
const tangentPath = path.join(out, 'buoy_normal_tangent.png');
fs.writeFileSync(tangentPath, glb.subarray(binStart + (view.byteOffset ?? 0), binStart + (view.byteOffset ?? 0) + view.byteLength));

const objectPath = path.join(out, 'buoy_normal_object.png');
const rel = (p) => path.relative(repo, p);
const code = await runCli(['convert-map', '--mesh', rel(glbPath), '--in', rel(tangentPath), '--out', rel(objectPath), '--from', 'tangent', '--to', 'object'], {
  stdout: (s) => process.stdout.write(s), stderr: (s) => process.stderr.write(s), cwd: repo, isTTY: false, env: {},
});
if (code !== 0) process.exit(code);

/** Enlarges an image `k` times by repeating texels. */
function enlarge(img, k) {
  const w = img.width * k, h = img.height * k, ch = img.channels;
  const data = new Uint8Array(w * h * ch);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      const s = (((y / k) | 0) * img.width + ((x / k) | 0)) * ch, d = (y * w + x) * ch;
      for (let c = 0; c < ch; c++) data[d + c] = img.data[s + c];
    }
  }
  return { width: w, height: h, channels: ch, depth: 8, data };
}
for (const p of [tangentPath, objectPath]) {
  const big = enlarge(decodePng(new Uint8Array(fs.readFileSync(p))), 4);
  fs.writeFileSync(p.replace(/\.png$/, '_x4.png'), encodePng(big));
}
console.log(`wrote ${rel(out)}/`);
