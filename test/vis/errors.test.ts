/**
 * Bad input gives an InputError with one clear line (where — what — what to do), matched by
 * its text (STYLE.md §6). Files are made here from the real SR1 file or with the writers.
 */
import { copyFileSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import h5wasm from "h5wasm";
import { SHARED_DIR } from "../helpers.js";
import { InputError } from "../../src/errors.js";
import { readVisibilities, writeVisibilities } from "../../src/vis/index.js";
import { formatCard, headerBytes } from "../../src/vis/fitsHeader.js";
import { syntheticVis } from "./synthetic.js";

const dir = mkdtempSync(join(tmpdir(), "arcfringe-vis-err-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const SR1 = `${SHARED_DIR}data/real/SR1_M87_2017_095_hi_hops_netcal_StokesI.uvfits`;

async function inputError(path: string, re: RegExp): Promise<void> {
  const err = await readVisibilities(path).then(
    () => undefined,
    (e: unknown) => e,
  );
  expect(err, `reading ${path} should fail`).toBeInstanceOf(InputError);
  const msg = (err as Error).message;
  expect(msg).toMatch(re);
  expect(msg.includes("\n"), "one line").toBe(false);
}

describe("readVisibilities refuses bad files with a clear InputError", () => {
  it("missing, empty, unknown-format files", async () => {
    await inputError(join(dir, "nope.uvfits"), /nope\.uvfits: file not found; check the path/);
    writeFileSync(join(dir, "empty.uvfits"), "");
    await inputError(join(dir, "empty.uvfits"), /empty\.uvfits: the file is empty/);
    writeFileSync(join(dir, "notes.txt"), "hello\n");
    await inputError(join(dir, "notes.txt"), /notes\.txt: unknown visibility format; use UVFITS/);
  });

  it("a .uvfits that is not FITS, a FITS image, a FITS with zero groups", async () => {
    writeFileSync(join(dir, "text.uvfits"), "x".repeat(5000));
    await inputError(join(dir, "text.uvfits"), /text\.uvfits: does not start with SIMPLE; not a FITS file/);
    const image = Buffer.concat([
      headerBytes([formatCard("SIMPLE", true), formatCard("BITPIX", -32), formatCard("NAXIS", 2), formatCard("NAXIS1", 4), formatCard("NAXIS2", 4)]),
      Buffer.alloc(2880),
    ]);
    writeFileSync(join(dir, "image.fits"), image);
    await inputError(join(dir, "image.fits"), /image\.fits: FITS file without random-groups visibilities \(needs GROUPS = T and NAXIS1 = 0\)/);
    const empty = headerBytes([
      formatCard("SIMPLE", true), formatCard("BITPIX", -32), formatCard("NAXIS", 3), formatCard("NAXIS1", 0), formatCard("NAXIS2", 3),
      formatCard("NAXIS3", 1), formatCard("GROUPS", true), formatCard("PCOUNT", 3), formatCard("GCOUNT", 0),
      formatCard("CTYPE2", "COMPLEX"), formatCard("CTYPE3", "FREQ"), formatCard("CRVAL3", 1e9),
    ]);
    writeFileSync(join(dir, "nogroups.uvfits"), empty);
    await inputError(join(dir, "nogroups.uvfits"), /nogroups\.uvfits: the file holds no visibilities \(GCOUNT = 0/);
  });

  it("a truncated UVFITS file, refused from its declared size before reading", async () => {
    const bytes = readFileSync(SR1);
    writeFileSync(join(dir, "cut.uvfits"), bytes.subarray(0, 100000));
    // SR1: 6458 groups × (9 + 12) float32 = 542472 bytes of data after a 8640-byte header.
    await inputError(join(dir, "cut.uvfits"), /cut\.uvfits: the header declares 6458 groups of 84 bytes \(542472 bytes of data\) but only 91360 bytes follow the header; the file is truncated/);
    // Cut inside the header: no END card.
    writeFileSync(join(dir, "cuthead.uvfits"), bytes.subarray(0, 2880 * 2));
    await inputError(join(dir, "cuthead.uvfits"), /cuthead\.uvfits: header at byte 0 has no END card before the end of the file/);
    // Cut inside the AIPS AN table (the groups are complete). A cut exactly between two
    // extensions would leave a valid FITS file and cannot be detected; this one can.
    const an = Math.floor(bytes.indexOf("AIPS AN") / 2880) * 2880;
    writeFileSync(join(dir, "cuttable.uvfits"), bytes.subarray(0, an + 2880 + 500));
    await inputError(join(dir, "cuttable.uvfits"), /cuttable\.uvfits: .*truncated/);
  });

  it("every entry flagged, every weight zero, u and v all zero", async () => {
    const vis = syntheticVis({ seed: 21, nAnt: 4, nTimes: 3, freqHz: [1e11], correlations: [-1, -2] });
    vis.weight.fill(-1);
    await writeVisibilities(join(dir, "flagged.uvfits"), vis);
    await inputError(join(dir, "flagged.uvfits"), /flagged\.uvfits: no usable visibilities among 36: 36 flagged \(weight ≤ 0\); every entry is flagged or has weight 0/);
    vis.weight.fill(0);
    await writeVisibilities(join(dir, "zero.h5"), vis);
    await inputError(join(dir, "zero.h5"), /zero\.h5: no usable visibilities among 36: 36 flagged \(weight ≤ 0\); every entry is flagged or has weight 0/);
    vis.weight.fill(1);
    vis.uLambda.fill(0);
    vis.vLambda.fill(0);
    await writeVisibilities(join(dir, "nouv.csv"), vis);
    await inputError(join(dir, "nouv.csv"), /nouv\.csv: every usable visibility has u = v = 0; the uv coordinates are missing/);
  });

  it("CSV: non-finite and non-numeric cells, missing columns, wrong cell counts, bad codes", async () => {
    const head = "# test table\nu_lambda,v_lambda,re_jy,im_jy,weight\n";
    writeFileSync(join(dir, "obs.csv"), head + "1,2,3,4,5\nnan,1,1,1,1\n");
    await inputError(join(dir, "obs.csv"), /^obs\.csv line 4: u_lambda is "nan"; every cell must be a finite number$/);
    writeFileSync(join(dir, "obs.csv"), head + "1,2,3,nan,5\n");
    await inputError(join(dir, "obs.csv"), /^obs\.csv line 3: im_jy is "nan"; every cell must be a finite number$/);
    writeFileSync(join(dir, "obs.csv"), head + "1,2,abc,4,5\n");
    await inputError(join(dir, "obs.csv"), /^obs\.csv line 3: re_jy is "abc"; every cell must be a finite number$/);
    writeFileSync(join(dir, "obs.csv"), head + "1,2,3,4,\n");
    await inputError(join(dir, "obs.csv"), /^obs\.csv line 3: weight is ""; every cell must be a finite number$/);
    writeFileSync(join(dir, "obs.csv"), head + "1,2,3,4\n");
    await inputError(join(dir, "obs.csv"), /^obs\.csv line 3: 4 cells but the header has 5 columns$/);
    writeFileSync(join(dir, "obs.csv"), "u_lambda,v_lambda,re_jy,weight\n1,2,3,4\n");
    await inputError(join(dir, "obs.csv"), /^obs\.csv line 1: missing required column im_jy; the header must name u_lambda, v_lambda, re_jy, im_jy, weight/);
    writeFileSync(join(dir, "obs.csv"), "u_lambda,v_lambda,re_jy,im_jy,weight,correlation\n1,2,3,4,5,7\n");
    await inputError(join(dir, "obs.csv"), /^obs\.csv line 2: correlation is "7"; expected an AIPS Stokes code/);
    writeFileSync(join(dir, "obs.csv"), "# only comments\n");
    await inputError(join(dir, "obs.csv"), /^obs\.csv: no header row found/);
  });

  it("HDF5: truncated, corrupted, and valid HDF5 that is not our layout", async () => {
    const vis = syntheticVis({ seed: 22, nAnt: 4, nTimes: 3, freqHz: [1e11], correlations: [1] });
    await writeVisibilities(join(dir, "good.h5"), vis);
    const bytes = readFileSync(join(dir, "good.h5"));
    writeFileSync(join(dir, "cut.h5"), bytes.subarray(0, Math.floor(bytes.length / 2)));
    await inputError(join(dir, "cut.h5"), /cut\.h5: the HDF5 superblock says the file ends at byte \d+ but it has \d+ bytes; the file is truncated/);
    const bad = Buffer.from(bytes);
    for (let i = 200; i < 1200; i++) bad[i] = 0xa5;
    writeFileSync(join(dir, "bad.h5"), bad);
    await inputError(join(dir, "bad.h5"), /bad\.h5: /);
    // A valid HDF5 file without our datasets (made with h5wasm directly).
    const M = await h5wasm.ready;
    const f = new h5wasm.File("/other.h5", "w");
    f.create_dataset({ name: "temperature", data: new Float64Array([1, 2, 3]) });
    f.close();
    writeFileSync(join(dir, "other.h5"), M.FS.readFile("/other.h5"));
    M.FS.unlink("/other.h5");
    await inputError(join(dir, "other.h5"), /other\.h5: no \/u_lambda dataset; not an arcfringe HDF5 visibility file/);
    writeFileSync(join(dir, "junk.h5"), "not hdf5 at all");
    await inputError(join(dir, "junk.h5"), /junk\.h5: no HDF5 signature found/);
  });

  it("writeVisibilities refuses an unknown extension and a missing folder", async () => {
    const vis = syntheticVis({ seed: 23, nAnt: 3, nTimes: 1, freqHz: [1e11], correlations: [1] });
    await expect(writeVisibilities(join(dir, "out.xyz"), vis)).rejects.toThrow(/out\.xyz: cannot tell the output format from the extension; use \.uvfits, \.h5 or \.csv/);
    await expect(writeVisibilities(join(dir, "no", "such", "out.h5"), vis)).rejects.toThrow(/folder .* does not exist; create it first/);
  });
});

describe("readHdf5 guard (worker thread with a time limit)", () => {
  it("turns a read that exceeds the time limit into an InputError and recovers for the next read", async () => {
    const { readHdf5 } = await import("../../src/vis/hdf5Guard.js");
    const vis = syntheticVis({ seed: 24, nAnt: 4, nTimes: 3, freqHz: [1e11], correlations: [1] });
    const p = join(dir, "slow.h5");
    await writeVisibilities(p, vis);
    // 1 ms cannot suffice to hand a file to the worker and read it: the guard must fire.
    await expect(readHdf5(p, 0, { timeLimitMs: 1 })).rejects.toThrow(/slow\.h5: the HDF5 library did not finish reading within 0\.001 s; the file is corrupt/);
    const again = await readHdf5(p, 0);
    expect(again.vis.count).toBe(vis.count);
  });
});
