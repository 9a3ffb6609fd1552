/**
 * FITS header cards: formatting (80-character cards in the fixed format) and parsing.
 * Keywords occupy columns 1–8, the value indicator "= " columns 9–10; numbers and logicals are
 * right-justified to column 30, strings start with a quote in column 11 and are padded to at
 * least 8 characters inside the quotes; HISTORY/COMMENT text fills columns 9–80.
 * Headers are printable ASCII (32–126) only: other characters are replaced by '?'.
 * Reference: FITS Standard 4.0 (IAU FITS Working Group 2016), §4.1–4.2.
 */
import { InputError } from "../errors.js";

/** A header value: string, integer, real number or logical. */
export type FitsValue = string | number | boolean;

/** One keyword card. `integer` forces an integer format for a number (e.g. NAXIS, BITPIX). */
export interface FitsCard {
  keyword: string;
  value?: FitsValue;
  comment?: string;
  integer?: boolean;
}

/** A parsed header: keyword cards in order plus the HISTORY and COMMENT texts. */
export interface FitsHeader {
  cards: FitsCard[];
  history: string[];
  comments: string[];
}

export const CARD_LENGTH = 80;
export const BLOCK_LENGTH = 2880;

/** Replace any character outside printable ASCII by '?' (FITS Standard §4.1.1). */
export function toFitsAscii(text: string): string {
  let out = "";
  for (const ch of text) {
    const c = ch.codePointAt(0) ?? 63;
    out += c >= 32 && c <= 126 ? ch : "?";
  }
  return out;
}

/**
 * Format a real number for a card: the shortest text that reads back as the same double, always
 * with a decimal point or exponent so readers take it as real.
 */
export function formatReal(v: number, keyword: string): string {
  if (!Number.isFinite(v)) {
    throw new InputError(`FITS header ${keyword}: value ${v} is not finite; header values must be finite numbers`);
  }
  if (v === 0) return "0.0";
  const a = Math.abs(v);
  let s: string;
  if (a >= 1e-4 && a < 1e15) {
    s = String(v);
    if (!/[.e]/.test(s)) s += ".0";
  } else {
    s = expForm(v.toExponential());
  }
  // Values that need more than 20 characters for an exact round trip are written in free format
  // (FITS Standard §4.2.4 permits it for all but the mandatory keywords, which are integers here).
  return s;
}

function expForm(js: string): string {
  // "1.5e-7" → "1.5E-07"; "1e+20" → "1.0E+20"
  const [mant, exp] = js.split("e");
  const m = mant.includes(".") ? mant : mant + ".0";
  const e = Number(exp);
  const sign = e < 0 ? "-" : "+";
  return `${m}E${sign}${String(Math.abs(e)).padStart(2, "0")}`;
}

/** Format one keyword card as exactly 80 characters. */
export function formatCard(card: FitsCard): string {
  const key = card.keyword.toUpperCase();
  if (!/^[A-Z0-9_-]{1,8}$/.test(key)) {
    throw new InputError(`FITS keyword "${card.keyword}": must be 1–8 characters from A–Z, 0–9, '-', '_'`);
  }
  let text: string;
  if (card.value === undefined) {
    text = key.padEnd(8) + "  " + (card.comment ? toFitsAscii(card.comment) : "");
  } else {
    let valueText: string;
    if (typeof card.value === "string") {
      const s = toFitsAscii(card.value).replace(/'/g, "''");
      if (s.length > 68) {
        throw new InputError(`FITS header ${key}: string of ${s.length} characters is longer than 68; shorten it`);
      }
      valueText = ("'" + s.padEnd(8) + "'").padEnd(20);
    } else if (typeof card.value === "boolean") {
      valueText = (card.value ? "T" : "F").padStart(20);
    } else if (card.integer) {
      if (!Number.isInteger(card.value)) {
        throw new InputError(`FITS header ${key}: expected an integer, got ${card.value}`);
      }
      valueText = String(card.value).padStart(20);
    } else {
      valueText = formatReal(card.value, key).padStart(20);
    }
    text = key.padEnd(8) + "= " + valueText;
    if (card.comment) text += " / " + toFitsAscii(card.comment);
  }
  return text.length > CARD_LENGTH ? text.slice(0, CARD_LENGTH) : text.padEnd(CARD_LENGTH);
}

/** Format HISTORY or COMMENT text as one or more cards (72 characters of text each). */
export function formatTextCards(keyword: "HISTORY" | "COMMENT", text: string): string[] {
  const clean = toFitsAscii(text);
  const out: string[] = [];
  for (let i = 0; i < Math.max(1, clean.length); i += 72) {
    out.push((keyword.padEnd(8) + clean.slice(i, i + 72)).padEnd(CARD_LENGTH));
  }
  return out;
}

/**
 * Parse a header starting at byte `offset`; stops after the END card.
 * @returns the header and the byte offset of the data (a multiple of 2880 past `offset`)
 */
export function parseHeader(bytes: Uint8Array, offset: number, where: string): { header: FitsHeader; dataOffset: number } {
  const header: FitsHeader = { cards: [], history: [], comments: [] };
  let pos = offset;
  for (;;) {
    if (pos + CARD_LENGTH > bytes.length) {
      throw new InputError(`${where}: header has no END card before the end of the file; the file is truncated or not FITS`);
    }
    const card = String.fromCharCode(...bytes.subarray(pos, pos + CARD_LENGTH));
    const cardNo = (pos - offset) / CARD_LENGTH + 1;
    pos += CARD_LENGTH;
    const key = card.slice(0, 8).trim();
    if (key === "END") break;
    if (key === "HISTORY") {
      header.history.push(card.slice(8).trimEnd());
      continue;
    }
    if (key === "COMMENT") {
      header.comments.push(card.slice(8).trimEnd());
      continue;
    }
    if (card.slice(8, 10) !== "= ") {
      if (key !== "") header.cards.push({ keyword: key, comment: card.slice(10).trim() });
      continue;
    }
    const parsed = parseValue(card.slice(10), `${where}: header card ${cardNo} (${key})`);
    header.cards.push({ keyword: key, value: parsed.value, comment: parsed.comment, integer: parsed.integer });
  }
  const headerLen = pos - offset;
  const padded = Math.ceil(headerLen / BLOCK_LENGTH) * BLOCK_LENGTH;
  return { header, dataOffset: offset + padded };
}

function parseValue(field: string, where: string): { value?: FitsValue; comment?: string; integer?: boolean } {
  const t = field.trimStart();
  if (t.startsWith("'")) {
    // A doubled quote inside a string is a literal quote.
    let s = "";
    let i = 1;
    for (; i < t.length; i++) {
      if (t[i] === "'") {
        if (t[i + 1] === "'") {
          s += "'";
          i++;
        } else break;
      } else s += t[i];
    }
    if (i >= t.length) throw new InputError(`${where}: string value has no closing quote; fix the header card`);
    const rest = t.slice(i + 1);
    const slash = rest.indexOf("/");
    return { value: s.trimEnd(), comment: slash >= 0 ? rest.slice(slash + 1).trim() : undefined };
  }
  const slash = t.indexOf("/");
  const token = (slash >= 0 ? t.slice(0, slash) : t).trim();
  const comment = slash >= 0 ? t.slice(slash + 1).trim() : undefined;
  if (token === "") return { comment };
  if (token === "T" || token === "F") return { value: token === "T", comment };
  if (/^[+-]?\d+$/.test(token)) return { value: Number(token), comment, integer: true };
  const num = Number(token.replace(/[dD]/, "E"));
  if (!Number.isFinite(num)) {
    throw new InputError(`${where}: value "${token}" is not a number, string or logical; fix the header card`);
  }
  return { value: num, comment };
}

/** Value of `keyword` in a parsed header, or undefined. */
export function headerValue(header: FitsHeader, keyword: string): FitsValue | undefined {
  const key = keyword.toUpperCase();
  for (const c of header.cards) if (c.keyword === key) return c.value;
  return undefined;
}

/** Numeric value of `keyword`, `fallback` when absent; InputError when present but not a number. */
export function headerNumber(header: FitsHeader, keyword: string, where: string, fallback?: number): number {
  const v = headerValue(header, keyword);
  if (v === undefined) {
    if (fallback !== undefined) return fallback;
    throw new InputError(`${where}: header keyword ${keyword} is missing; it is required here`);
  }
  if (typeof v !== "number") {
    throw new InputError(`${where}: header keyword ${keyword} is ${JSON.stringify(v)}; expected a number`);
  }
  return v;
}

/** String value of `keyword`, or undefined when absent or not a string. */
export function headerString(header: FitsHeader, keyword: string): string | undefined {
  const v = headerValue(header, keyword);
  return typeof v === "string" ? v : undefined;
}
