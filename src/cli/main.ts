/**
 * The command-line entry point: builds the commander program from the command table, runs one
 * command, and turns errors into one stderr line and an exit code (0 ok, 1 a result the user
 * must check, 2 bad input or usage). Stack traces only with --debug.
 */
import { Command, CommanderError } from "commander";
import { InputError } from "../errors.js";
import { VERSION } from "../version.js";
import { buildCommand } from "./spec.js";
import { COMMANDS } from "./commands.js";

export async function main(argv: string[]): Promise<number> {
  const debug = argv.includes("--debug");
  const program = new Command("arcfringe");
  program
    .description(
      "Fit strong-gravitational-lens models directly to radio/sub-mm interferometer visibilities.",
    )
    .usage("<command> [options]")
    .version(VERSION, "--version", "print the version and exit")
    .helpOption("-h, --help", "show this help")
    .helpCommand(false)
    .exitOverride()
    .configureOutput({ writeErr: (s) => process.stderr.write(s) });
  for (const spec of COMMANDS) {
    const cmd = buildCommand(spec);
    cmd.exitOverride();
    cmd.configureOutput({ writeErr: (s) => process.stderr.write(s) });
    program.addCommand(cmd);
  }
  program.addHelpText(
    "after",
    "\nExamples:\n  # Run the built-in demo end to end (simulate, fit, report)\n  arcfringe demo --out demo-out\n\n" +
      "  # Help for one command\n  arcfringe fit --help\n",
  );
  process.exitCode = undefined;
  try {
    if (argv.length === 0) {
      program.outputHelp();
      return 0;
    }
    await program.parseAsync(argv, { from: "user" });
    const code = process.exitCode;
    process.exitCode = undefined;
    return typeof code === "number" ? code : 0;
  } catch (err) {
    return reportError(err, debug);
  }
}

function reportError(err: unknown, debug: boolean): number {
  if (err instanceof CommanderError) {
    // --help and --version come through here with exit code 0; commander has already printed
    // its one-line message for usage errors
    return err.exitCode === 0 ? 0 : 2;
  }
  if (err instanceof InputError) {
    process.stderr.write(`arcfringe: ${err.message}\n`);
    if (debug && err.stack) process.stderr.write(err.stack + "\n");
    return 2;
  }
  const e = err as Error;
  process.stderr.write(
    `arcfringe: internal error: ${e?.message ?? String(err)} (rerun with --debug for the stack trace, and please report it)\n`,
  );
  if (debug && e?.stack) process.stderr.write(e.stack + "\n");
  return 3;
}
