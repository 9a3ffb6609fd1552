/**
 * Typed errors. Library code throws them; `src/cli` turns them into one stderr line and an
 * exit code in one place (exit 2 for InputError). A FitWarning is not thrown: it is collected
 * into result.json and makes the CLI exit 1.
 */

/** Bad input the user can fix: malformed file, bad option, bad model file. Exit code 2. */
export class InputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "InputError";
  }
}

/** A warning the user must see; collected, never thrown. */
export interface FitWarning {
  code: string;
  message: string;
}
