/**
 * Single-precision data columns: `reJy`, `imJy` (and `wLambda`) are Float32Array, every reader
 * rounds to float32 once, and the CSV writer prints each float32 value with the fewest digits
 * that read back to the same float32 (float32Text). References: IEEE 754-2008 §5.12.2 (nine
 * digits always round-trip binary32) and a brute-force search over all digit counts.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { Rng } from "../../src/random.js";
import { float32Text } from "../../src/vis/float32Text.js";
import { readVisibilities, writeVisibilities } from "../../src/vis/index.js";
import { syntheticVis } from "./synthetic.js";

const dir = mkdtempSync(join(tmpdir(), "arcfringe-vis-f32-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Brute force: the smallest p in 1..9 whose p-digit rounding reads back to x in float32. */
function fewestDigits(x: number): number {
  for (let p = 1; p <= 9; p++) if (Math.fround(Number(x.toPrecision(p))) === x) return p;
  return Infinity;
}

/** Significant digits of a decimal text such as "-1.25e-7", "0.0034" or "497222460000000" (8). */
function significantDigits(text: string): number {
  const mantissa = text.replace(/^-/, "").replace(/e.*$/, "").replace(".", "").replace(/^0+/, "").replace(/0+$/, "");
  return mantissa.length;
}

describe("float32Text", () => {
  it("reads back to the same float32 with the brute-force fewest digits, over 20 000 seeded values across ±10^±30", () => {
    // Exact test: a float32 round trip is bit-for-bit, and the digit count is an integer.
    const rng = new Rng(32);
    let worst = "";
    for (let i = 0; i < 20000; i++) {
      const x = Math.fround((rng.uniform() < 0.5 ? -1 : 1) * rng.uniform() * 10 ** Math.floor(60 * rng.uniform() - 30));
      if (x === 0) continue;
      const text = float32Text(x);
      if (Math.fround(Number(text)) !== x || significantDigits(text) !== fewestDigits(x)) {
        worst = `${x}: got "${text}" (${significantDigits(text)} digits), brute force needs ${fewestDigits(x)}`;
        break;
      }
    }
    expect(worst).toBe("");
  });

  it("prints the float32 nearest to 0.3 as 0.3 and to 1/3 as 0.33333334", () => {
    // 0.3 has one significant digit and Math.fround(0.3) is the float32 nearest it: analytic.
    expect(float32Text(Math.fround(0.3))).toBe("0.3");
    // 1/3 needs 8 digits in float32 (brute force: 0.3333333 reads back to a different float32).
    expect(fewestDigits(Math.fround(1 / 3))).toBe(8);
    expect(float32Text(Math.fround(1 / 3))).toBe("0.33333334");
  });

  it("prints a double that is not a float32 in full, and 0, −0, NaN as JavaScript does", () => {
    // 0.1 is not representable in float32, so shortening would lose digits: analytic.
    expect(float32Text(0.1)).toBe("0.1");
    expect(float32Text(0.1 + 2 ** -40)).toBe(String(0.1 + 2 ** -40));
    expect(float32Text(0)).toBe("0");
    expect(float32Text(-0)).toBe("0");
    expect(float32Text(NaN)).toBe("NaN");
  });
});

describe("float32 data columns", () => {
  it("readVisibilities(CSV) rounds re_jy, im_jy to float32 once and writeVisibilities prints them back as typed", async () => {
    const p = join(dir, "typed.csv");
    writeFileSync(
      p,
      "u_lambda,v_lambda,re_jy,im_jy,weight\n" +
        "1000.5,-2000.25,0.3,-1.1,2\n" +
        "-3000,4000,123.4567,1e-7,1\n",
    );
    const { vis } = await readVisibilities(p);
    expect(vis.reJy).toBeInstanceOf(Float32Array);
    expect(vis.imJy).toBeInstanceOf(Float32Array);
    // Each value is the float32 nearest to the decimal in the file (exact, by definition of fround).
    expect(Array.from(vis.reJy)).toEqual([Math.fround(0.3), Math.fround(123.4567)]);
    expect(Array.from(vis.imJy)).toEqual([Math.fround(-1.1), Math.fround(1e-7)]);
    // u, v, weight stay double: 2000.25 and 1000.5 are exact in both, so check a value that is not.
    const q = join(dir, "back.csv");
    await writeVisibilities(q, vis);
    const rows = readFileSync(q, "utf8").split("\n").filter((l) => l !== "" && !l.startsWith("#"));
    const head = rows[0].split(",");
    const cell = (r: number, name: string): string => rows[r].split(",")[head.indexOf(name)];
    // Each text in the file is already the shortest for its float32 (brute force: one digit fewer
    // reads back to a different float32), so the writer reproduces it exactly.
    expect([cell(1, "re_jy"), cell(1, "im_jy"), cell(2, "re_jy"), cell(2, "im_jy")]).toEqual(["0.3", "-1.1", "123.4567", "1e-7"]);
  });

  it("UVFITS, HDF5 and CSV readers all return Float32Array data columns (and Float64Array u, v, weight)", async () => {
    const vis = syntheticVis({ seed: 3, nAnt: 4, nTimes: 2, freqHz: [100e9], correlations: [-1, -2] });
    for (const ext of [".uvfits", ".h5", ".csv"]) {
      const p = join(dir, `cols${ext}`);
      await writeVisibilities(p, vis);
      const { vis: back } = await readVisibilities(p);
      const types = [back.reJy, back.imJy, back.wLambda, back.uLambda, back.vLambda, back.weight, back.timeS].map((a) => a.constructor.name);
      expect(types, ext).toEqual(["Float32Array", "Float32Array", "Float32Array", "Float64Array", "Float64Array", "Float64Array", "Float64Array"]);
    }
  });
});
