/**
 * Safe resolution of the URIs a glTF file names (buffers, images).
 * Based on: glTF 2.0 specification, sections 3.6.1 (buffers, data: URIs) and 2.8 (URIs);
 * RFC 2397 (the "data" URL scheme); RFC 3986 (URI generic syntax, percent-encoding).
 *
 * Policy (DESIGN.md, Guarantees): a relative URI resolves only inside the asset's folder.
 * Absolute paths, Windows drive paths, `..` escapes (also percent-encoded), any scheme other
 * than `data:` and symlinks that lead outside the folder are refused with `bad-uri`.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { TanframeError } from '../mesh/errors.js';

/** A resolved URI: embedded bytes, or an absolute path inside the base folder. */
export type ResolvedResource =
  | { kind: 'data'; bytes: Uint8Array; mimeType: string }
  | { kind: 'file'; path: string };

/** Quotes a URI for an error message, shortened so the message stays one readable line. */
function quote(uri: string): string {
  const shown = uri.length > 80 ? `${uri.slice(0, 77)}...` : uri;
  return `'${shown.replace(/[\r\n\t]/g, ' ')}'`;
}

function refuse(uri: string, why: string): never {
  throw new TanframeError('bad-uri', `uri ${quote(uri)} ${why}`);
}

/**
 * Decodes %XX escapes into bytes (RFC 3986, 2.1). Other characters are taken as UTF-8.
 * Returns null when an escape is malformed.
 */
function percentDecodeBytes(text: string): Uint8Array | null {
  const utf8 = new TextEncoder().encode(text);
  const out = new Uint8Array(utf8.length);
  let n = 0;
  for (let i = 0; i < utf8.length; i++) {
    const c = utf8[i];
    if (c !== 0x25) {
      out[n++] = c;
      continue;
    }
    if (i + 2 >= utf8.length) return null;
    const hex = String.fromCharCode(utf8[i + 1], utf8[i + 2]);
    if (!/^[0-9a-fA-F]{2}$/.test(hex)) return null;
    out[n++] = parseInt(hex, 16);
    i += 2;
  }
  return out.slice(0, n);
}

/** Decodes a data: URI (RFC 2397): `data:[<mediatype>][;base64],<data>`. */
function decodeDataUri(uri: string): { kind: 'data'; bytes: Uint8Array; mimeType: string } {
  const comma = uri.indexOf(',');
  if (comma < 0) refuse(uri, 'is a data: URI without a comma');
  const header = uri.slice(5, comma);
  const payload = uri.slice(comma + 1);
  const params = header.split(';');
  const isBase64 = params.length > 1 && params[params.length - 1].toLowerCase() === 'base64';
  // Source: RFC 2397, section 2: the default media type is text/plain.
  const mimeType = (params[0] || 'text/plain').trim().toLowerCase();
  const raw = percentDecodeBytes(payload);
  if (raw === null) refuse(uri, 'has a malformed percent-escape in its data');
  if (!isBase64) return { kind: 'data', bytes: raw, mimeType };
  const text = new TextDecoder('latin1').decode(raw).replace(/\s+/g, '');
  if (!/^[A-Za-z0-9+/\-_]*={0,2}$/.test(text) || text.replace(/=+$/, '').length % 4 === 1) {
    refuse(uri, 'has invalid base64 data');
  }
  const bytes = Buffer.from(text, 'base64');
  return { kind: 'data', bytes: new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.byteLength), mimeType };
}

/** True when `text` names an absolute or drive-qualified path (POSIX, UNC or Windows). */
function isAbsoluteLike(text: string): boolean {
  return text.startsWith('/') || text.startsWith('\\') || /^[a-zA-Z]:/.test(text);
}

/**
 * The normalized relative path a relative URI names: percent-decoded, `.` segments removed,
 * `a/../` folded, segments joined with '/'. Both '/' and '\' separate segments. Throws
 * `bad-uri` for absolute paths, drive paths, other schemes, NUL bytes and any `..` that
 * climbs above the base folder. Does not touch the file system.
 */
export function uriToRelativePath(uri: string): string {
  if (uri.length === 0) refuse(uri, 'is empty');
  if (/^[a-zA-Z]:/.test(uri)) refuse(uri, 'is a Windows drive path (only relative paths are allowed)');
  const scheme = /^([a-zA-Z][a-zA-Z0-9+.-]*):/.exec(uri);
  if (scheme) refuse(uri, `uses the '${scheme[1].toLowerCase()}:' scheme (only relative paths and data: URIs are allowed)`);
  if (isAbsoluteLike(uri)) refuse(uri, 'is an absolute path (only relative paths are allowed)');
  const bytes = percentDecodeBytes(uri);
  if (bytes === null) refuse(uri, 'has a malformed percent-escape');
  let decoded: string;
  try {
    decoded = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    refuse(uri, 'does not decode to UTF-8 text');
  }
  if (decoded.includes('\0')) refuse(uri, 'contains a NUL character');
  if (isAbsoluteLike(decoded)) refuse(uri, 'decodes to an absolute path (only relative paths are allowed)');
  const kept: string[] = [];
  for (const segment of decoded.split(/[\\/]/)) {
    if (segment === '' || segment === '.') continue;
    if (segment === '..') {
      if (kept.length === 0) refuse(uri, "escapes the asset's folder with '..'");
      kept.pop();
      continue;
    }
    kept.push(segment);
  }
  if (kept.length === 0) refuse(uri, 'names no file');
  return kept.join('/');
}

/**
 * Real path of the deepest existing ancestor of `p` (inclusive) joined with the rest, so a
 * path that does not exist yet still resolves the symbolic links on its way. May throw a
 * file-system error other than ENOENT / ENOTDIR (EACCES, ELOOP).
 */
export function realPathOfNearestExisting(p: string): string {
  let head = p;
  const tail: string[] = [];
  for (;;) {
    try {
      return path.join(fs.realpathSync.native(head), ...tail);
    } catch (err) {
      const code = (err as NodeJS.ErrnoException).code;
      if (code !== 'ENOENT' && code !== 'ENOTDIR') throw err;
      const parent = path.dirname(head);
      if (parent === head) return p;
      tail.unshift(path.basename(head));
      head = parent;
    }
  }
}

/** True when absolute path `child` is `parent` or lies inside it (lexically). */
export function isInside(parent: string, child: string): boolean {
  const rel = path.relative(parent, child);
  // '..' alone or as the first segment climbs out; a name that merely starts with '..' does not.
  return rel === '' || (rel !== '..' && !rel.startsWith(`..${path.sep}`) && !path.isAbsolute(rel));
}

/**
 * Resolves a URI named by an asset. `data:` URIs (base64 or percent-encoded) decode to
 * bytes; relative URIs are percent-decoded and resolved inside `baseDir`, symlinks included.
 * Returns the bytes, or the absolute real path of the file (which may not exist: reading it
 * is the caller's job). Throws TanframeError 'bad-uri' naming the URI and the reason.
 */
export function resolveResourceUri(uri: string, baseDir: string): ResolvedResource {
  if (/^data:/i.test(uri)) return decodeDataUri(uri);
  const rel = uriToRelativePath(uri);
  const base = path.resolve(baseDir);
  const lexical = path.resolve(base, ...rel.split('/'));
  let realBase: string;
  let real: string;
  try {
    realBase = realPathOfNearestExisting(base);
    real = realPathOfNearestExisting(lexical);
  } catch (err) {
    refuse(uri, `cannot be resolved (${(err as NodeJS.ErrnoException).code ?? 'error'})`);
  }
  if (!isInside(realBase, real)) refuse(uri, "leads outside the asset's folder through a symbolic link");
  return { kind: 'file', path: real };
}
