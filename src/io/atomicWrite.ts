/**
 * Atomic file writes: the bytes go to a temporary file in the destination folder, which is then
 * renamed over the destination. A reader therefore sees either the old file or the complete new
 * one, never a half-written file (rename is atomic within one file system, POSIX rename(2)).
 */
import { writeFileSync, renameSync, unlinkSync, mkdirSync } from "node:fs";
import { dirname, basename, join } from "node:path";
import { randomBytes } from "node:crypto";

/**
 * Write `data` to `path` atomically (temporary file + rename). Creates the parent folder.
 * @param path destination file path
 * @param data bytes or UTF-8 text
 * Reference: POSIX rename(2) atomicity within one file system.
 */
export function writeFileAtomic(path: string, data: Uint8Array | string): void {
  const dir = dirname(path);
  mkdirSync(dir, { recursive: true });
  // Same folder as the target, so the rename never crosses a file-system boundary.
  const tmp = join(dir, `.${basename(path)}.${process.pid}.${randomBytes(4).toString("hex")}.tmp`);
  try {
    writeFileSync(tmp, data);
    renameSync(tmp, path);
  } catch (err) {
    try {
      unlinkSync(tmp);
    } catch {
      // the temporary file may never have been created
    }
    throw err;
  }
}
