#!/usr/bin/env node
// The arcfringe executable: loads the compiled CLI from dist/ (built by `npm ci` / `npm run build`).
import { existsSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { dirname, join } from "node:path";

const here = dirname(fileURLToPath(import.meta.url));
const entry = join(here, "..", "dist", "src", "cli", "main.js");
if (!existsSync(entry)) {
  process.stderr.write("arcfringe: the compiled program is missing; run `npm ci` (or `npm run build`) in the package folder first\n");
  process.exit(2);
}
const { main } = await import(entry);
process.exitCode = await main(process.argv.slice(2));
