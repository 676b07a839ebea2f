/**
 * Reading a case file: TOML (or JSON with the same structure), checked
 * against the schema, with errors pointing at the file, key and line.
 *
 * @module
 */

import { createHash } from "node:crypto";
import { parse as parseToml, TomlError } from "smol-toml";
import { CaseError, type KeyPath } from "./errors.ts";
import { caseSchema, type CaseSpec, deepestIssue, describeIssue } from "./schema.ts";

/** A case as read from disk. */
export interface CaseSource {
  /** The file name as given (or "<text>"). */
  file: string;
  /** The raw text. */
  text: string;
  /** "toml" or "json". */
  format: "toml" | "json";
  /** SHA-256 of the text, hex. */
  sha256: string;
  /** The validated structure. */
  spec: CaseSpec;
}

/**
 * Parses and shape-checks case text.
 *
 * @param text the file's contents
 * @param file the file name, used in messages and to pick the format (`.json` → JSON)
 * @returns the validated case
 * @throws {CaseError} with file and line set, when the text is not a valid case
 * @example
 * ```ts
 * import { ok as assert } from "node:assert/strict";
 * import { parseCase } from "./parse.ts";
 * const c = parseCase(`
 * [unperturbed]
 * matrix = [[0, 0], [0, 1]]
 * [perturbation]
 * matrix = [[0, 0.1], [0.1, 0]]
 * [start]
 * state = "0"
 * [grid]
 * t_end = 10
 * steps = 100
 * [series]
 * order = 2
 * `, "two_level.toml");
 * assert(c.spec.series.order === 2);
 * ```
 */
export function parseCase(text: string, file = "<text>"): CaseSource {
  const format = file.toLowerCase().endsWith(".json") ? "json" : "toml";
  let raw: unknown;
  try {
    raw = format === "json" ? JSON.parse(text) : parseToml(text);
  } catch (e) {
    const err = new CaseError(
      `not valid ${format.toUpperCase()}: ${firstLine((e as Error).message)}`,
      [],
      format === "json"
        ? "check commas, quotes and brackets"
        : "check quotes, brackets and `key = value` syntax",
    );
    err.file = file;
    if (e instanceof TomlError) err.line = e.line;
    else err.line = jsonErrorLine(text, (e as Error).message);
    throw err;
  }
  const result = caseSchema.safeParse(raw);
  if (!result.success) {
    const issue = deepestIssue(result.error.issues[0]!);
    const { message, fix } = describeIssue(issue);
    throw withLocation(
      new CaseError(message, issue.path, fix),
      file,
      text,
      format,
    );
  }
  const sha256 = createHash("sha256").update(text).digest("hex");
  return { file, text, format, sha256, spec: result.data };
}

/**
 * Reads a case file from disk and parses it.
 *
 * @param file path to a `.toml` or `.json` case
 * @returns the validated case
 * @throws {CaseError} when the file cannot be read or is not a valid case
 */
export function readCase(file: string): CaseSource {
  let text: string;
  try {
    text = readBounded(file, MAX_CASE_BYTES);
  } catch (e) {
    const err = e instanceof CaseError ? e : new CaseError(
      e instanceof Deno.errors.NotFound ? "no such file" : `cannot read the file: ${(e as Error).message}`,
      [],
      "give the path of a .toml or .json case file (`ordo init NAME` writes one)",
    );
    err.file = file;
    throw err;
  }
  return parseCase(text, file);
}

/** The largest case file ordo reads (a case is a few kilobytes; large operators are written as expressions). */
export const MAX_CASE_BYTES = 16 * 1024 * 1024;

/** Reads at most `limit` bytes of a file (a device such as /dev/zero never ends), refusing a longer one. */
function readBounded(file: string, limit: number): string {
  const handle = Deno.openSync(file, { read: true });
  try {
    if (handle.statSync().isDirectory) {
      throw new CaseError("is a folder, not a case file", [], "give the path of a .toml or .json case file");
    }
    // a buffer that grows with what is read (a case is small: no 16 MiB up front)
    let buffer = new Uint8Array(64 * 1024);
    let size = 0;
    while (size <= limit) {
      if (size === buffer.length) {
        const larger = new Uint8Array(Math.min(2 * buffer.length, limit + 1));
        larger.set(buffer);
        buffer = larger;
      }
      const n = handle.readSync(buffer.subarray(size));
      if (n === null || n === 0) break;
      size += n;
    }
    if (size > limit) {
      throw new CaseError(
        `is longer than the ${limit / 1024 ** 2} MiB a case file may be`,
        [],
        'write large operators as expressions (matrix = { entry = "…" }) rather than as tables',
      );
    }
    return new TextDecoder().decode(buffer.subarray(0, size));
  } finally {
    handle.close();
  }
}

/** Runs `work` on a case, putting the case's file and line on any case error it raises. */
export function located<T>(source: CaseSource, work: () => T): T {
  try {
    return work();
  } catch (e) {
    if (e instanceof CaseError) throw withLocation(e, source.file, source.text, source.format);
    throw e;
  }
}

/** Sets file and line on a case error from its key path. */
export function withLocation(
  err: CaseError,
  file: string,
  text: string,
  format: "toml" | "json",
): CaseError {
  err.file ??= file;
  err.line ??= format === "toml" ? locateToml(text, err.path) : locateJson(text, err.path);
  return err;
}

function firstLine(s: string): string {
  return s.split("\n")[0]!.trim();
}

function jsonErrorLine(text: string, message: string): number | undefined {
  const m = /position (\d+)/.exec(message) ?? /line (\d+)/.exec(message);
  if (!m) return undefined;
  if (message.includes("line ")) return Number(m[1]);
  return text.slice(0, Number(m[1])).split("\n").length;
}

/**
 * The line of the deepest key of `path` written in TOML text: table headers
 * (`[a.b]`, `[[a.b]]` counted per array), dotted keys and `key = value`
 * lines are followed; entries inside inline arrays resolve to their key.
 */
export function locateToml(text: string, path: KeyPath): number | undefined {
  const lines = text.split("\n");
  const arrayCounts = new Map<string, number>();
  let table: KeyPath = [];
  let best: { line: number; depth: number } | undefined;
  const consider = (keyPath: KeyPath, line: number) => {
    let depth = 0;
    while (
      depth < keyPath.length && depth < path.length &&
      keyPath[depth] === path[depth]
    ) depth++;
    if (
      depth === keyPath.length && depth > 0 && (!best || depth > best.depth)
    ) best = { line, depth };
  };
  const splitKey = (k: string): string[] => k.split(".").map((p) => p.trim().replace(/^["']|["']$/g, ""));
  lines.forEach((raw, idx) => {
    const line = raw.trim();
    let m: RegExpExecArray | null;
    if ((m = /^\[\[\s*([^\]]+?)\s*\]\]/.exec(line))) {
      const key = splitKey(m[1]!);
      const id = key.join(".");
      const n = arrayCounts.get(id) ?? 0;
      arrayCounts.set(id, n + 1);
      table = [...key, n];
      consider(table, idx + 1);
    } else if ((m = /^\[\s*([^\]]+?)\s*\]/.exec(line))) {
      table = splitKey(m[1]!);
      consider(table, idx + 1);
    } else if ((m = /^([A-Za-z0-9_."' -]+?)\s*=/.exec(line))) {
      consider([...table, ...splitKey(m[1]!)], idx + 1);
    }
  });
  return best?.line;
}

/** The line of the last named key of `path` in JSON text (first occurrence after its parents). */
export function locateJson(text: string, path: KeyPath): number | undefined {
  let from = 0;
  let found: number | undefined;
  for (const part of path) {
    if (typeof part !== "string") continue;
    const at = text.indexOf(`"${part}"`, from);
    if (at < 0) break;
    from = at;
    found = text.slice(0, at).split("\n").length;
  }
  return found;
}
