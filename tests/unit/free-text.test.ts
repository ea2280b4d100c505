/**
 * The one free-text helper of the API (server/lib/input.ts). The refused characters are those
 * Unicode marks as controls (general category Cc: U+0000-U+001F, U+007F-U+009F) and the
 * bidirectional embeddings, overrides and isolates (UAX #9, "Explicit Directional Formatting
 * Characters": U+202A-U+202E, U+2066-U+2069), which the "Trojan Source" paper (Boucher and
 * Anderson, 2021; CVE-2021-42574) used to make text display in another order than it is stored.
 */
import { describe, expect, it } from 'vitest';
import { calendarDate, freeTextProblem, multiLineText, singleLineText } from '../../server/lib/contract';

describe('free text', () => {
  it('refuses every C0 and C1 control character in one-line text, naming it', () => {
    const codes = [...Array(0x20).keys(), ...Array.from({ length: 0x21 }, (_, i) => 0x7f + i)];
    for (const c of codes) {
      const p = freeTextProblem(`ab${String.fromCharCode(c)}cd`, false);
      expect(p, `U+${c.toString(16)}`).toMatch(new RegExp(`U\\+${c.toString(16).toUpperCase().padStart(4, '0')}`));
      expect(p).toMatch(/position 3/);
    }
  });

  it('allows tab and line feed only in multi-line text; CR LF becomes LF, a lone CR is refused', () => {
    expect(freeTextProblem('a\tb\nc', true)).toBeNull();
    expect(freeTextProblem('a\tb', false)).toMatch(/U\+0009/);
    expect(multiLineText().parse('  one\r\ntwo  ')).toBe('one\ntwo');
    expect(multiLineText().safeParse('one\rtwo').success).toBe(false);
    expect(singleLineText().safeParse('one\ntwo').success).toBe(false);
  });

  it('refuses the nine bidirectional formatting characters and keeps ordinary right-to-left text', () => {
    for (const c of [0x202a, 0x202b, 0x202c, 0x202d, 0x202e, 0x2066, 0x2067, 0x2068, 0x2069])
      expect(freeTextProblem(`x${String.fromCharCode(c)}y`, true)).toMatch(/direction-control/);
    expect(freeTextProblem('שלום עולם', false)).toBeNull(); // Hebrew letters are text, not controls
    expect(freeTextProblem('Trägårdh, Świętochłowice, 東京', false)).toBeNull();
    expect(freeTextProblem('emoji 🧪 stays', false)).toBeNull(); // a surrogate pair is fine
    expect(freeTextProblem('half \uD83E text', false)).toMatch(/unpaired/);
  });

  it('chains with the usual length checks', () => {
    const s = singleLineText().min(2).max(5);
    expect(s.safeParse(' ab ').success).toBe(true);
    expect(s.safeParse('a').success).toBe(false);
    expect(s.safeParse('abcdef').success).toBe(false);
  });
});

describe('calendar dates', () => {
  const d = calendarDate('received date');
  it('accepts real dates from 2000-01-01 on and refuses year 0001, impossible days and other formats', () => {
    expect(d.safeParse('2000-01-01').success).toBe(true);
    expect(d.safeParse('2024-02-29').success).toBe(true); // leap day
    expect(d.safeParse('0001-01-01').error?.issues[0].message).toBe(
      'The received date cannot be before 2000-01-01. Check the year.',
    );
    expect(d.safeParse('1999-12-31').success).toBe(false);
    expect(d.safeParse('2023-02-29').success).toBe(false); // not a leap year
    expect(d.safeParse('2026-13-01').success).toBe(false);
    expect(d.safeParse('02.12.2026').success).toBe(false);
    expect(d.safeParse('2200-01-01').success).toBe(false);
  });
});
