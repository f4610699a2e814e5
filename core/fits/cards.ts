// Writing header cards (FITS Standard 4.0, section 4): fixed-format values (right-justified to
// column 30 for numbers and logicals, strings from column 11 padded to 8 characters), long
// strings split over CONTINUE cards, comments after " / " when they fit.

import { InputError } from '../inputError.js';
import type { FitsValue } from './header.js';
import { BLOCK_LENGTH, CARD_LENGTH } from './header.js';

export interface FitsKeyword {
  readonly key: string;
  /** undefined writes COMMENT/HISTORY text cards (key COMMENT or HISTORY) from `comment`. */
  readonly value?: FitsValue;
  readonly comment?: string;
  /** Write an integer-valued number as a float (e.g. CDELT1 = 1.0). */
  readonly float?: boolean;
}

const KEY = /^[A-Z0-9_-]{1,8}$/;

/** Printable ASCII only: anything else becomes '?'. */
function ascii(s: string): string {
  return s.replace(/[^\x20-\x7e]/g, '?');
}

function pad(s: string): string {
  return s.length >= CARD_LENGTH ? s.slice(0, CARD_LENGTH) : s + ' '.repeat(CARD_LENGTH - s.length);
}

/** The shortest text that reads back as exactly this double, in FITS float syntax. */
export function formatFloat(v: number): string {
  if (!Number.isFinite(v)) throw new InputError('FITS writer', 'value', `${v} cannot be written as a FITS number`);
  if (Object.is(v, -0)) return '-0.0';
  let s = String(v).toUpperCase();
  if (!/[.E]/.test(s)) s += '.0';
  else if (/^[+-]?\d+E/.test(s)) s = s.replace('E', '.0E');
  return s;
}

function withComment(card: string, comment: string | undefined): string {
  if (comment === undefined || comment === '') return pad(card);
  const room = CARD_LENGTH - card.length - 3;
  if (room <= 0) return pad(card);
  return pad(`${card} / ${ascii(comment).slice(0, room)}`);
}

function quote(s: string): string {
  return `'${s.replace(/'/g, "''")}'`;
}

/** The 80-character cards for one keyword (several for a long string). */
export function keywordCards(k: FitsKeyword): string[] {
  const key = k.key.toUpperCase();
  if (k.value === undefined) {
    if (key !== 'COMMENT' && key !== 'HISTORY' && key !== '') throw new InputError('FITS writer', key, 'needs a value (only COMMENT and HISTORY cards have none)');
    const text = ascii(k.comment ?? '');
    const cards: string[] = [];
    for (let i = 0; i < Math.max(1, text.length); i += 72) cards.push(pad(`${key.padEnd(8)}${text.slice(i, i + 72)}`));
    return cards;
  }
  if (!KEY.test(key)) throw new InputError('FITS writer', key, 'is not a valid FITS keyword (1-8 of A-Z 0-9 - _)');
  const head = `${key.padEnd(8)}= `;
  const v = k.value;
  if (typeof v === 'boolean') return [withComment(head + (v ? 'T' : 'F').padStart(20), k.comment)];
  if (typeof v === 'number') {
    const text = Number.isInteger(v) && !k.float && Math.abs(v) < 1e20 ? String(v) : formatFloat(v);
    return [withComment(head + text.padStart(20), k.comment)];
  }
  const s = ascii(v);
  const q = quote(s.padEnd(8));
  if (q.length <= 70) return [withComment(head + q, k.comment)];
  // Long string: pieces of up to 67 characters ending in '&', quotes never split (s.4.2.1.2).
  const cards: string[] = [];
  let rest = s;
  let first = true;
  while (rest.length > 0) {
    let take = Math.min(rest.length, 67);
    // Do not end a piece inside a doubled quote: count quoted length.
    while (quote(rest.slice(0, take)).length > 68) take--;
    const piece = rest.slice(0, take);
    rest = rest.slice(take);
    const last = rest.length === 0;
    const body = quote(piece + (last ? '' : '&'));
    const card = (first ? head : 'CONTINUE  ') + body;
    cards.push(last ? withComment(card, k.comment) : pad(card));
    first = false;
  }
  return cards;
}

/** A complete header: the cards, END, and blank padding to a whole 2880-byte block. */
export function headerBytes(keywords: readonly FitsKeyword[]): Uint8Array {
  const cards: string[] = [];
  let longstrn = keywords.some((k) => k.key.toUpperCase() === 'LONGSTRN');
  for (const k of keywords) {
    const c = keywordCards(k);
    // fitsverify warns about CONTINUE without LONGSTRN (a HEASARC recommendation): declare it.
    if (c.length > 1 && typeof k.value === 'string' && !longstrn) {
      cards.push(...keywordCards({ key: 'LONGSTRN', value: 'OGIP 1.0', comment: 'long strings continue over CONTINUE cards' }));
      longstrn = true;
    }
    cards.push(...c);
  }
  cards.push(pad('END'));
  const blocks = Math.ceil((cards.length * CARD_LENGTH) / BLOCK_LENGTH);
  const out = new Uint8Array(blocks * BLOCK_LENGTH).fill(32);
  let at = 0;
  for (const c of cards) {
    for (let i = 0; i < CARD_LENGTH; i++) out[at + i] = c.charCodeAt(i);
    at += CARD_LENGTH;
  }
  return out;
}
