// FITS header parsing (FITS Standard 4.0, section 4): 80-character cards in 2880-byte blocks up
// to END; values typed as string, logical, integer, float, complex or undefined; CONTINUE long
// strings (section 4.2.1.2); COMMENT, HISTORY and blank-keyword cards kept as commentary.
// Linear in the header's length (a long string's pieces are joined once, at its end), and a
// header may hold at most MAX_HEADER_CARDS cards: a damaged or hostile file cannot tie the
// reader up.

import { InputError } from '../inputError.js';

export const CARD_LENGTH = 80;
export const BLOCK_LENGTH = 2880;
/**
 * Most cards a header may hold before END (CONTINUE and commentary cards count). Headers of
 * solar archive frames hold some hundreds; 10000 cards are 278 blocks, 800 kB.
 */
export const MAX_HEADER_CARDS = 10_000;

export type FitsValue = string | number | boolean;

export type FitsValueKind = 'string' | 'logical' | 'integer' | 'float' | 'complex' | 'undefined' | 'commentary' | 'unparsed';

export interface FitsCard {
  /** Keyword, trimmed and upper case as written (columns 1-8). */
  readonly key: string;
  /** Typed value; complex values are kept as their text "(re, im)". */
  readonly value?: FitsValue;
  readonly kind: FitsValueKind;
  /** The value text as written (for integers beyond 2^53, parse it with BigInt). */
  readonly text?: string;
  readonly comment?: string;
}

export interface FitsHeader {
  readonly cards: readonly FitsCard[];
  /** First card index of each valued keyword. */
  readonly index: ReadonlyMap<string, number>;
  /** Number of header bytes, a whole number of 2880-byte blocks. */
  readonly byteLength: number;
}

const INTEGER = /^[+-]?\d+$/;
const FLOAT = /^[+-]?(\d+\.?\d*|\.\d+)([ED][+-]?\d+)?$/;
const COMPLEX = /^\(\s*[^,]+,\s*[^)]+\)$/;

function cardText(bytes: Uint8Array, start: number): string | undefined {
  let s = '';
  for (let i = 0; i < CARD_LENGTH; i++) {
    const c = bytes[start + i];
    if (c < 32 || c > 126) return undefined;
    s += String.fromCharCode(c);
  }
  return s;
}

/** Splits the value field (after "= ") into a string literal or a bare token, and a comment. */
function splitValue(field: string): { kind: FitsValueKind; value?: FitsValue; text: string; comment?: string } {
  let i = 0;
  while (i < field.length && field[i] === ' ') i++;
  if (field[i] === "'") {
    let s = '';
    let j = i + 1;
    let closed = false;
    while (j < field.length) {
      if (field[j] === "'") {
        if (field[j + 1] === "'") { s += "'"; j += 2; continue; }
        closed = true;
        j++;
        break;
      }
      s += field[j++];
    }
    const rest = field.slice(j);
    const slash = rest.indexOf('/');
    const comment = slash >= 0 ? rest.slice(slash + 1).trim() : undefined;
    if (!closed) return { kind: 'unparsed', text: field.trim() };
    // Trailing spaces in a string value are not significant (section 4.2.1.1).
    const value = s.replace(/ +$/, '');
    return { kind: 'string', value, text: value, ...(comment !== undefined && { comment }) };
  }
  const slash = field.indexOf('/', i);
  const token = (slash >= 0 ? field.slice(i, slash) : field.slice(i)).trim();
  const comment = slash >= 0 ? field.slice(slash + 1).trim() : undefined;
  const c = comment !== undefined ? { comment } : {};
  if (token === '') return { kind: 'undefined', text: '', ...c };
  if (token === 'T' || token === 'F') return { kind: 'logical', value: token === 'T', text: token, ...c };
  if (INTEGER.test(token)) return { kind: 'integer', value: Number(token), text: token, ...c };
  if (FLOAT.test(token)) return { kind: 'float', value: Number(token.replace('D', 'E')), text: token, ...c };
  if (COMPLEX.test(token)) return { kind: 'complex', value: token, text: token, ...c };
  return { kind: 'unparsed', text: token, ...c };
}

/**
 * Parses the header starting at byte `start`. Throws InputError (naming `source` and `where`,
 * e.g. "HDU 2") when END is missing before the bytes run out or a card holds non-ASCII bytes.
 */
export function parseHeader(bytes: Uint8Array, start: number, source: string, where: string, maxCards = MAX_HEADER_CARDS): FitsHeader {
  const cards: FitsCard[] = [];
  const index = new Map<string, number>();
  let pos = start;
  let ended = false;
  let count = 0;
  // A long string being continued: its card's index and its pieces so far (joined once, at the end).
  let long: { at: number; parts: string[]; comment?: string } | undefined;
  const endLong = () => {
    if (!long) return;
    const card = cards[long.at];
    const value = long.parts.join('');
    cards[long.at] = { ...card, value, text: value, ...(long.comment !== undefined && { comment: long.comment }) };
    long = undefined;
  };
  while (!ended) {
    if (pos + BLOCK_LENGTH > bytes.length) {
      const problem = pos >= bytes.length
        ? 'header has no END card before the end of the file'
        : `header block at byte ${pos} is truncated (${bytes.length - pos} of 2880 bytes present) and END was not found`;
      throw new InputError(source, `${where} header`, problem);
    }
    for (let c = 0; c < BLOCK_LENGTH / CARD_LENGTH && !ended; c++) {
      const at = pos + c * CARD_LENGTH;
      const text = cardText(bytes, at);
      if (text === undefined) {
        throw new InputError(source, `${where} header`, cards.length > 0
          ? `no END card before byte ${at}, where the header runs into bytes that are not printable ASCII`
          : `card at byte ${at} holds a byte that is not printable ASCII (not a FITS header)`);
      }
      const key = text.slice(0, 8).trimEnd();
      if (key === 'END') { ended = true; break; }
      if (++count > maxCards) {
        throw new InputError(source, `${where} header`, `has more than ${maxCards} cards before END: not a frame header we read (the bound keeps a damaged or hostile file from tying up the reader)`);
      }
      if (key === 'CONTINUE') {
        const prev = cards[cards.length - 1];
        const v = splitValue(text.slice(8));
        if (v.kind === 'string' && prev && prev.kind === 'string' && typeof prev.value === 'string') {
          // The string continued so far ends with '&' (the last piece does): drop it, add the piece.
          if (!long && prev.value.endsWith('&')) long = { at: cards.length - 1, parts: [prev.value] };
          const parts = long?.at === cards.length - 1 ? long.parts : undefined;
          if (parts && parts[parts.length - 1].endsWith('&')) {
            parts[parts.length - 1] = parts[parts.length - 1].slice(0, -1);
            parts.push(v.value as string);
            if (v.comment !== undefined) long!.comment = v.comment;
            continue;
          }
        }
        endLong();
        cards.push({ key, kind: 'commentary', text: text.slice(8).trimEnd() });
        continue;
      }
      endLong();
      if (text.slice(8, 10) !== '= ' || key === 'COMMENT' || key === 'HISTORY' || key === '') {
        cards.push({ key, kind: 'commentary', text: text.slice(8).trimEnd() });
        continue;
      }
      const v = splitValue(text.slice(10));
      if (!index.has(key)) index.set(key, cards.length);
      cards.push({ key, kind: v.kind, text: v.text, ...(v.value !== undefined && { value: v.value }), ...(v.comment !== undefined && { comment: v.comment }) });
    }
    pos += BLOCK_LENGTH;
  }
  endLong();
  return { cards, index, byteLength: pos - start };
}

/** The card of a valued keyword, or undefined. */
export function headerCard(header: FitsHeader, key: string): FitsCard | undefined {
  const i = header.index.get(key.toUpperCase());
  return i === undefined ? undefined : header.cards[i];
}

/** The value of a keyword, or undefined when absent or without a value. */
export function headerValue(header: FitsHeader, key: string): FitsValue | undefined {
  return headerCard(header, key)?.value;
}

/** A string value (trailing spaces removed); undefined when absent; InputError when not a string. */
export function headerString(header: FitsHeader, key: string, source: string, where: string): string | undefined {
  const card = headerCard(header, key);
  if (card === undefined || card.kind === 'undefined') return undefined;
  if (card.kind !== 'string') throw new InputError(source, `${where} ${key}`, `must be a string, got ${card.text ?? card.kind}`);
  return card.value as string;
}

/** A real value; undefined when absent; InputError when not a number. */
export function headerNumber(header: FitsHeader, key: string, source: string, where: string): number | undefined {
  const card = headerCard(header, key);
  if (card === undefined || card.kind === 'undefined') return undefined;
  if (card.kind !== 'integer' && card.kind !== 'float') {
    throw new InputError(source, `${where} ${key}`, `must be a number, got ${card.kind === 'string' ? `'${card.value}'` : card.text ?? card.kind}`);
  }
  const v = card.value as number;
  if (!Number.isFinite(v)) throw new InputError(source, `${where} ${key}`, `is not a finite number: ${card.text}`);
  return v;
}

/** An integer value; undefined when absent; InputError when not an integer. */
export function headerInteger(header: FitsHeader, key: string, source: string, where: string): number | undefined {
  const card = headerCard(header, key);
  if (card === undefined || card.kind === 'undefined') return undefined;
  if (card.kind !== 'integer') throw new InputError(source, `${where} ${key}`, `must be an integer, got ${card.kind === 'string' ? `'${card.value}'` : card.text ?? card.kind}`);
  return card.value as number;
}

/** An integer keyword that must be present. */
export function requiredInteger(header: FitsHeader, key: string, source: string, where: string): number {
  const v = headerInteger(header, key, source, where);
  if (v === undefined) throw new InputError(source, `${where} ${key}`, 'is missing (required keyword)');
  return v;
}

/** A logical value; undefined when absent; InputError when not T or F. */
export function headerLogical(header: FitsHeader, key: string, source: string, where: string): boolean | undefined {
  const card = headerCard(header, key);
  if (card === undefined || card.kind === 'undefined') return undefined;
  if (card.kind !== 'logical') throw new InputError(source, `${where} ${key}`, `must be T or F, got ${card.text ?? card.kind}`);
  return card.value as boolean;
}

/** Keywords with values as a plain record (first occurrence wins), for provenance. */
export function headerRecord(header: FitsHeader): Record<string, FitsValue> {
  const out: Record<string, FitsValue> = {};
  for (const [key, i] of header.index) {
    const v = header.cards[i].value;
    if (v !== undefined) out[key] = v;
  }
  return out;
}
