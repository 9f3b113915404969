// The one sanitiser for text from files, and the warnings cap (src/mesh/text.ts).
import { describe, expect, it } from 'vitest';
import { MAX_WARNINGS_PER_FILE, capWarnings, cleanText, jsonText, markupText, quoteText, warningTotal } from '../../src/mesh/text.js';

/** Characters XML 1.0 allows (section 2.2, the Char production). Source: XML 1.0 Fifth Edition. */
const XML_CHAR = /^[\t\n\r\u0020-\uD7FF\uE000-\uFFFD\u{10000}-\u{10FFFF}]*$/u;

describe('cleanText', () => {
  it('writes terminal control characters as visible escapes', () => {
    // ESC [ 2 J clears a screen, ESC ] 0 ; ... BEL sets a window title (ECMA-48).
    expect(cleanText('a\u001b[2Jb')).toBe('a\\u001b[2Jb');
    expect(cleanText('\u001b]0;title\u0007')).toBe('\\u001b]0;title\\u0007');
    expect(cleanText('c1 \u009b csi, del \u007f')).toBe('c1 \\u009b csi, del \\u007f');
  });

  it('keeps one line one line: newlines, carriage returns and Unicode separators are escaped', () => {
    const forged = 'x.glb\ntanframe: other.glb: all fine\r\u2028\u2029';
    const out = cleanText(forged);
    expect(out.split(/\r\n|[\n\r\u2028\u2029]/)).toHaveLength(1);
    expect(out).toBe('x.glb\\u000atanframe: other.glb: all fine\\u000d\\u2028\\u2029');
  });

  it('never leaves a character XML 1.0 forbids: NUL, lone surrogates, U+FFFE and U+FFFF', () => {
    const out = cleanText('n\u0000 lone\uD800 \uDC00 pair\uD83D\uDE00 \uFFFE\uFFFF');
    expect(XML_CHAR.test(out)).toBe(true);
    expect(out).toBe('n\\u0000 lone\\ud800 \\udc00 pair\uD83D\uDE00 \\ufffe\\uffff');
  });

  it('returns ordinary text unchanged, accents, tabs-free punctuation and emoji included', () => {
    const s = 'harbour_buoy \u00e9t\u00e9 \u6e2f \uD83D\uDEA2 "quoted" <tag> \\ back';
    expect(cleanText(s)).toBe(s);
  });

  it('markupText also escapes the five markup characters', () => {
    expect(markupText('<a href="x">&\'\u0007')).toBe('&lt;a href=&quot;x&quot;&gt;&amp;&#39;\\u0007');
  });

  it('quoteText cuts long text after cleaning', () => {
    expect(quoteText('\u001b'.repeat(10), 20)).toBe('\\u001b\\u001b\\u001...');
    expect(quoteText('abc', 20)).toBe('abc');
    expect(quoteText('x'.repeat(5000), 10)).toBe('xxxxxxx...');
  });
});

describe('capWarnings', () => {
  it('lists the first warnings and counts the rest in one closing line', () => {
    const many = Array.from({ length: 250_000 }, (_, i) => `w${i}`);
    const out = capWarnings(many);
    expect(out).toHaveLength(MAX_WARNINGS_PER_FILE + 1);
    expect(out[0]).toBe('w0');
    expect(out[MAX_WARNINGS_PER_FILE]).toBe('249,900 more warnings not listed (250,000 in all)');
    expect(warningTotal(out)).toBe(250_000);
  });

  it('folds the closing line of a list capped earlier into the count', () => {
    const inner = capWarnings(Array.from({ length: 150 }, (_, i) => `m${i}`), 1000); // 1,150 in all
    const out = capWarnings([...inner, 'image missing']);
    expect(out).toHaveLength(MAX_WARNINGS_PER_FILE + 1);
    expect(out[MAX_WARNINGS_PER_FILE]).toBe('1,051 more warnings not listed (1,151 in all)');
    expect(warningTotal(out)).toBe(1151);
  });

  it('leaves a short list as it is', () => {
    expect(capWarnings(['a', 'b'])).toEqual(['a', 'b']);
    expect(warningTotal(['a', 'b'])).toBe(2);
  });
});

describe('jsonText', () => {
  it('escapes what JSON leaves raw but a terminal acts on, and parses back to the same value', () => {
    const value = { name: 'a\u009b31m\u007f\u2028b\u001b', n: 1 };
    const text = jsonText(value, 0); // compact: no newlines of its own
    expect(text).not.toMatch(/[\u0000-\u001f\u007f-\u009f\u2028\u2029]/);
    expect(text).toContain('a\\u009b31m\\u007f\\u2028b\\u001b');
    expect(JSON.parse(text)).toEqual(value);
  });
});
