/**
 * Help and version of the diagnostic and data commands (STYLE.md §8: Usage, Options, Examples in
 * that order; every example has a comment line; --version prints only the version).
 * Source of the expected text layout: STYLE.md §8 (project contract, no external source).
 */
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { ROOT, expectOk, runCli } from "./cliHelpers.js";

const COMMANDS = ["inspect", "image", "simulate", "convert", "lens"];

describe("arcfringe <command> --help", () => {
  for (const name of COMMANDS) {
    it(`${name} --help shows Usage, Options and Examples in that order and exits 0`, () => {
      const r = runCli([name, "--help"]);
      expectOk(r);
      const usage = r.stdout.indexOf("Usage:");
      const options = r.stdout.indexOf("Options:");
      const examples = r.stdout.indexOf("Examples:");
      expect(usage, r.stdout).toBeGreaterThanOrEqual(0);
      expect(options, r.stdout).toBeGreaterThan(usage);
      expect(examples, r.stdout).toBeGreaterThan(options);
      expect(r.stdout).toMatch(new RegExp(`Usage: arcfringe ${name}`));
      // Every example command line follows a comment line.
      const exampleLines = r.stdout.slice(examples).split("\n").slice(1).filter((l) => l.trim() !== "");
      expect(exampleLines.length).toBeGreaterThanOrEqual(2);
      for (let k = 0; k < exampleLines.length; k += 2) {
        expect(exampleLines[k].trim(), r.stdout).toMatch(/^# \S/);
        expect(exampleLines[k + 1].trim(), r.stdout).toMatch(new RegExp(`^arcfringe ${name}\\b`));
      }
      expect(r.stderr).toBe("");
    });
  }

  it("the top-level help lists the five commands", () => {
    const r = runCli(["--help"]);
    expectOk(r);
    for (const name of COMMANDS) expect(r.stdout).toMatch(new RegExp(`^\\s+${name}\\b`, "m"));
  });

  it("--version prints only the version from package.json", () => {
    const version = JSON.parse(readFileSync(join(ROOT, "package.json"), "utf8")).version as string;
    const r = runCli(["--version"]);
    expectOk(r);
    expect(r.stdout).toBe(`${version}\n`);
    expect(r.stderr).toBe("");
  });
});
