/**
 * The shape of a case file, as a zod schema. Content checks that need more
 * than the shape (labels, dimensions, Hermiticity, parameter values) happen
 * when the model is built.
 *
 * @module
 */

import { z } from "zod";

/** A number or an expression of params. */
const scalar = z.union([z.number(), z.string()]);

/** A number (not NaN, as z.number() has it) or an expression. */
const isScalar = (x: unknown): x is number | string =>
  typeof x === "string" || (typeof x === "number" && !Number.isNaN(x));

const isEntry = (x: unknown): boolean =>
  isScalar(x) || (Array.isArray(x) && x.length === 2 && isScalar(x[0]) && isScalar(x[1]));

/**
 * A matrix entry: number, expression, or [re, im]. One predicate checks the three forms: a union schema tries
 * its forms in turn and records an issue for each one that fails, which made the entries of a d = 256 matrix
 * of [re, im] pairs take half a second to check. A wrong entry is reported as a union's would be.
 */
export const entrySchema = z.custom<number | string | [number | string, number | string]>(
  (x) => isEntry(x),
  { params: { form: "entry" } },
);

/**
 * Rows of entries, checked in one pass that reports the first wrong row or entry at its own path (a d = 256
 * case's two matrices hold 131 072 entries: checked one by one as schema elements, they took a quarter of a
 * second).
 */
const matrixRows = z.any().superRefine((rows, ctx) => {
  const wrong = (path: number[]) => ctx.addIssue({ code: "custom", path, params: { form: "entry" } });
  if (!Array.isArray(rows)) return wrong([]);
  for (let i = 0; i < rows.length; i++) {
    const row: unknown = rows[i];
    if (!Array.isArray(row)) return wrong([i]);
    for (let j = 0; j < row.length; j++) if (!isEntry(row[j])) return wrong([i, j]);
  }
}) as unknown as z.ZodType<EntrySpec[][]>;

/** An explicit matrix: rows of entries, or one expression of row and col (0-based) for every entry. */
export const matrixSchema = z.union([matrixRows, z.object({ entry: z.string() }).strict()]);

const termFields = {
  matrix: matrixSchema.optional(),
  op: z.string().optional(),
  coef: scalar.optional(),
  hc: z.boolean().optional(),
};

/** One term of H0 or V: `matrix` or `op`, with an optional `coef` and `hc`. */
export const termSchema = z.object(termFields).strict();

/** `[unperturbed]` and `[perturbation]`: a single term, or `terms`. */
export const sectionSchema = z.object({
  ...termFields,
  terms: z.array(termSchema).optional(),
}).strict();

const subsystemSchema = z.object({
  levels: z.array(z.string()).optional(),
  oscillator: z.number().int().min(1).optional(),
  spin: z.number().optional(),
}).strict();

const sweepAxisSchema = z.object({
  from: z.number().optional(),
  to: z.number().optional(),
  count: z.number().int().min(1).optional(),
  scale: z.enum(["linear", "log"]).optional(),
  values: z.array(z.number()).optional(),
}).strict();

const approxSchema = z.object({
  name: z.string(),
  target: z.string(),
  formula: z.string(),
  abs: z.number().positive().optional(),
  rel: z.number().positive().optional(),
}).strict();

/** A whole case file. */
export const caseSchema = z.object({
  title: z.string().optional(),
  params: z.record(z.union([z.number(), z.string(), z.tuple([scalar, scalar])]))
    .optional(),
  units: z.object({
    time: z.string().optional(),
    energy: z.string().optional(),
  }).strict().optional(),
  levels: z.object({
    names: z.array(z.string()).min(1).optional(),
    count: z.number().int().min(1).optional(),
  }).strict().optional(),
  subsystems: z.record(subsystemSchema).optional(),
  unperturbed: sectionSchema,
  perturbation: sectionSchema,
  start: z.object({
    state: z.string().optional(),
    amplitudes: z.array(entrySchema).optional(),
    subspace: z.array(z.string()).min(1).optional(),
  }).strict(),
  grid: z.object({
    t_start: scalar.default(0),
    t_end: scalar,
    steps: z.number().int().optional(),
    accuracy: z.number().positive().optional(),
    samples: z.number().int().default(101),
    operators: z.enum(["auto", "dense", "sparse"]).optional(),
  }).strict(),
  series: z.object({
    order: z.number().int(),
    targets: z.array(z.string()).optional(),
    tolerance: z.union([
      z.number().positive(),
      z.object({ abs: z.number().positive().optional(), rel: z.number().positive().optional() }).strict(),
    ]).optional(),
    strength: z.number().optional(),
    basis: z.enum(["bare", "eigen"]).optional(),
    picture: z.enum(["schrodinger", "interaction"]).optional(),
  }).strict(),
  sweep: z.record(sweepAxisSchema).optional(),
  approx: z.array(approxSchema).optional(),
  observable: z.array(z.object({ name: z.string(), op: z.string() }).strict()).optional(),
}).strict();

/** A case as written (after the shape check). */
export type CaseSpec = z.infer<typeof caseSchema>;
/** One term as written. */
export type TermSpec = z.infer<typeof termSchema>;
/** A section as written. */
export type SectionSpec = z.infer<typeof sectionSchema>;
/** A matrix as written. */
export type MatrixSpec = z.infer<typeof matrixSchema>;
/** A matrix entry as written. */
export type EntrySpec = z.infer<typeof entrySchema>;
/** The `[start]` table as written. */
export type StartSpec = CaseSpec["start"];

/**
 * Turns a zod issue into a message and a fix (for a union, pass {@link deepestIssue}'s pick: the caller needs
 * its path too).
 */
export function describeIssue(
  issue: z.ZodIssue,
): { message: string; fix: string } {
  switch (issue.code) {
    case "unrecognized_keys": {
      const known = knownKeysAt(issue.path);
      return {
        message: `unknown key${issue.keys.length > 1 ? "s" : ""} ${
          issue.keys.map((k) => `"${k}"`).join(", ")
        }`,
        fix: known.length ? `known keys here: ${known.join(", ")}` : "remove it",
      };
    }
    case "invalid_type":
      return issue.received === "undefined"
        ? {
          message: `missing required key (${issue.expected})`,
          fix: "add it; see `ordo init` for a complete example",
        }
        : {
          message: `expected ${issue.expected}, got ${issue.received}`,
          fix: `write a ${issue.expected} here`,
        };
    case "custom":
      if (issue.params?.form !== "entry") {
        return { message: issue.message, fix: "see `ordo init` for a complete example" };
      }
    // falls through: a matrix entry of the wrong form reads as a union's
    case "invalid_union":
      return {
        message: "value has the wrong form",
        fix: 'a number, an "expression", or [re, im]; matrices are arrays of rows',
      };
    case "invalid_enum_value":
      return {
        message: `"${issue.received}" is not allowed`,
        fix: `use one of: ${issue.options.join(", ")}`,
      };
    case "too_small":
      return { message: issue.message, fix: "use a larger value" };
    default:
      return {
        message: issue.message,
        fix: "see `ordo init` for a complete example",
      };
  }
}

/**
 * The issue to report: for a union that no form satisfied, the issue of the form that got furthest into the
 * value (a wrong matrix entry, rather than "the matrix is not an object"), when one got further than the union
 * itself; else the issue as it is.
 */
export function deepestIssue(issue: z.ZodIssue): z.ZodIssue {
  if (issue.code !== "invalid_union") return issue;
  let best: z.ZodIssue = issue;
  for (const error of issue.unionErrors) {
    for (const inner of error.issues) {
      const deep = deepestIssue(inner);
      if (deep.path.length > best.path.length) best = deep;
    }
  }
  return best;
}

/** Known keys of the object schema at a path (for "did you mean"). */
function knownKeysAt(path: (string | number)[]): string[] {
  // deno-lint-ignore no-explicit-any
  const unwrap = (s: any): any => {
    while (s instanceof z.ZodOptional || s instanceof z.ZodDefault) {
      s = s._def.innerType;
    }
    return s;
  };
  // deno-lint-ignore no-explicit-any
  let schema: any = unwrap(caseSchema);
  for (const part of path) {
    if (schema instanceof z.ZodObject) {
      schema = unwrap(schema.shape[part as string]);
    } else if (schema instanceof z.ZodRecord) {
      schema = unwrap(schema._def.valueType);
    } else if (schema instanceof z.ZodArray) schema = unwrap(schema._def.type);
    else return [];
  }
  return schema instanceof z.ZodObject ? Object.keys(schema.shape) : [];
}
