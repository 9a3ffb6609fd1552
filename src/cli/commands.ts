/** The command table: every `arcfringe` command, in the order `--help` lists them. */
import type { CommandSpec } from "./spec.js";
import { convertCommand } from "./convert.js";
import { demoCommand } from "./demo.js";
import { fitCommand } from "./fit.js";
import { imageCommand } from "./image.js";
import { inspectCommand } from "./inspect.js";
import { lensCommand } from "./lens.js";
import { planCommand } from "./plan.js";
import { simulateCommand } from "./simulate.js";

export const COMMANDS: CommandSpec<any>[] = [
  fitCommand,
  demoCommand,
  inspectCommand,
  imageCommand,
  simulateCommand,
  planCommand,
  lensCommand,
  convertCommand,
];
