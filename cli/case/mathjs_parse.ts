/**
 * The one part of mathjs that case expressions use: its parser, from an instance made of the parser and what it
 * depends on alone (nothing that evaluates, imports or defines units is reachable through it), taken from
 * mathjs's number-only entry. Parsing makes a syntax tree and never computes, so numbers-only loses nothing
 * here; the entry's functions have far fewer typed signatures to build when the instance is made.
 *
 * `deno task build` bundles this module with what it imports into `mathjs_parse.bundle.js` beside it, which is
 * what expression.ts loads: 142 KB against the 646 KB of mathjs's single-file build (which holds every
 * function). Its instance is made in about 50 ms, where the same parser from mathjs's full entry took 130 ms or
 * more, and a process holds some 8 MB less resident memory than with the single-file build (the `ordo run`
 * peak-memory row of `deno task bench`). This file gives the bundle its types; the tests check the
 * bundle's trees and syntax errors against a full mathjs instance.
 *
 * @module
 */

import { create, parseDependencies } from "mathjs/number";

/** mathjs's `parse`: expression text to a syntax tree. */
export const parse = create({ parseDependencies: parseDependencies! }).parse;
