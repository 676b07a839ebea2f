/**
 * Errors about the user's input. The CLI prints them without a stack trace
 * and exits with code 2.
 *
 * @module
 */

/** A path of keys and array indices into a case, e.g. `["perturbation", "terms", 1, "coef"]`. */
export type KeyPath = (string | number)[];

/** Formats a key path the way the user writes it: `perturbation.terms[1].coef`. */
export function formatKeyPath(path: KeyPath): string {
  let out = "";
  for (const part of path) {
    out += typeof part === "number" ? `[${part}]` : (out ? "." : "") + part;
  }
  return out;
}

/** Text the user wrote, quoted for a message: long text is cut to its start (messages stay one screen). */
export function quoted(text: string, limit = 120): string {
  return `"${text.length > limit ? `${text.slice(0, limit - 20)}… (${text.length} characters)` : text}"`;
}

/** Something in a case file (or a flag standing in for one) is wrong. */
export class CaseError extends Error {
  /** Where in the case: a key path. */
  readonly path: KeyPath;
  /** How to fix it, one sentence. */
  readonly fix: string | undefined;
  /** The case file, once known. */
  file: string | undefined;
  /** The 1-based line in the case file, once known. */
  line: number | undefined;

  /**
   * @param message what was wrong, with the offending value
   * @param path the key path in the case
   * @param fix how to fix it
   */
  constructor(message: string, path: KeyPath = [], fix?: string) {
    super(message);
    this.name = "CaseError";
    this.path = path;
    this.fix = fix;
  }

  /** The one-line report: `file:line: key: what. fix`. */
  report(): string {
    const where = [this.file, this.line].filter((x) => x !== undefined).join(
      ":",
    );
    const key = formatKeyPath(this.path);
    let text = (where ? `${where}: ` : "") + (key ? `${key}: ` : "") +
      this.message;
    if (this.fix) text += `\n  fix: ${this.fix}`;
    return text;
  }
}

/** A command line that cannot be carried out (unknown command, bad flag). */
export class UsageError extends Error {
  /**
   * @param message what was wrong
   */
  constructor(message: string) {
    super(message);
    this.name = "UsageError";
  }
}

/** A result file could not be written (disk full, permissions changed): exit 3, saying what was kept. */
export class OutputError extends Error {
  /**
   * @param message what could not be written, why, and what is safe on disk
   */
  constructor(message: string) {
    super(message);
    this.name = "OutputError";
  }
}
