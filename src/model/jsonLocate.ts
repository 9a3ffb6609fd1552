/**
 * Find the offset of the first syntax error in a JSON text (RFC 8259 grammar), for messages
 * with line and column when the engine's own message gives no position. Only called after
 * JSON.parse has failed, so speed does not matter; nesting deeper than 10 000 levels gives up.
 * Reference: RFC 8259 §2–7 (the JSON grammar).
 */

const MAX_DEPTH = 10_000;

class Scan {
  pos = 0;
  constructor(readonly text: string) {}

  ws(): void {
    while (this.pos < this.text.length && " \t\n\r".includes(this.text[this.pos])) this.pos++;
  }

  value(depth: number): boolean {
    if (depth > MAX_DEPTH) return false;
    this.ws();
    const ch = this.text[this.pos];
    if (ch === "{") return this.object(depth);
    if (ch === "[") return this.array(depth);
    if (ch === '"') return this.string();
    if (ch === "-" || (ch >= "0" && ch <= "9")) return this.number();
    for (const word of ["true", "false", "null"]) {
      if (this.text.startsWith(word, this.pos)) {
        this.pos += word.length;
        return true;
      }
    }
    return false;
  }

  object(depth: number): boolean {
    this.pos++; // {
    this.ws();
    if (this.text[this.pos] === "}") {
      this.pos++;
      return true;
    }
    for (;;) {
      this.ws();
      if (this.text[this.pos] !== '"' || !this.string()) return false;
      this.ws();
      if (this.text[this.pos] !== ":") return false;
      this.pos++;
      if (!this.value(depth + 1)) return false;
      this.ws();
      const ch = this.text[this.pos];
      if (ch === "}") {
        this.pos++;
        return true;
      }
      if (ch !== ",") return false;
      this.pos++;
    }
  }

  array(depth: number): boolean {
    this.pos++; // [
    this.ws();
    if (this.text[this.pos] === "]") {
      this.pos++;
      return true;
    }
    for (;;) {
      if (!this.value(depth + 1)) return false;
      this.ws();
      const ch = this.text[this.pos];
      if (ch === "]") {
        this.pos++;
        return true;
      }
      if (ch !== ",") return false;
      this.pos++;
    }
  }

  string(): boolean {
    this.pos++; // opening quote
    while (this.pos < this.text.length) {
      const c = this.text.charCodeAt(this.pos);
      if (c === 0x22) {
        this.pos++;
        return true;
      }
      if (c < 0x20) return false; // control characters must be escaped
      if (c === 0x5c) {
        const e = this.text[this.pos + 1];
        if (e === "u") {
          if (!/^[0-9a-fA-F]{4}$/.test(this.text.slice(this.pos + 2, this.pos + 6))) return false;
          this.pos += 6;
          continue;
        }
        if (e === undefined || !'"\\/bfnrt'.includes(e)) return false;
        this.pos += 2;
        continue;
      }
      this.pos++;
    }
    return false;
  }

  number(): boolean {
    const m = /^-?(0|[1-9][0-9]*)(\.[0-9]+)?([eE][+-]?[0-9]+)?/.exec(this.text.slice(this.pos, this.pos + 400));
    if (!m) return false;
    this.pos += m[0].length;
    return true;
  }
}

/** Offset of the first JSON syntax error, or undefined if none was found (or nesting too deep). */
export function locateJsonError(text: string): number | undefined {
  const s = new Scan(text);
  try {
    if (!s.value(0)) return s.pos;
    s.ws();
    return s.pos < text.length ? s.pos : undefined;
  } catch {
    return undefined; // stack exhausted on pathological nesting: no position
  }
}
