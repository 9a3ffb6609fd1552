/**
 * Bad input to the diagnostic and data commands: exit 2, one clear stderr line (where — what —
 * what to do, STYLE.md §6), no stack trace, and no output left behind (DESIGN.md exit codes).
 */
import { existsSync, readdirSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { SHARED_DIR } from "../helpers.js";
import { cleanScratch, expectInputError, runCli, scratch, smallObservation, writeJson } from "./cliHelpers.js";

const REFERENCE = join(SHARED_DIR, "data", "reference", "point_1E_0p5N.uvfits");
const HEADER = "u_lambda,v_lambda,re_jy,im_jy,weight";

afterAll(cleanScratch);

describe("bad input → exit 2, one line, nothing written", () => {
  let dir = "";
  let obs = "";
  let sky = "";
  beforeAll(() => {
    dir = scratch("bad");
    obs = smallObservation(dir);
    sky = writeJson(join(dir, "sky.json"), { lens: [], source: [{ type: "point_source", flux: 0.01, x: 0, y: 0 }] });
    writeFileSync(join(dir, "text.uvfits"), "this is not a FITS file\n".repeat(200));
    writeFileSync(join(dir, "no-weight.csv"), "u_lambda,v_lambda,re_jy,im_jy\n1000,2000,0.1,0\n");
    writeFileSync(join(dir, "bad-cell.csv"), `# a comment line\n${HEADER}\n1000,2000,0.1,0,1\n1500,2500,0.1,abc,1\n`);
    writeFileSync(join(dir, "all-flagged.csv"), `${HEADER}\n1000,2000,0.1,0,0\n1500,2500,0.1,0,-1\n`);
  });

  const cases: Array<[string, () => string[], RegExp, () => string]> = [
    ["inspect: missing file", () => ["inspect", join(dir, "nope.uvfits")], /nope\.uvfits: file not found/, () => ""],
    ["inspect: a text file named .uvfits", () => ["inspect", join(dir, "text.uvfits")], /text\.uvfits: .*not a FITS file/, () => ""],
    ["inspect: CSV without the weight column", () => ["inspect", join(dir, "no-weight.csv")], /no-weight\.csv line 1: missing required column weight/, () => ""],
    ["inspect: CSV with a non-numeric cell names the line", () => ["inspect", join(dir, "bad-cell.csv")], /bad-cell\.csv line 4: im_jy is "abc"/, () => ""],
    ["inspect: every row flagged", () => ["inspect", join(dir, "all-flagged.csv"), "--out", join(dir, "o1")], /all-flagged\.csv: no usable visibilities/, () => join(dir, "o1")],
    ["image: --robust 3", () => ["image", REFERENCE, "--out", join(dir, "o2"), "--robust", "3"], /--robust 3: must lie in \[-2, 2\].*try --robust 0\.5/, () => join(dir, "o2")],
    ["image: --cell -1", () => ["image", REFERENCE, "--out", join(dir, "o3"), "--cell", "-1"], /--cell -1: must lie in \[0, inf\]/, () => join(dir, "o3")],
    ["image: --cell 0", () => ["image", REFERENCE, "--out", join(dir, "o4"), "--cell", "0"], /--cell 0: pixel size must be a positive number/, () => join(dir, "o4")],
    ["image: odd --size", () => ["image", REFERENCE, "--out", join(dir, "o5"), "--size", "101"], /--size 101: image size must be an even integer/, () => join(dir, "o5")],
    ["image: --weighting robust", () => ["image", REFERENCE, "--out", join(dir, "o6"), "--weighting", "robust"], /--weighting robust: expected one of natural, uniform, briggs/, () => join(dir, "o6")],
    ["image: no --out", () => ["image", REFERENCE], /--out <dir> is required/, () => ""],
    ["image: a cell too coarse for a beam fit", () => ["image", REFERENCE, "--out", join(dir, "o7"), "--size", "64", "--cell", "2"], /beam fit: .*smaller cell/, () => join(dir, "o7")],
    ["simulate: no --config", () => ["simulate", "--sky", sky, "--out", join(dir, "s1.uvfits")], /--config is required/, () => join(dir, "s1.uvfits")],
    ["simulate: unknown output extension", () => ["simulate", "--sky", sky, "--config", obs, "--out", join(dir, "s2.txt")], /--out .*s2\.txt: cannot tell the format from the extension/, () => join(dir, "s2.txt")],
    ["simulate: --products bogus", () => ["simulate", "--sky", sky, "--config", obs, "--out", join(dir, "s3.csv"), "--products", "bogus"], /--products bogus: expected one of stokes_i, linear, circular/, () => join(dir, "s3.csv")],
    ["simulate: --seed 1.5", () => ["simulate", "--sky", sky, "--config", obs, "--out", join(dir, "s4.csv"), "--seed", "1.5"], /--seed 1\.5: expected a whole number/, () => join(dir, "s4.csv")],
    ["simulate: missing sky file", () => ["simulate", "--sky", join(dir, "nosky.json"), "--config", obs, "--out", join(dir, "s5.csv")], /nosky\.json: cannot read the model file \(no such file\)/, () => join(dir, "s5.csv")],
    ["convert: unknown output extension", () => ["convert", REFERENCE, join(dir, "c1.txt")], /c1\.txt: cannot tell the output format/, () => join(dir, "c1.txt")],
    ["convert: missing input", () => ["convert", join(dir, "nope.h5"), join(dir, "c2.csv")], /nope\.h5: file not found/, () => join(dir, "c2.csv")],
    ["lens: missing model", () => ["lens", join(dir, "nomodel.json")], /nomodel\.json: cannot read the model file/, () => ""],
    ["lens: --cell -1", () => ["lens", sky, "--cell", "-1", "--out", join(dir, "l1")], /--cell -1: must lie in \[0, inf\]/, () => join(dir, "l1")],
    ["lens: a model without lens components", () => ["lens", sky, "--out", join(dir, "l2")], /lens: the model has no lens components/, () => join(dir, "l2")],
    ["lens: a grid too fine", () => ["lens", sky, "--size", "100", "--cell", "0.001"], /more than 4096/, () => ""],
  ];

  for (const [name, args, pattern, output] of cases) {
    it(name, () => {
      const r = runCli(args());
      expectInputError(r, pattern);
      const o = output();
      if (o) expect(existsSync(o), `${o} should not exist`).toBe(false);
      // No temporary files left in the scratch folder either.
      expect(readdirSync(dir).filter((f) => f.includes(".tmp"))).toEqual([]);
    });
  }
});
