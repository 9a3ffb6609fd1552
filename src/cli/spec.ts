/**
 * One typed table per command drives both parsing and help, so they cannot drift
 * (STYLE.md §8). `buildCommand` turns a CommandSpec into a commander Command whose help reads
 * Usage, Options, Examples, in that order; option values are checked here, once, and a bad
 * value becomes one InputError line naming the flag and what is allowed.
 */
import { Command, Option } from "commander";
import { InputError } from "../errors.js";

export type OptionKind = "string" | "number" | "int" | "flag" | "list";

export interface OptionSpec {
  /** Long flag with its argument placeholder carrying the unit: "--cell <arcsec>". */
  flags: string;
  /** What it does; the unit is in the placeholder. */
  description: string;
  kind: OptionKind;
  /** Default value shown in help as "(default: …)". */
  defaultValue?: string | number | boolean;
  /** Allowed values, shown as "<a | b | c>". */
  choices?: readonly string[];
  /** Inclusive numeric range. */
  min?: number;
  max?: number;
  /** Why a value outside the range is wrong and what to try. */
  rangeHint?: string;
}

export interface ExampleSpec {
  /** What the example produces, shown as a comment line. */
  comment: string;
  command: string;
}

export interface CommandSpec<Opts = Record<string, unknown>> {
  name: string;
  /** Positional arguments as commander syntax: "<file>", "<files...>". */
  args: string;
  summary: string;
  options: OptionSpec[];
  examples: ExampleSpec[];
  action: (args: string[], opts: Opts) => Promise<number>;
}

/** Build the commander Command for a spec; the action's exit code goes to process.exitCode. */
export function buildCommand(spec: CommandSpec<any>): Command {
  const cmd = new Command(spec.name);
  cmd.description(spec.summary);
  if (spec.args) cmd.arguments(spec.args);
  for (const o of spec.options) {
    let description = o.description;
    // Flags have no value to show; commander prints the others' defaults (without JSON quotes).
    if (o.defaultValue !== undefined && o.kind === "flag") description += ` (default: ${o.defaultValue})`;
    const opt = new Option(o.flags, description);
    if (o.kind === "list") opt.argParser((v: string, prev: string[] | undefined) => [...(prev ?? []), v]);
    else if (o.kind !== "flag") opt.argParser((v: string) => parseValue(o, v));
    if (o.defaultValue !== undefined && o.kind !== "flag") opt.default(o.defaultValue, String(o.defaultValue));
    cmd.addOption(opt);
  }
  cmd.option("--debug", "print stack traces on errors");
  cmd.helpOption("-h, --help", "show this help");
  if (spec.examples.length > 0) {
    const lines = ["", "Examples:"];
    for (const ex of spec.examples) lines.push(`  # ${ex.comment}`, `  ${ex.command}`, "");
    cmd.addHelpText("after", lines.join("\n"));
  }
  cmd.action(async (...all: unknown[]) => {
    const command = all[all.length - 1] as Command;
    const opts = command.opts();
    const positional = (all.slice(0, -2) as (string | string[])[]).flat();
    process.exitCode = await spec.action(positional, opts);
  });
  return cmd;
}

function optionName(o: OptionSpec): string {
  return o.flags.split(/\s+/)[0];
}

function parseValue(o: OptionSpec, raw: string): string | number {
  const flag = optionName(o);
  if (o.choices && !o.choices.includes(raw)) {
    throw new InputError(`${flag} ${raw}: expected one of ${o.choices.join(", ")}`);
  }
  if (o.kind === "string") return raw;
  const value = Number(raw);
  if (raw.trim() === "" || !Number.isFinite(value)) {
    throw new InputError(`${flag} ${raw}: expected a finite number${placeholderUnit(o)}`);
  }
  if (o.kind === "int" && !Number.isInteger(value)) {
    throw new InputError(`${flag} ${raw}: expected a whole number`);
  }
  if ((o.min !== undefined && value < o.min) || (o.max !== undefined && value > o.max)) {
    const range = `[${o.min ?? "-inf"}, ${o.max ?? "inf"}]`;
    throw new InputError(`${flag} ${raw}: must lie in ${range}${o.rangeHint ? `; ${o.rangeHint}` : ""}`);
  }
  return value;
}

function placeholderUnit(o: OptionSpec): string {
  const m = /<([^>]+)>/.exec(o.flags);
  return m ? ` in ${m[1]}` : "";
}
