/**
 * The command-line entry point: builds the commander program, runs one command, and turns
 * errors into one stderr line and an exit code (0 ok, 1 flagged result, 2 bad input/usage).
 */
import { Command, CommanderError } from "commander";
import { InputError } from "../errors.js";
import { VERSION } from "../version.js";

export async function main(argv: string[]): Promise<number> {
  const debug = argv.includes("--debug");
  const program = new Command("arcfringe");
  program
    .description("Fit strong-lens models directly to interferometer visibilities.")
    .version(VERSION, "--version", "print the version and exit")
    .option("--debug", "print stack traces on errors")
    .exitOverride()
    .configureOutput({ writeErr: (s) => process.stderr.write(s) });
  try {
    if (argv.length === 0) {
      program.outputHelp();
      return 0;
    }
    await program.parseAsync(argv, { from: "user" });
    return typeof process.exitCode === "number" ? process.exitCode : 0;
  } catch (err) {
    return reportError(err, debug);
  }
}

function reportError(err: unknown, debug: boolean): number {
  if (err instanceof CommanderError) {
    // help and version exit with code 0 through this path
    return err.exitCode === 0 ? 0 : 2;
  }
  if (err instanceof InputError) {
    process.stderr.write(`arcfringe: ${err.message}\n`);
    if (debug && err.stack) process.stderr.write(err.stack + "\n");
    return 2;
  }
  const e = err as Error;
  process.stderr.write(`arcfringe: internal error: ${e?.message ?? String(err)} (rerun with --debug for details and please report it)\n`);
  if (debug && e?.stack) process.stderr.write(e.stack + "\n");
  return 3;
}
