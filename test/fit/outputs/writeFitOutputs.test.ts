/**
 * writeFitOutputs on a small synthetic FitOutcome: which files appear, and what the FITS files,
 * chain.h5, the figures and report.html contain, each read back with a reader that does not
 * share the writer's code path where one exists (WCS formulas of the FITS standard, h5wasm's
 * reader, our own PNG decoder, headless Chromium for the report).
 */
import { spawnSync } from "node:child_process";
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import h5wasm from "h5wasm";
import { writeFitOutputs } from "../../../src/fit/outputs/index.js";
import { readFitsImage, axisWcs, headerBeam } from "../../../src/io/fits.js";
import { headerString } from "../../../src/io/fitsHeader.js";
import type { FitOutcome } from "../../../src/fit/outcome.js";
import { expectAbs, expectRel } from "../../helpers.js";
import { decodePng, distinctColours } from "../../pngDecode.js";
import {
  BEAM, HOSTILE_NAME, N, PHASE_CENTRE, SKY_CELL_ARCSEC, SKY_MARK, SRC_CELL_ARCSEC, SRC_CENTRE, SRC_PEAK, syntheticOutcome,
} from "./syntheticOutcome.js";

const FIXED_DATE = new Date("2025-01-02T03:04:05Z");
const WARNINGS = ["lens[0].q is at its upper bound 1", "chain is not converged: 60 steps < 50·τ"];
let root: string;
let sampledDir: string;
let hessianDir: string;
let sampled: FitOutcome;
let hessian: FitOutcome;
let sampledFiles: string[];
let hessianFiles: string[];

beforeAll(async () => {
  root = mkdtempSync(join(tmpdir(), "arcfringe-outputs-"));
  sampledDir = join(root, "sampled");
  hessianDir = join(root, "hessian");
  sampled = syntheticOutcome({ sampled: true, warnings: WARNINGS, withTruth: true });
  hessian = syntheticOutcome({ sampled: false, warnings: [], withTruth: false });
  sampledFiles = await writeFitOutputs(sampledDir, sampled, { date: FIXED_DATE });
  hessianFiles = await writeFitOutputs(hessianDir, hessian, { date: FIXED_DATE });
});

/** Assert that `text` contains `what` (string or pattern) without printing the whole text on failure. */
function assertHas(text: string, what: string | RegExp): void {
  const ok = typeof what === "string" ? text.includes(what) : what.test(text);
  expect(ok, `expected the document (${text.length} chars) to contain ${String(what)}`).toBe(true);
}

/** Assert that `text` does not contain `what`, showing the offending context on failure. */
function refute(text: string, what: string | RegExp): void {
  const at = typeof what === "string" ? text.indexOf(what) : text.search(what);
  expect(at < 0, `unexpected ${String(what)} at ${at}: …${text.slice(Math.max(0, at - 80), at + 80)}…`).toBe(true);
}

afterAll(() => {
  if (root) rmSync(root, { recursive: true, force: true });
});

describe("writeFitOutputs: the set of files", () => {
  it("writes every FITS image, figure, chain.h5 and report.html of a sampled fit, and nothing else", () => {
    // The list of output files: DESIGN.md (fit outputs) and the task's list of figures.
    const expected = [
      "model_sky.fits", "source.fits", "source_sigma.fits", "data_dirty.fits", "model_dirty.fits", "residual_dirty.fits",
      "dirty_comparison.png", "model_sky.png", "source.png", "source_sigma.png", "data_dirty.png", "residual_dirty.png",
      "uv_amplitude.png", "corner.png", "chain_trace.png", "chain.h5", "report.html",
    ];
    expect([...sampledFiles].sort()).toEqual([...expected].sort());
    // No temporary file of the atomic writes is left behind, and nothing unlisted was written.
    expect(readdirSync(sampledDir).sort()).toEqual([...expected].sort());
    for (const f of expected) expect(statSync(join(sampledDir, f)).size, f).toBeGreaterThan(1000);
  });

  it("writes no chain.h5 and no trace figure without a chain", () => {
    expect(hessianFiles).not.toContain("chain.h5");
    expect(hessianFiles).not.toContain("chain_trace.png");
    expect(hessianFiles).toContain("corner.png");
    expect(readdirSync(hessianDir).sort()).toEqual([...hessianFiles].sort());
  });
});

describe("writeFitOutputs: FITS images", () => {
  it("model_sky.fits has the SIN WCS of CONVENTIONS.md at the phase centre, with East to the left", () => {
    const img = readFitsImage(join(sampledDir, "model_sky.fits"));
    const a1 = axisWcs(img.header, 1, "model_sky.fits"), a2 = axisWcs(img.header, 2, "model_sky.fits");
    expect(img.shape).toEqual([N, N]);
    expect([a1.ctype, a2.ctype]).toEqual(["RA---SIN", "DEC--SIN"]);
    expect(headerString(img.header, "BUNIT")).toBe("Jy/pixel");
    // CONVENTIONS.md: CRPIX = N/2 + 1, CDELT1 = −Δ < 0, CDELT2 = +Δ, CRVAL at the phase centre.
    // Header reals are written as shortest round-trip decimals, so equality is exact up to the
    // arcsec → deg division (rtol 1e-15, a few ulp).
    expect([a1.crpix, a2.crpix]).toEqual([N / 2 + 1, N / 2 + 1]);
    expectRel(a1.cdelt, -SKY_CELL_ARCSEC / 3600, 1e-15, "CDELT1");
    expectRel(a2.cdelt, SKY_CELL_ARCSEC / 3600, 1e-15, "CDELT2");
    expectRel(a1.crval, PHASE_CENTRE[0], 1e-15, "CRVAL1");
    expectRel(a2.crval, PHASE_CENTRE[1], 1e-15, "CRVAL2");
    // The marked pixel: FITS pixel p1 = i + 1 lies at x = (p1 − CRPIX1)·CDELT1 (FITS Standard 4.0
    // §8.2, linear part of the WCS), which must equal the model-grid x = (N/2 − i)Δ (CONVENTIONS.md).
    let best = 0;
    for (let k = 1; k < img.data.length; k++) if (img.data[k] > img.data[best]) best = k;
    const p1 = (best % N) + 1, p2 = Math.floor(best / N) + 1;
    expectAbs((p1 - a1.crpix) * a1.cdelt * 3600, (N / 2 - SKY_MARK.i) * SKY_CELL_ARCSEC, 1e-12, "x of the marked pixel [arcsec]");
    expectAbs((p2 - a2.crpix) * a2.cdelt * 3600, (SKY_MARK.j - N / 2) * SKY_CELL_ARCSEC, 1e-12, "y of the marked pixel [arcsec]");
    // Data: float32 on disk (BITPIX −32), so each value is the float32 rounding of the input exactly.
    expect(img.bitpix).toBe(-32);
    const src = sampled.images.modelSky.data;
    for (let k = 0; k < src.length; k++) if (img.data[k] !== Math.fround(src[k])) throw new Error(`pixel ${k}: ${img.data[k]} ≠ fround(${src[k]})`);
  });

  it("source.fits uses offset axes in arcsec whose reference value is the source-grid centre", () => {
    const img = readFitsImage(join(sampledDir, "source.fits"));
    const a1 = axisWcs(img.header, 1, "source.fits"), a2 = axisWcs(img.header, 2, "source.fits");
    expect([a1.ctype, a2.ctype, a1.cunit, a2.cunit]).toEqual(["XOFFSET", "YOFFSET", "arcsec", "arcsec"]);
    expect(headerString(img.header, "BUNIT")).toBe("Jy/arcsec2");
    expect(a1.cdelt).toBeLessThan(0);
    expectRel(a1.cdelt, -SRC_CELL_ARCSEC, 1e-15, "CDELT1");
    expectRel(a2.cdelt, SRC_CELL_ARCSEC, 1e-15, "CDELT2");
    expectRel(a1.crval, SRC_CENTRE[0], 1e-15, "CRVAL1");
    expectRel(a2.crval, SRC_CENTRE[1], 1e-15, "CRVAL2");
    // Peak of the source Gaussian, placed on pixel SRC_PEAK: by the FITS linear WCS it must read
    // back at the grid centre + the CONVENTIONS.md grid offset of that pixel.
    let best = 0;
    for (let k = 1; k < img.data.length; k++) if (img.data[k] > img.data[best]) best = k;
    const p1 = (best % N) + 1, p2 = Math.floor(best / N) + 1;
    expectAbs(a1.crval + (p1 - a1.crpix) * a1.cdelt, SRC_CENTRE[0] + (N / 2 - SRC_PEAK.i) * SRC_CELL_ARCSEC, 1e-12, "source peak x");
    expectAbs(a2.crval + (p2 - a2.crpix) * a2.cdelt, SRC_CENTRE[1] + (SRC_PEAK.j - N / 2) * SRC_CELL_ARCSEC, 1e-12, "source peak y");
    expect(readFitsImage(join(sampledDir, "source_sigma.fits")).shape).toEqual([N, N]);
  });

  it("the dirty images are in Jy/beam with the first dataset's beam, and hold the input pixels", () => {
    for (const [file, image] of [
      ["data_dirty.fits", sampled.images.dataDirty], ["model_dirty.fits", sampled.images.modelDirty], ["residual_dirty.fits", sampled.images.residualDirty],
    ] as const) {
      const img = readFitsImage(join(sampledDir, file));
      expect(headerString(img.header, "BUNIT"), file).toBe("Jy/beam");
      expect(axisWcs(img.header, 1, file).ctype).toBe("RA---SIN");
      const beam = headerBeam(img.header);
      // BMAJ/BMIN in degrees in the header (FITS convention): arcsec → deg → arcsec, a few ulp.
      expectRel(beam!.bmajArcsec, BEAM.bmajArcsec, 1e-14, `${file} BMAJ`);
      expectRel(beam!.bminArcsec, BEAM.bminArcsec, 1e-14, `${file} BMIN`);
      expectRel(beam!.bpaDeg, BEAM.bpaDeg, 1e-15, `${file} BPA`);
      for (let k = 0; k < image.data.length; k += 37) expect(img.data[k]).toBe(Math.fround(image.data[k]));
    }
  });
});

describe("writeFitOutputs: chain.h5", () => {
  it("holds the chain, log-probabilities and attributes with the documented shapes, read back by h5wasm", async () => {
    const M = await h5wasm.ready;
    const bytes = readFileSync(join(sampledDir, "chain.h5"));
    const tmp = "/chain-readback.h5";
    M.FS.writeFile(tmp, bytes);
    const f = new h5wasm.File(tmp, "r");
    try {
      const c = sampled.chain!;
      const get = (name: string): InstanceType<typeof h5wasm.Dataset> => f.get(name) as InstanceType<typeof h5wasm.Dataset>;
      // Shapes: docs/chain-layout.md and the task (steps × walkers × dim; steps × walkers).
      expect(get("chain").shape).toEqual([c.nSteps, c.nWalkers, c.dim]);
      expect(get("log_posterior").shape).toEqual([c.nSteps, c.nWalkers]);
      expect(get("log_likelihood").shape).toEqual([c.nSteps, c.nWalkers]);
      expect(get("chain").dtype).toBe("<d");
      // float64 throughout: values come back bit for bit.
      expect(Array.from(get("chain").value as Float64Array)).toEqual(Array.from(c.chain));
      expect(Array.from(get("log_posterior").value as Float64Array)).toEqual(Array.from(c.logPosterior));
      expect(Array.from(get("log_likelihood").value as Float64Array)).toEqual(Array.from(c.logLikelihood));
      const attrs = f.attrs;
      expect(attrs.parameter_names.json_value).toEqual(sampled.names);
      expect(attrs.parameter_units.json_value).toEqual(sampled.units);
      expect(attrs.burn_in.json_value).toBe(c.burnIn);
      expect(attrs.tau.json_value).toEqual(Array.from(c.tau));
      expect(attrs.acceptance_fraction.json_value).toEqual(Array.from(c.acceptanceFraction));
      expect(attrs.converged.json_value).toBe(0);
      expect(attrs.format.json_value).toBe("arcfringe-chain");
      const n = sampled.nested!;
      expect(get("nested/samples").shape).toEqual([n.nSamples, n.dim]);
      expect(Array.from(get("nested/samples").value as Float64Array)).toEqual(Array.from(n.samples));
      expect(Array.from(get("nested/log_weights").value as Float64Array)).toEqual(Array.from(n.logWeights));
      expect(Array.from(get("nested/log_likelihood").value as Float64Array)).toEqual(Array.from(n.logLikelihood));
      const g = f.get("nested") as InstanceType<typeof h5wasm.Group>;
      expect(g.attrs.log_evidence.json_value).toBe(n.logEvidence);
      expect(g.attrs.log_evidence_error.json_value).toBe(n.logEvidenceError);
    } finally {
      f.close();
      M.FS.unlink(tmp);
    }
  });

  it("every dataset and attribute named in docs/chain-layout.md's h5py example exists in the file", async () => {
    // h5py is not installed on this machine (python3 -c "import h5py" fails), so the example is
    // checked for the names it uses rather than run.
    const doc = readFileSync(new URL("../../../docs/chain-layout.md", import.meta.url), "utf8");
    const example = /```python\n([\s\S]*?)```/.exec(doc)![1];
    const datasets = [...example.matchAll(/f\["([^"]+)"\]/g)].map((m) => m[1]);
    const attrs = [...example.matchAll(/attrs\["([^"]+)"\]/g)].map((m) => m[1]);
    expect(datasets.length).toBeGreaterThanOrEqual(3);
    expect(attrs).toEqual(expect.arrayContaining(["parameter_names", "burn_in"]));
    expect(example.split("\n").filter((l) => l.trim()).length).toBeLessThanOrEqual(5);
    const M = await h5wasm.ready;
    const tmp = "/chain-doc.h5";
    M.FS.writeFile(tmp, readFileSync(join(sampledDir, "chain.h5")));
    const f = new h5wasm.File(tmp, "r");
    try {
      for (const d of datasets) expect(f.get(d), d).toBeInstanceOf(h5wasm.Dataset);
      for (const a of attrs) expect(Object.keys(f.attrs), a).toContain(a);
    } finally {
      f.close();
      M.FS.unlink(tmp);
    }
  });
});

describe("writeFitOutputs: figures", () => {
  it("every PNG decodes (by our own reader) to a picture with many colours, not a blank canvas", () => {
    for (const f of sampledFiles.filter((x) => x.endsWith(".png"))) {
      const img = decodePng(readFileSync(join(sampledDir, f)));
      expect(img.width, f).toBeGreaterThan(200);
      expect(img.height, f).toBeGreaterThan(150);
      // Text, axes and a colour map give well over 20 colours; a failed render gives 1.
      expect(distinctColours(img), f).toBeGreaterThan(20);
    }
  });
});

describe("writeFitOutputs: report.html", () => {
  let html: string;
  let plain: string;
  beforeAll(() => {
    html = readFileSync(join(sampledDir, "report.html"), "utf8");
    plain = readFileSync(join(hessianDir, "report.html"), "utf8");
  });

  it("is self-contained: no external URL, every <img> a PNG data URI, one per figure written", () => {
    // Self-contained: no http(s) or protocol-relative references, no <link>, no <script>, no CSS url().
    refute(html, /https?:\/\//i);
    refute(html, /(src|href)\s*=\s*["']?\/\//i);
    refute(html, /<link\b/i);
    refute(html, /<script\b/i);
    refute(html, /url\(/i);
    const imgs = [...html.matchAll(/<img\b[^>]*>/g)].map((m) => m[0]);
    const pngs = sampledFiles.filter((f) => f.endsWith(".png"));
    expect(imgs.length).toBe(pngs.length);
    for (const tag of imgs) expect(tag).toMatch(/src="data:image\/png;base64,[A-Za-z0-9+/]+=*"/);
    // The embedded bytes are the written files.
    const first = /src="data:image\/png;base64,([^"]+)"/.exec(html)![1];
    expect(Buffer.from(first, "base64").equals(readFileSync(join(sampledDir, "dirty_comparison.png")))).toBe(true);
  });

  it("shows a warning box listing every warning when there are warnings, and none otherwise", () => {
    const box = /<section class="alert"[\s\S]*?<\/section>/.exec(html);
    expect(box).not.toBeNull();
    assertHas(box![0], "WARNING");
    for (const w of WARNINGS) assertHas(box![0], w.replace(/</g, "&lt;"));
    refute(plain, `class="alert"`);
    assertHas(plain, "no warnings");
  });

  it("escapes user strings: a <script> parameter name and a dataset name with & and <> appear as text", () => {
    refute(html, HOSTILE_NAME);
    assertHas(html, "&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt;.flux");
    assertHas(html, "band7 &amp; &lt;main&gt;");
    assertHas(html, "/data/obs &lt;1&gt;.uvfits");
  });

  it("lists values, σ, percentiles, units, truth, the at-bound flag, χ², noise scale, evidence and derived values", () => {
    // Rounding to σ's second significant digit (common practice, PDG): 1.02 ± 0.011 → "1.020", "0.011".
    assertHas(html, /<td class="name">lens\[0\]\.theta_E<\/td><td>1\.020<\/td><td>0\.011<\/td><td>1\.009<\/td><td>1\.031<\/td><td>arcsec<\/td><td>1\.000<\/td>/);
    // q = 0.999999 is within 1e-3 of the box width of its upper bound 1 (model/parameters.ts isAtBound).
    assertHas(html, /lens\[0\]\.q<\/td>.*at upper bound/);
    assertHas(html, "<td>χ²</td><td>24000.50</td>"); // χ² of the synthetic outcome, 2 decimals
    assertHas(html, "<td>1.07</td>"); // noise scale
    assertHas(html, "-123.4 ± 0.21"); // ln Z ± error
    assertHas(html, "einstein_mass_msun");
    assertHas(html, "1.300e+11");
    assertHas(html, "--seed 7");
    assertHas(html, "random seed</td><td>7");
  });

  it("renders in headless Chromium to a non-blank page with no console errors, and the DOM has no script element", () => {
    const chromium = ["/usr/bin/chromium", "/usr/bin/chromium-browser"].find((p) => existsSync(p));
    if (!chromium) throw new Error("headless Chromium is needed for this test: install it (Debian: apt-get install chromium)");
    const profile = mkdtempSync(join(root, "chromium-profile-"));
    const shot = join(root, "shot.png");
    const common = [
      "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking",
      "--disable-component-update", "--disable-sync", "--hide-scrollbars", `--user-data-dir=${profile}`,
      "--enable-logging=stderr", "--v=0",
    ];
    const url = `file://${join(sampledDir, "report.html")}`;
    const run = spawnSync(chromium, [...common, `--screenshot=${shot}`, "--window-size=1200,3000", url], { encoding: "utf8", timeout: 90_000 });
    expect(run.error, String(run.error)).toBeUndefined();
    expect(existsSync(shot), `no screenshot; chromium stderr:\n${run.stderr}`).toBe(true);
    const img = decodePng(readFileSync(shot));
    expect([img.width, img.height]).toEqual([1200, 3000]);
    expect(distinctColours(img)).toBeGreaterThan(50);
    // The warning box is near the top: its orange-tinted background (#fff1e0) must be on screen.
    let tinted = 0;
    for (let k = 0; k < img.width * 600; k++) {
      if (img.rgba[4 * k] === 0xff && img.rgba[4 * k + 1] === 0xf1 && img.rgba[4 * k + 2] === 0xe0) tinted++;
    }
    expect(tinted, "pixels of the warning box background in the top 600 rows").toBeGreaterThan(5000);
    refute(run.stderr, /Uncaught|Failed to load|ERR_FILE_NOT_FOUND|Not allowed to load/);

    const dom = spawnSync(chromium, [...common, "--dump-dom", url], { encoding: "utf8", timeout: 90_000, maxBuffer: 64 << 20 });
    assertHas(dom.stdout, "<table");
    refute(dom.stdout, /<script\b/i);
    assertHas(dom.stdout, "&lt;script&gt;");
    refute(dom.stderr, /Uncaught|Failed to load/);
  });
});
