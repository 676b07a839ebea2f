/**
 * Output folders: made (with parents) and proved writable before any work
 * is done, so that a run never computes for minutes and then fails to save.
 *
 * @module
 */

import { join } from "node:path";
import { UsageError } from "../case/errors.ts";

/**
 * Makes `dir` (and its parents) and checks that a file can be written in it.
 *
 * @param dir the folder
 * @param flag the flag that named it, for messages (e.g. "--out")
 * @throws {UsageError} when it is empty, a file, or not writable
 */
export function ensureOutputDir(dir: string, flag: string): void {
  if (dir.trim() === "") {
    throw new UsageError(`${flag} needs a folder name; an empty one would write into the current folder`);
  }
  try {
    Deno.mkdirSync(dir, { recursive: true });
  } catch (e) {
    throw new UsageError(`${flag} ${dir}: cannot make this folder (${reason(e)}); choose another path`);
  }
  const probe = join(dir, `.ordo-write-test-${Deno.pid}`);
  try {
    Deno.writeTextFileSync(probe, "");
    Deno.removeSync(probe);
  } catch (e) {
    throw new UsageError(`${flag} ${dir}: cannot write in this folder (${reason(e)}); choose another path`);
  }
}

/**
 * Checks that the folder a file is to be written in exists.
 *
 * @param path the file
 * @param what what the file is, for messages
 * @throws {UsageError} when the folder is missing or is not a folder
 */
export function ensureParentDir(path: string, what: string): void {
  const parent = path.includes("/") ? path.slice(0, path.lastIndexOf("/")) || "/" : ".";
  let info: Deno.FileInfo;
  try {
    info = Deno.statSync(parent);
  } catch {
    throw new UsageError(`cannot write ${what} ${path}: the folder ${parent} does not exist; make it first`);
  }
  if (!info.isDirectory) throw new UsageError(`cannot write ${what} ${path}: ${parent} is not a folder`);
}

/** The operating system's reason, in words. */
export function reason(e: unknown): string {
  if (e instanceof Deno.errors.PermissionDenied) return "permission denied";
  if (e instanceof Deno.errors.AlreadyExists) return "a file of that name exists";
  if (e instanceof Deno.errors.NotFound) return "not found";
  if (e instanceof Deno.errors.NotADirectory) return "a file stands where a folder should be";
  return (e as Error)?.message ?? String(e);
}

/**
 * Writes a file the user named, turning what the system refuses into a message with the reason.
 *
 * @param path the file
 * @param text its content
 * @param what what the file is, for messages
 * @param mode permission bits to set (e.g. 0o755 for a script)
 * @throws {UsageError} when the folder is missing or the file cannot be written
 */
export function writeUserFile(path: string, text: string, what: string, mode?: number): void {
  ensureParentDir(path, what);
  try {
    Deno.writeTextFileSync(path, text);
    if (mode !== undefined) Deno.chmodSync(path, mode);
  } catch (e) {
    throw new UsageError(`cannot write ${what} ${path}: ${reason(e)}; choose another path`);
  }
}

/** Whether an error comes from the operating system (a full disk, a permission, a missing folder). */
export function isSystemError(e: unknown): boolean {
  return Object.values(Deno.errors).some((kind) => e instanceof kind) ||
    typeof (e as { code?: unknown })?.code === "string";
}
