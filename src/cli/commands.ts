/** The command table: every `arcfringe` command, in the order `--help` lists them. */
import type { CommandSpec } from "./spec.js";

export const COMMANDS: CommandSpec<any>[] = [];
