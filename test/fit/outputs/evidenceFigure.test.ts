import { describe, expect, it } from "vitest";
import { evidenceCurveCsv, evidenceCurveSvg } from "../../../src/fit/outputs/evidenceFigure.js";

// Output format of this project (no external reference): the CSV lists every evaluated point.
describe("evidence curve outputs", () => {
  const curves = {
    lambda: { x: Float64Array.of(1, 10, 100), logEvidence: Float64Array.of(-5000, 10, -Infinity), best: 10 },
    scaleArcsec: { x: Float64Array.of(0.03, 0.06), logEvidence: Float64Array.of(1, 2), best: 0.06 },
  };
  it("writes one CSV row per evaluation, λ then ℓ, non-finite values as nan", () => {
    expect(evidenceCurveCsv(curves).trim().split("\n")).toEqual([
      "hyperparameter,value,log_evidence",
      "lambda,1,-5000",
      "lambda,10,10",
      "lambda,100,nan",
      "scale_arcsec,0.03,1",
      "scale_arcsec,0.06,2",
    ]);
  });
  it("draws a panel per hyperparameter and says when the y axis is clipped", () => {
    const svg = evidenceCurveSvg(curves);
    expect(svg).toContain("log E against λ");
    expect(svg).toContain("log E against ℓ");
    expect(svg).toContain("clipped at −50");
    expect(evidenceCurveSvg({ lambda: { x: Float64Array.of(1, 10), logEvidence: Float64Array.of(0, -3), best: 1 } })).not.toContain("clipped");
  });
});
