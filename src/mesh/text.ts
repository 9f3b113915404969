/**
 * Based on: XML 1.0 (Fifth Edition), section 2.2 (the Char production: the characters an XML
 * document may hold), and ECMA-48 / ISO 6429 (C0 and C1 control characters: a terminal acts
 * on them, e.g. ESC starts a control sequence, BEL rings, OSC sets the window title).
 *
 * Text from files on its way to people and other programs: the one sanitiser every string
 * read from a file passes before it reaches a terminal, a log line, a report, a file name, or
 * XML / SVG / HTML; and the cap on warnings per file. Pure functions, no I/O.
 */

/**
 * A string from a file made safe to show on one line: every control character (C0 U+0000 to
 * U+001F, DEL U+007F, C1 U+0080 to U+009F), every line or paragraph separator (U+2028,
 * U+2029), every lone surrogate and the non-characters U+FFFE / U+FFFF is written as a
 * visible escape `\uXXXX` (so ESC is `\u001b` and a newline is `\u000a`: one line stays one
 * line); a backslash that would start such an escape stays as it is. Everything else is kept.
 * The result holds only characters XML 1.0 allows, so it can go into XML text or an attribute
 * once `<`, `&`, `"` are escaped as usual. Linear in the length; returns `s` itself when
 * nothing needs escaping.
 */
export function cleanText(s: string): string {
  const n = s.length;
  let i = 0;
  for (; i < n; i++) if (needsEscape(s, i)) break;
  if (i === n) return s;
  const parts: string[] = [s.slice(0, i)];
  let from = i;
  for (; i < n; i++) {
    if (!needsEscape(s, i)) {
      // A valid surrogate pair is two code units; both are kept.
      continue;
    }
    if (from < i) parts.push(s.slice(from, i));
    parts.push(`\\u${s.charCodeAt(i).toString(16).padStart(4, '0')}`);
    from = i + 1;
  }
  if (from < n) parts.push(s.slice(from));
  return parts.join('');
}

/** Whether the code unit at i must be escaped (see cleanText). */
function needsEscape(s: string, i: number): boolean {
  const c = s.charCodeAt(i);
  if (c < 0x20 || (c >= 0x7f && c <= 0x9f) || c === 0x2028 || c === 0x2029 || c === 0xfffe || c === 0xffff) return true;
  if (c >= 0xd800 && c <= 0xdbff) {
    const d = i + 1 < s.length ? s.charCodeAt(i + 1) : 0;
    return !(d >= 0xdc00 && d <= 0xdfff);
  }
  if (c >= 0xdc00 && c <= 0xdfff) {
    const b = i > 0 ? s.charCodeAt(i - 1) : 0;
    return !(b >= 0xd800 && b <= 0xdbff);
  }
  return false;
}

/**
 * `cleanText`, then cut to at most `max` characters (default 200) with "..." at the end: for
 * quoting a value from a file inside a message (a hostile file can hold megabytes in one name).
 */
export function quoteText(s: string, max = 200): string {
  const head = s.length > max * 2 ? s.slice(0, max * 2) : s;
  const clean = cleanText(head);
  return clean.length > max || head !== s ? `${clean.slice(0, Math.max(0, max - 3))}...` : clean;
}

/**
 * Warnings listed per file (and per material library); the rest are only counted, in one
 * closing line, so a file with a million malformed statements still gives a short report and
 * no call ever receives a huge array. Our choice.
 */
export const MAX_WARNINGS_PER_FILE = 100;

const NOT_LISTED_RE = /^([\d,]+) more warnings? not listed \(([\d,]+) in all\)$/;

/** The closing line of a capped warning list for `total` warnings of which `listed` are shown. */
export function notListedLine(listed: number, total: number): string {
  const more = total - listed;
  return `${more.toLocaleString('en-US')} more warning${more === 1 ? '' : 's'} not listed (${total.toLocaleString('en-US')} in all)`;
}

/** Warnings a list stands for: its entries, where a closing line counts the warnings it replaces. */
export function warningTotal(warnings: readonly string[]): number {
  let total = 0;
  for (const w of warnings) {
    const m = NOT_LISTED_RE.exec(w);
    total += m ? Number(m[1]!.replace(/,/g, '')) : 1;
  }
  return total;
}

/**
 * The first MAX_WARNINGS_PER_FILE warnings of `warnings` (a new array, built by a loop: any
 * length is safe), then, when some are left out, one closing line counting them (closing
 * lines of lists capped earlier are folded in). `dropped` counts warnings never stored.
 */
export function capWarnings(warnings: readonly string[], dropped = 0): string[] {
  const out: string[] = [];
  let total = dropped;
  for (const w of warnings) {
    const m = NOT_LISTED_RE.exec(w);
    if (m) { total += Number(m[1]!.replace(/,/g, '')); continue; }
    total++;
    if (out.length < MAX_WARNINGS_PER_FILE) out.push(w);
  }
  if (total > out.length) out.push(notListedLine(out.length, total));
  return out;
}

/**
 * Text for XML, SVG or HTML content and attributes: `cleanText` (control and XML-invalid
 * characters as visible escapes, one line), then `&`, `<`, `>`, `"` and `'` as entities.
 * Source: XML 1.0 section 2.2 (Char) and 2.4 (character data), HTML5 (same five characters).
 */
export function markupText(s: string): string {
  return cleanText(s).replace(/[&<>"']/g, (c) => MARKUP_ENTITIES[c]!);
}

const MARKUP_ENTITIES: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };

/**
 * JSON text of `value` (JSON.stringify with `indent`) with the characters JSON leaves raw but a
 * terminal may act on or a line reader split at (DEL, C1 controls U+0080 to U+009F, U+2028,
 * U+2029) written as `\uXXXX` escapes: the same JSON value, safe to print. JSON.stringify
 * already escapes C0 controls and lone surrogates. Source: RFC 8259 section 7 (any character
 * may be escaped as \uXXXX).
 */
export function jsonText(value: unknown, indent = 2): string {
  return JSON.stringify(value, null, indent).replace(/[\u007f-\u009f\u2028\u2029]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
}
