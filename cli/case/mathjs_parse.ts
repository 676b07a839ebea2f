/**
 * The one part of mathjs that case expressions use: its parser, from an instance made of the parser and what it
 * depends on alone (nothing that evaluates, imports or defines units is reachable through it).
 *
 * `deno task build` bundles this module with what it imports into `mathjs_parse.bundle.js` beside it, which is
 * what expression.ts loads: about half the size of mathjs's single-file build (which holds every function) and
 * about 3 MB less resident memory per process (the `ordo run` peak-memory row of `deno task bench`). This file
 * gives the bundle its types, and the tests load it directly to check the bundle against it.
 *
 * @module
 */

import { create, parseDependencies } from "mathjs";

/** mathjs's `parse`: expression text to a syntax tree. */
export const parse = create({ parseDependencies: parseDependencies! }).parse;
