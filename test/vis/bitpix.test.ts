/**
 * readUvfits with BITPIX −64 and 32 (scaled integers): the same visibilities re-encoded from a
 * BITPIX −32 file. FITS Standard 4.0 §5: physical = BZERO + BSCALE·stored for the data array;
 * random parameters use PSCALn/PZEROn (§6).
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { readVisibilities, writeVisibilities } from "../../src/vis/index.js";
import { syntheticVis } from "./synthetic.js";

const dir = mkdtempSync(join(tmpdir(), "arcfringe-vis-bitpix-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Re-encode the primary data of a BITPIX −32 UVFITS written by writeUvfits (6 parameters). */
function recode(src: Buffer, bitpix: -64 | 32, pscal: number[], bscale: number): Buffer {
  let end = 0;
  while (src.toString("latin1", end, end + 8) !== "END     ") end += 80;
  const headLen = Math.ceil((end + 80) / 2880) * 2880;
  const card = (k: string): number => {
    for (let c = 0; c < end; c += 80) if (src.toString("latin1", c, c + 8).trimEnd() === k) return Number(src.toString("latin1", c + 10, c + 30));
    throw new Error(k);
  };
  const gcount = card("GCOUNT");
  const perGroup = 6 + 3 * card("NAXIS3") * card("NAXIS4") * card("NAXIS5");
  const dataLen = gcount * perGroup * 4;
  const tables = src.subarray(headLen + Math.ceil(dataLen / 2880) * 2880);
  let head = src.toString("latin1", 0, end);
  const set = (k: string, v: number): void => {
    const re = new RegExp(`${k.padEnd(8)}= .{20}`);
    head = re.test(head) ? head.replace(re, `${k.padEnd(8)}= ${String(v).padStart(20)}`) : head + `${k.padEnd(8)}= ${String(v).padStart(20)}`.padEnd(80);
  };
  set("BITPIX", bitpix);
  set("BSCALE", bscale);
  pscal.forEach((s, i) => set(`PSCAL${i + 1}`, s));
  const bytesPer = bitpix === -64 ? 8 : 4;
  const data = Buffer.alloc(Math.ceil((gcount * perGroup * bytesPer) / 2880) * 2880);
  for (let i = 0; i < gcount * perGroup; i++) {
    const x = src.readFloatBE(headLen + 4 * i);
    const j = i % perGroup;
    if (bitpix === -64) data.writeDoubleBE(x, 8 * i);
    else data.writeInt32BE(Math.round(j < 6 ? x / pscal[j] : x / bscale), 4 * i);
  }
  const h = Buffer.from((head + "END".padEnd(80)).padEnd(Math.ceil((head.length + 80) / 2880) * 2880, " "), "latin1");
  return Buffer.concat([h, data, tables]);
}

describe("readUvfits with other BITPIX values", () => {
  it("BITPIX −64 gives the same visibilities; BITPIX 32 with PSCAL/BSCALE gives them to the scale step", async () => {
    const vis = syntheticVis({ seed: 41, nAnt: 4, nTimes: 3, freqHz: [1e11, 1.01e11], correlations: [-5, -6] });
    vis.timeS.forEach((_, k) => (vis.timeS[k] = 3600 + Math.floor(k / 24) * 10)); // whole seconds
    await writeVisibilities(join(dir, "f32.uvfits"), vis);
    const src = readFileSync(join(dir, "f32.uvfits"));
    const ref = (await readVisibilities(join(dir, "f32.uvfits"))).vis;

    writeFileSync(join(dir, "f64.uvfits"), recode(src, -64, [1, 1, 1, 1, 1, 1], 1));
    const d = (await readVisibilities(join(dir, "f64.uvfits"))).vis;
    // float32 values widened to float64 exactly → identical.
    expect(Array.from(d.reJy)).toEqual(Array.from(ref.reJy));
    expect(Array.from(d.uLambda)).toEqual(Array.from(ref.uLambda));
    expect(Array.from(d.timeS)).toEqual(Array.from(ref.timeS));

    // Int32 with scales: UU, VV, WW [s] in steps of 1e-15 s, BASELINE 1, both DATEs in steps of
    // 1e-9 day, data in steps of 1e-6 Jy. Errors ≤ half a step (two half steps for the DATE sum).
    const scales = [1e-15, 1e-15, 1e-15, 1, 1e-9, 1e-9];
    writeFileSync(join(dir, "i32.uvfits"), recode(src, 32, scales, 1e-6));
    const q = (await readVisibilities(join(dir, "i32.uvfits"))).vis;
    expect(q.count).toBe(ref.count);
    for (let k = 0; k < q.count; k++) {
      const nu = ref.channelFreqHz[ref.channel[k]];
      expect(Math.abs(q.uLambda[k] - ref.uLambda[k])).toBeLessThanOrEqual(0.5e-15 * nu * 1.0001);
      expect(Math.abs(q.reJy[k] - ref.reJy[k])).toBeLessThanOrEqual(0.5e-6 * 1.0001);
      expect(Math.abs(q.imJy[k] - ref.imJy[k])).toBeLessThanOrEqual(0.5e-6 * 1.0001);
      expect(Math.abs(q.timeS[k] - ref.timeS[k])).toBeLessThanOrEqual(1e-9 * 86400 * 1.0001);
      expect([q.antenna1[k], q.antenna2[k]]).toEqual([ref.antenna1[k], ref.antenna2[k]]);
    }
  });
});
