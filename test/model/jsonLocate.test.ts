/**
 * locateJsonError against the JavaScript engine's JSON.parse (V8, Node ≥ 20), used as the
 * outside reference: on seeded corruptions of a model file, wherever the engine reports
 * "at position N", our offset is N, or (for errors inside a number or escape, where V8 points
 * at the bad character) the start of that token, at most 25 characters before N.
 */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { locateJsonError } from "../../src/model/jsonLocate.js";
import { Rng } from "../../src/random.js";

const base = JSON.stringify(
  JSON.parse(readFileSync(new URL("../../fixtures/models/epl_shear_two_gaussians.json", import.meta.url), "utf8")),
  null,
  2,
);

describe("locateJsonError", () => {
  it("finds no error in valid JSON, and the exact offset of simple ones", () => {
    expect(locateJsonError(base)).toBeUndefined();
    expect(locateJsonError('{"lens": [], "source": [}')).toBe(24);
    expect(locateJsonError('{"a": NaN}')).toBe(6);
    expect(locateJsonError('{"a": 1,}')).toBe(8);
    expect(locateJsonError('{"a": 1} x')).toBe(9);
    expect(locateJsonError("")).toBe(0);
  });
  it("agrees with JSON.parse's reported position on 2000 seeded corruptions", () => {
    const rng = new Rng(5);
    const alphabet = '{}[]:,"0123456789.eE+-NaInfity \n\\/tuef\u0001';
    let compared = 0;
    for (let n = 0; n < 2000; n++) {
      const chars = base.split("");
      const edits = 1 + rng.int(3);
      for (let e = 0; e < edits; e++) {
        const at = rng.int(chars.length);
        const op = rng.int(3);
        if (op === 0) chars.splice(at, 1);
        else if (op === 1) chars.splice(at, 0, alphabet[rng.int(alphabet.length)]);
        else chars[at] = alphabet[rng.int(alphabet.length)];
      }
      const text = chars.join("");
      const mine = locateJsonError(text);
      let engine: string | undefined;
      try {
        JSON.parse(text);
      } catch (err) {
        engine = (err as Error).message;
      }
      if (engine === undefined) {
        expect(mine, `case ${n}: valid JSON flagged`).toBeUndefined();
        continue;
      }
      expect(mine, `case ${n}: ${engine}`).toBeDefined();
      const m = /at position (\d+)/.exec(engine);
      if (!m) continue;
      const pos = Number(m[1]);
      expect((mine as number) <= pos && pos - (mine as number) <= 25, `case ${n}: ours ${mine}, engine ${pos} (${engine})`).toBe(true);
      compared++;
    }
    expect(compared).toBeGreaterThan(1000);
  });
});
