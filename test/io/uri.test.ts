import { mkdtemp, mkdir, rm, symlink, writeFile } from 'node:fs/promises';
import { realpathSync } from 'node:fs';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TanframeError } from '../../src/mesh/errors.js';
import { resolveResourceUri, uriToRelativePath } from '../../src/io/uri.js';

let root: string;
let base: string;

// Layout:
//   root/
//     outside.bin
//     asset/            <- base folder
//       a b.bin
//       tex/n.png
//       link-out -> ../outside.bin
//       dir-out  -> ..
beforeAll(async () => {
  root = realpathSync(await mkdtemp(path.join(tmpdir(), 'tanframe-uri-')));
  base = path.join(root, 'asset');
  await mkdir(path.join(base, 'tex'), { recursive: true });
  await writeFile(path.join(root, 'outside.bin'), 'x');
  await writeFile(path.join(base, 'a b.bin'), 'x');
  await writeFile(path.join(base, 'tex', 'n.png'), 'x');
  await symlink(path.join(root, 'outside.bin'), path.join(base, 'link-out'));
  await symlink(root, path.join(base, 'dir-out'));
});
afterAll(async () => {
  await rm(root, { recursive: true, force: true });
});

function codeOf(fn: () => unknown): string {
  try {
    fn();
  } catch (err) {
    expect(err).toBeInstanceOf(TanframeError);
    expect((err as Error).message).not.toContain('\n');
    return (err as TanframeError).code;
  }
  return 'no error';
}

describe('resolveResourceUri', () => {
  it('decodes base64 data: URIs with their media type', () => {
    // Source: RFC 2397 syntax; 'AAEC/w==' is base64 of bytes 0,1,2,255.
    const r = resolveResourceUri('data:application/octet-stream;base64,AAEC/w==', base);
    expect(r.kind).toBe('data');
    if (r.kind !== 'data') return;
    expect([...r.bytes]).toEqual([0, 1, 2, 255]);
    expect(r.mimeType).toBe('application/octet-stream');
  });

  it('decodes percent-encoded (non-base64) data: URIs, defaulting to text/plain', () => {
    const r = resolveResourceUri('data:,A%20B%ff', base);
    expect(r.kind === 'data' && [...r.bytes]).toEqual([0x41, 0x20, 0x42, 0xff]);
    expect(r.kind === 'data' && r.mimeType).toBe('text/plain');
  });

  it('refuses data: URIs with broken base64 or no comma', () => {
    expect(codeOf(() => resolveResourceUri('data:application/octet-stream;base64,AA*A', base))).toBe('bad-uri');
    expect(codeOf(() => resolveResourceUri('data:application/octet-stream;base64', base))).toBe('bad-uri');
  });

  it('resolves percent-encoded relative paths inside the folder', () => {
    expect(resolveResourceUri('a%20b.bin', base)).toEqual({ kind: 'file', path: path.join(base, 'a b.bin') });
    expect(resolveResourceUri('./tex/n.png', base)).toEqual({ kind: 'file', path: path.join(base, 'tex', 'n.png') });
    // '..' that stays inside the folder is harmless.
    expect(resolveResourceUri('tex/../a%20b.bin', base)).toEqual({ kind: 'file', path: path.join(base, 'a b.bin') });
  });

  it('returns a path for files that do not exist yet (the caller reports them missing)', () => {
    expect(resolveResourceUri('missing.bin', base)).toEqual({ kind: 'file', path: path.join(base, 'missing.bin') });
  });

  it('refuses .. escapes, plain and percent-encoded, with either slash', () => {
    for (const uri of ['../outside.bin', 'tex/../../outside.bin', '%2e%2e/outside.bin', '%2E%2E%2Foutside.bin', '..\\outside.bin', 'tex%5c..%5c..%5coutside.bin']) {
      expect(codeOf(() => resolveResourceUri(uri, base)), uri).toBe('bad-uri');
    }
  });

  it('refuses absolute paths and Windows drive paths, also when percent-encoded', () => {
    for (const uri of ['/etc/passwd', '%2Fetc%2Fpasswd', '\\\\server\\share\\x.bin', 'C:\\x.bin', 'c:/x.bin', 'C%3A/x.bin']) {
      expect(codeOf(() => resolveResourceUri(uri, base)), uri).toBe('bad-uri');
    }
  });

  it('refuses every scheme but data:', () => {
    for (const uri of ['http://example.com/a.bin', 'https://example.com/a.bin', 'file:///etc/passwd', 'ftp://h/x', 'blob:x']) {
      expect(codeOf(() => resolveResourceUri(uri, base)), uri).toBe('bad-uri');
    }
  });

  it('names the URI and the reason in the message', () => {
    expect(() => resolveResourceUri('http://example.com/a.bin', base)).toThrow(/'http:\/\/example\.com\/a\.bin'.*'http:' scheme/);
    expect(() => resolveResourceUri('../x.bin', base)).toThrow(/'\.\.\/x\.bin'.*escapes/);
  });

  it('refuses symbolic links that lead outside the folder', () => {
    expect(codeOf(() => resolveResourceUri('link-out', base))).toBe('bad-uri');
    expect(codeOf(() => resolveResourceUri('dir-out/outside.bin', base))).toBe('bad-uri');
  });

  it('refuses malformed escapes, NUL and empty URIs', () => {
    expect(codeOf(() => resolveResourceUri('a%zz.bin', base))).toBe('bad-uri');
    expect(codeOf(() => resolveResourceUri('a%00.bin', base))).toBe('bad-uri');
    expect(codeOf(() => resolveResourceUri('', base))).toBe('bad-uri');
    expect(codeOf(() => resolveResourceUri('.', base))).toBe('bad-uri');
  });
});

describe('uriToRelativePath', () => {
  it('normalizes to a forward-slash relative path', () => {
    expect(uriToRelativePath('tex/./sub%20dir/../n.png')).toBe('tex/n.png');
    expect(uriToRelativePath('tex\\n.png')).toBe('tex/n.png');
  });
});
