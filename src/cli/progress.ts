/**
 * Progress display on stderr for long stages: a cli-progress bar with the current best χ² on a
 * terminal, plain stage lines otherwise (logs and CI), nothing with --quiet.
 */
import cliProgress from "cli-progress";

export class Progress {
  private bar: cliProgress.SingleBar | null = null;
  private current = "";
  private readonly quiet: boolean;
  private readonly tty: boolean;
  private lastLine = 0;

  constructor(quiet: boolean) {
    this.quiet = quiet;
    this.tty = process.stderr.isTTY === true;
  }

  /** A new stage: ends the previous bar and prints one line. */
  stage(name: string, detail?: string): void {
    if (this.quiet) return;
    this.stopBar();
    this.current = name;
    process.stderr.write(`[${name}] ${detail ?? ""}\n`);
  }

  /** Progress within the current stage; total 0 means unknown (a counter). */
  update(stage: string, done: number, total: number, info: string): void {
    if (this.quiet) return;
    if (!this.tty) {
      // Without a terminal, a line every 10 s is enough for a log.
      const now = Date.now();
      if (now - this.lastLine > 10_000) {
        process.stderr.write(`  ${stage}: ${done}${total > 0 ? `/${total}` : ""} ${info}\n`);
        this.lastLine = now;
      }
      return;
    }
    if (!this.bar || stage !== this.current) {
      this.stopBar();
      this.current = stage;
      this.bar = new cliProgress.SingleBar(
        { format: `  ${stage} |{bar}| {value}${total > 0 ? "/{total}" : ""} {info}`, stream: process.stderr, hideCursor: true, clearOnComplete: true },
        cliProgress.Presets.shades_classic,
      );
      this.bar.start(total > 0 ? total : Math.max(done, 1), done, { info });
    }
    if (total <= 0) this.bar.setTotal(Math.max(done, 1));
    this.bar.update(done, { info });
  }

  stop(): void {
    this.stopBar();
  }

  private stopBar(): void {
    if (this.bar) {
      this.bar.stop();
      this.bar = null;
    }
  }
}
