/**
 * FITS header parsing: 2880-byte blocks of 80-character cards up to `END`, read from an open
 * file descriptor without loading the data that follows.
 *
 * Real files carry non-standard cards (unquoted sexagesimal strings, Fortran `D` exponents,
 * unbalanced quotes, stray bytes). Such cards are repaired when the intent is clear or skipped
 * otherwise; every repair is recorded as a note, never thrown, because the cards that matter
 * for visibilities are almost always standard.
 *
 * Reference: FITS Standard 4.0 (Pence et al. 2010, A&A 524, A42, §4: header cards and values).
 */
import { readSync } from "node:fs";
import { InputError } from "../errors.js";

/** FITS block size [bytes]. */
export const FITS_BLOCK = 2880;
const CARD = 80;
/** Keep at most this many notes per header, then summarise, so a garbage file cannot flood the report. */
const MAX_NOTES = 20;

export type CardValue = string | number | boolean;

/** One parsed header: keywords in order, first occurrence wins for `get`. */
export class FitsHeader {
  readonly keywords: string[] = [];
  private readonly values = new Map<string, CardValue>();
  readonly notes: string[] = [];
  private suppressedNotes = 0;

  constructor(
    /** File name, for messages. */
    readonly fileName: string,
    /** Byte offset of the header in the file. */
    readonly offset: number,
  ) {}

  set(key: string, value: CardValue): void {
    this.keywords.push(key);
    if (!this.values.has(key)) this.values.set(key, value);
  }

  has(key: string): boolean {
    return this.values.has(key);
  }

  get(key: string): CardValue | undefined {
    return this.values.get(key);
  }

  /** A numeric card, or `fallback` when absent; throws InputError when present but not a number. */
  num(key: string, fallback?: number): number {
    const v = this.values.get(key);
    if (v === undefined) {
      if (fallback !== undefined) return fallback;
      throw new InputError(`${this.fileName}: header card ${key} is missing; a valid UVFITS file needs it`);
    }
    if (typeof v !== "number" || !Number.isFinite(v)) {
      throw new InputError(`${this.fileName}: header card ${key} is ${JSON.stringify(v)}; expected a finite number`);
    }
    return v;
  }

  /** A non-negative integer card (NAXISn, PCOUNT, GCOUNT). */
  int(key: string, fallback?: number): number {
    const v = this.num(key, fallback);
    if (!Number.isInteger(v) || v < 0) {
      throw new InputError(`${this.fileName}: header card ${key} is ${v}; expected a non-negative integer`);
    }
    return v;
  }

  /** A string card, trimmed and upper-cased, or "" when absent or not a string. */
  str(key: string): string {
    const v = this.values.get(key);
    return typeof v === "string" ? v.trim().toUpperCase() : "";
  }

  note(text: string): void {
    if (this.notes.length < MAX_NOTES) this.notes.push(`${this.fileName}: ${text}`);
    else this.suppressedNotes++;
  }

  /** Notes plus a summary line when some were suppressed. */
  allNotes(): string[] {
    return this.suppressedNotes > 0
      ? [...this.notes, `${this.fileName}: ${this.suppressedNotes} more header cards repaired or skipped`]
      : this.notes.slice();
  }
}

const KEYWORD_RE = /^[A-Z0-9_-]*$/;
const COMMENTARY = new Set(["COMMENT", "HISTORY", ""]);

/**
 * Parse one 80-character card into `header`. Returns true when it is the END card.
 * Non-standard values are repaired or skipped with a note.
 */
export function parseCard(card: string, header: FitsHeader, cardIndex: number): boolean {
  const keyword = card.slice(0, 8).trimEnd();
  if (keyword === "END" && card.slice(8).trim() === "") return true;
  if (keyword === "END") {
    header.note(`card ${cardIndex + 1}: END followed by text; treated as END`);
    return true;
  }
  if (!KEYWORD_RE.test(keyword) || keyword.includes(" ")) {
    header.note(`card ${cardIndex + 1}: keyword ${JSON.stringify(keyword)} is not valid FITS; card skipped`);
    return false;
  }
  if (COMMENTARY.has(keyword) || card.slice(8, 10) !== "= ") return false;
  const rest = card.slice(10);
  const value = parseValue(rest, keyword, header, cardIndex);
  if (value !== undefined) header.set(keyword, value);
  return false;
}

function parseValue(rest: string, keyword: string, header: FitsHeader, cardIndex: number): CardValue | undefined {
  const trimmed = rest.trimStart();
  if (trimmed.startsWith("'")) {
    // String: '' inside is an escaped quote; the closing quote ends the value.
    let out = "";
    let i = 1;
    for (; i < trimmed.length; i++) {
      const c = trimmed[i];
      if (c === "'") {
        if (trimmed[i + 1] === "'") {
          out += "'";
          i++;
          continue;
        }
        break;
      }
      out += c;
    }
    if (i >= trimmed.length) {
      // Unbalanced quote: keep the text up to a comment slash, which is what the writer meant.
      const slash = out.indexOf(" /");
      const repaired = (slash >= 0 ? out.slice(0, slash) : out).trimEnd();
      header.note(`card ${cardIndex + 1} (${keyword}): unbalanced quote; read as ${JSON.stringify(repaired)}`);
      return repaired;
    }
    const after = trimmed.slice(i + 1).trimStart();
    if (after !== "" && !after.startsWith("/")) {
      header.note(`card ${cardIndex + 1} (${keyword}): text after the closing quote ignored`);
    }
    return out.trimEnd();
  }
  const slash = trimmed.indexOf("/");
  const token = (slash >= 0 ? trimmed.slice(0, slash) : trimmed).trim();
  if (token === "") return undefined;
  if (token === "T") return true;
  if (token === "F") return false;
  const asNumber = parseFitsNumber(token);
  if (asNumber !== undefined) {
    if (/[dD]/.test(token)) {
      header.note(`card ${cardIndex + 1} (${keyword}): Fortran exponent in ${token}; read as ${asNumber}`);
    }
    return asNumber;
  }
  if (/[^\x20-\x7e]/.test(token)) {
    header.note(`card ${cardIndex + 1} (${keyword}): non-ASCII value; card skipped`);
    return undefined;
  }
  header.note(`card ${cardIndex + 1} (${keyword}): unquoted string ${JSON.stringify(token)}; kept as text`);
  return token;
}

const NUMBER_RE = /^[+-]?(\d+\.?\d*|\.\d+)([eEdD][+-]?\d+)?$/;

/** A FITS integer or real (Fortran `D` exponent accepted), or undefined. */
export function parseFitsNumber(token: string): number | undefined {
  if (!NUMBER_RE.test(token)) return undefined;
  const v = Number(token.replace(/[dD]/, "e"));
  return Number.isFinite(v) ? v : undefined;
}

/**
 * Read the header that starts at `offset` (a multiple of 2880) in an open file.
 * @returns the header and the byte offset of its data (the block after END).
 * Throws InputError when END is not found before the end of the file.
 */
export function readFitsHeader(
  fd: number,
  offset: number,
  fileSize: number,
  fileName: string,
): { header: FitsHeader; dataOffset: number } {
  const header = new FitsHeader(fileName, offset);
  const block = Buffer.allocUnsafe(FITS_BLOCK);
  let pos = offset;
  let cardIndex = 0;
  for (;;) {
    if (pos + FITS_BLOCK > fileSize) {
      throw new InputError(
        `${fileName}: header at byte ${offset} has no END card before the end of the file ` +
          `(${fileSize} bytes); the file is truncated or not FITS`,
      );
    }
    const n = readSync(fd, block, 0, FITS_BLOCK, pos);
    if (n !== FITS_BLOCK) {
      throw new InputError(`${fileName}: could read only ${n} of ${FITS_BLOCK} bytes at byte ${pos}; the file is truncated`);
    }
    pos += FITS_BLOCK;
    for (let c = 0; c < FITS_BLOCK; c += CARD) {
      const card = block.toString("latin1", c, c + CARD);
      if (parseCard(card, header, cardIndex++)) return { header, dataOffset: pos };
    }
  }
}

/** Format one header card (keyword, value, comment) as 80 characters. Strings are quoted. */
export function formatCard(keyword: string, value?: CardValue, comment?: string): string {
  let card: string;
  if (value === undefined) {
    card = keyword.padEnd(8) + (comment ?? "");
  } else {
    let v: string;
    if (typeof value === "string") v = `'${value.replace(/'/g, "''").padEnd(8)}'`.padEnd(20);
    else if (typeof value === "boolean") v = (value ? "T" : "F").padStart(20);
    else v = formatNumber(value).padStart(20);
    card = `${keyword.padEnd(8)}= ${v}` + (comment ? ` / ${comment}` : "");
  }
  if (card.length > CARD) card = card.slice(0, CARD);
  return card.padEnd(CARD);
}

function formatNumber(x: number): string {
  if (Number.isInteger(x) && Math.abs(x) < 1e15) return String(x);
  // 17 significant digits round-trip a double; FITS wants an E exponent with a decimal point.
  let s = x.toPrecision(17).toUpperCase();
  if (!s.includes(".") && !s.includes("E")) s += ".0";
  if (s.includes("E") && !s.slice(0, s.indexOf("E")).includes(".")) s = s.replace("E", ".0E");
  return s;
}

/** Join cards into whole 2880-byte blocks, with END and blank padding. */
export function headerBytes(cards: string[]): Buffer {
  const all = [...cards, "END".padEnd(CARD)].join("");
  const padded = Math.ceil(all.length / FITS_BLOCK) * FITS_BLOCK;
  return Buffer.from(all.padEnd(padded, " "), "latin1");
}
