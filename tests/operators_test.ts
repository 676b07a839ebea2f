// Operator notation: algebraic identities that hold for spin and truncated
// oscillator operators (textbook facts), tensor embedding against mathjs's
// kron, and ket-bra resolution.
import { all, create } from "mathjs";
import { assert, assertEqual, assertThrows } from "./assert.ts";
import { assertClose } from "./helpers.ts";
import { evaluateOperator } from "../cli/case/operators.ts";
import { productSpace, spinLabels, type Subsystem } from "../cli/case/space.ts";
import { ComplexMatrix, type Operator } from "../cli/case/complex_matrix.ts";
import { toDense } from "../cli/case/sparse_matrix.ts";
import { CaseError } from "../cli/case/errors.ts";

const math = create(all!);
const noParams = { params: new Map(), allowTime: false };

function assertMatrixClose(
  x: Operator,
  y: Operator,
  tol: number,
  what: string,
) {
  const a = toDense(x), b = toDense(y);
  assertEqual(a.rows, b.rows, `${what}: rows`);
  for (let k = 0; k < a.data.length; k++) {
    assertClose(a.data[k]!, b.data[k]!, { abs: tol }, `${what} [${k}]`);
  }
}

function spinSpace(s: number): Subsystem[] {
  return [{ name: "q", kind: "spin", labels: spinLabels(s), spin: s }];
}

Deno.test("spin operators satisfy [Sx, Sy] = i Sz and S² = s(s+1) for s = 1/2 … 5/2", () => {
  for (const s of [0.5, 1, 1.5, 2, 2.5]) {
    const space = productSpace(spinSpace(s));
    const op = (text: string) => evaluateOperator(text, space, noParams, ["op"]).matrix;
    const comm = op("Sx_q*Sy_q - Sy_q*Sx_q");
    assertMatrixClose(
      comm,
      op("Sz_q").scale({ re: 0, im: 1 }),
      1e-13,
      `[Sx,Sy] for s=${s}`,
    );
    const s2 = op("Sx_q^2 + Sy_q^2 + Sz_q^2");
    assertMatrixClose(
      s2,
      ComplexMatrix.identity(space.dim).scale({ re: s * (s + 1), im: 0 }),
      1e-13,
      `S² for s=${s}`,
    );
    assertMatrixClose(
      op("S+_q"),
      op("Sx_q + i*Sy_q"),
      1e-14,
      `S+ for s=${s}`,
    );
  }
});

Deno.test("spin-1/2 Pauli operators are the textbook matrices", () => {
  const space = productSpace(spinSpace(0.5));
  const op = (text: string) => evaluateOperator(text, space, noParams, ["op"]).matrix;
  assertMatrixClose(
    op("σx_q"),
    new ComplexMatrix(2, 2, new Float64Array([0, 0, 1, 0, 1, 0, 0, 0])),
    0,
    "σx",
  );
  assertMatrixClose(
    op("σy_q"),
    new ComplexMatrix(2, 2, new Float64Array([0, 0, 0, -1, 0, 1, 0, 0])),
    0,
    "σy",
  );
  assertMatrixClose(
    op("σz_q"),
    new ComplexMatrix(2, 2, new Float64Array([1, 0, 0, 0, 0, 0, -1, 0])),
    0,
    "σz",
  );
  assertEqual(space.labels.join(" "), "+1/2 -1/2");
});

Deno.test("truncated oscillator: [a, a†] = 1 below the cutoff and a†a counts quanta", () => {
  const n = 6;
  const space = productSpace([{
    name: "m",
    kind: "oscillator",
    labels: Array.from({ length: n }, (_, k) => String(k)),
  }]);
  const op = (text: string) => evaluateOperator(text, space, noParams, ["op"]).matrix;
  const comm = op("a_m*a_m† - a_m†*a_m");
  for (let k = 0; k < n; k++) {
    // Below the cutoff the commutator is 1; the last Fock state carries −(n−1), the truncation's price.
    assertClose(
      comm.get(k, k).re,
      k < n - 1 ? 1 : -(n - 1),
      { abs: 1e-14 },
      `[a,a†] at ${k}`,
    );
  }
  assertMatrixClose(op("n_m"), op("a_m'*a_m"), 1e-14, "n = a†a (ASCII dagger)");
  for (let k = 0; k < n; k++) {
    assertClose(op("n_m").get(k, k).re, k, { abs: 1e-14 });
  }
});

Deno.test("local operators embed by tensor product in subsystem order (checked with mathjs kron)", () => {
  const space = productSpace([
    { name: "q", kind: "spin", labels: spinLabels(0.5), spin: 0.5 },
    { name: "m", kind: "oscillator", labels: ["0", "1", "2"] },
  ]);
  assertEqual(
    space.labels.join(" "),
    "+1/2,0 +1/2,1 +1/2,2 -1/2,0 -1/2,1 -1/2,2",
  );
  const mine = evaluateOperator(
    "Sz_q*n_m + 0.25*σx_q*(a_m + a_m†)",
    space,
    noParams,
    ["op"],
  ).matrix;
  const sz = [[0.5, 0], [0, -0.5]], sx = [[0, 1], [1, 0]];
  const quanta = [[0, 0, 0], [0, 1, 0], [0, 0, 2]];
  const x = [[0, 1, 0], [1, 0, Math.SQRT2], [0, Math.SQRT2, 0]];
  const ref = math.add(
    math.kron(sz, quanta),
    math.multiply(0.25, math.kron(sx, x)),
  ) as unknown as number[][];
  for (let i = 0; i < 6; i++) {
    for (let j = 0; j < 6; j++) {
      assertClose(mine.get(i, j).re, ref[i]![j]!, { abs: 1e-15 });
    }
  }
});

Deno.test("ket-bras resolve on full labels or on the one subsystem that has them; + h.c. is reported", () => {
  const space = productSpace([
    { name: "atom", kind: "levels", labels: ["g", "e"] },
    { name: "m", kind: "oscillator", labels: ["0", "1"] },
  ]);
  const full = evaluateOperator("|e,1><g,0|", space, noParams, ["op"]);
  assertEqual(full.matrix.get(3, 0).re, 1);
  const local = evaluateOperator("2*|e><g| + h.c.", space, noParams, ["op"]);
  assert(local.hc);
  // |e><g| on the atom, identity on the mode: (e,0)←(g,0) and (e,1)←(g,1)
  assertEqual(local.matrix.get(2, 0).re, 2);
  assertEqual(local.matrix.get(3, 1).re, 2);
  assertEqual(local.matrix.get(0, 2).re, 0);
  assertThrows(
    () => evaluateOperator("|x><g|", space, noParams, ["op"]),
    CaseError,
    "unknown label",
  );
  assertThrows(
    () =>
      evaluateOperator(
        "|0><1|",
        productSpace([
          { name: "a", kind: "oscillator", labels: ["0", "1"] },
          { name: "b", kind: "oscillator", labels: ["0", "1"] },
        ]),
        noParams,
        ["op"],
      ),
    CaseError,
    "ambiguous",
  );
  assertThrows(
    () => evaluateOperator("Sx_atom", space, noParams, ["op"]),
    CaseError,
    "is a spin operator, but atom is a set of labelled levels",
  );
  assertThrows(
    () => evaluateOperator("3", space, noParams, ["op"]),
    CaseError,
    "not an operator",
  );
});

Deno.test("Pauli algebra in the notation: σx σy = i σz, σ±, σ² = I, and the adjoint of a product (Pauli identities: Sakurai, Modern Quantum Mechanics §3.2, from memory)", () => {
  const space = productSpace(spinSpace(0.5));
  const op = (text: string) => evaluateOperator(text, space, noParams, ["op"]).matrix;
  assertMatrixClose(op("σx_q*σy_q"), op("i*σz_q"), 1e-15, "σx σy = i σz");
  assertMatrixClose(op("σy_q*σz_q"), op("i*σx_q"), 1e-15, "σy σz = i σx");
  for (const axis of ["x", "y", "z"]) assertMatrixClose(op(`σ${axis}_q^2`), op("I"), 1e-15, `σ${axis}² = I`);
  assertMatrixClose(op("σ+_q"), op("(σx_q + i*σy_q)/2"), 1e-15, "σ+ = (σx + iσy)/2");
  assertMatrixClose(op("σ-_q"), op("σ+_q†"), 1e-15, "σ- = σ+†");
  assertMatrixClose(op("S-_q"), op("S+_q'"), 1e-15, "S- = S+' (ASCII dagger)");
  // σ+ = |↑><↓|: the +1/2 row, -1/2 column
  assertEqual(op("σ+_q").get(0, 1).re, 1);
  assertMatrixClose(op("(σ+_q*σz_q)†"), op("σz_q*σ-_q"), 1e-15, "(AB)† = B†A†");
  assertMatrixClose(op("2 - σz_q"), op("2*I - σz_q"), 1e-15, "a number added is a multiple of I");
});

Deno.test("misspellings a user would try end in a CaseError that lists the notation, with an example", () => {
  const space = productSpace([
    { name: "q", kind: "spin", labels: spinLabels(0.5), spin: 0.5 },
    { name: "m", kind: "oscillator", labels: ["0", "1", "2"] },
  ]);
  const tries = [
    "sigmax(q)",
    "sigmaz(q)",
    "num(m)",
    "dag(a_m)",
    "adag_m",
    "a(m)",
    "destroy(m)",
    "create(m)",
    "qeye(q)",
    "id(q)",
    "sx_q",
    "Sx(q)",
    "sigma_x",
    "σx(q)",
    "X_q",
    "ad_m",
    "a_m^dagger",
  ];
  for (const text of tries) {
    const e = assertThrows(() => evaluateOperator(text, space, noParams, ["op"]), CaseError);
    assert(e.message.includes(`"${text}"`), `${text}: the message quotes what was written: ${e.message}`);
    assert(
      e.fix?.includes("Sx_q Sy_q Sz_q S+_q S-_q σx_q σy_q σz_q σ+_q σ-_q"),
      `${text}: lists the spin operators`,
    );
    assert(e.fix?.includes("a_m (lowering), n_m"), `${text}: lists the oscillator operators`);
    assert(e.fix?.includes('e.g. "g*(σ+_q*a_m + σ-_q*a_m†)"'), `${text}: gives an example`);
  }
  assertThrows(
    () => evaluateOperator("a_q", space, noParams, ["op"]),
    CaseError,
    "a is an oscillator operator",
  );
  assertThrows(
    () => evaluateOperator("Sz_r", space, noParams, ["op"]),
    CaseError,
    'there is no subsystem "r"',
  );
  assertThrows(() => evaluateOperator("n_m^0.5", space, noParams, ["op"]), CaseError, "whole power");
});

Deno.test("messages quote the text as written, never a rewrite (ket-bras, h.c., daggers, ladders)", () => {
  const space = productSpace([{ name: "atom", kind: "levels", labels: ["g", "e"] }]);
  for (const text of ["|e><g| + + H.c.", "|e><g| +* 2", "2*|e><g| + h.c. + 1"]) {
    const e = assertThrows(() => evaluateOperator(text, space, noParams, ["op"]), CaseError);
    assert(e.message.includes(`"${text}"`), e.message);
    assert(!e.message.includes("$"), `no placeholder in: ${e.message}`);
  }
  // "+ H.c." is the trade's other spelling of the same thing
  const r = evaluateOperator("0.5*|e><g| + H.c.", space, noParams, ["op"]);
  assert(r.hc);
  assertEqual(r.matrix.get(1, 0).re, 0.5);
});

// The sparse storage builds the same matrices as the dense one (every operation of the notation: sums,
// products, scalars, adjoints, powers, ket-bras, identities, tensor embedding); checked entry by entry.
Deno.test("operators stored sparse equal the dense ones, for every operation of the notation", () => {
  const subsystems: Subsystem[] = [
    { name: "q", kind: "spin", labels: spinLabels(1), spin: 1 },
    { name: "m", kind: "oscillator", labels: ["0", "1", "2", "3"] },
    { name: "p", kind: "spin", labels: spinLabels(0.5), spin: 0.5 },
  ];
  const dense = productSpace(subsystems),
    sparse = { ...productSpace(subsystems), storage: "sparse" as const };
  const texts = [
    "Sx_q*a_m + 0.5*σz_p - 2*I",
    "S+_q*a_m† + h.c.",
    "n_m^3 + (σ+_p*σ-_p)^2 - Sz_q*Sz_q/3",
    "(1 + 2i)*|+1,0,+1/2><-1,1,-1/2| + h.c.",
    "a_m'*a_m - n_m + I*0",
    "(Sx_q + Sy_q)^2*σx_p",
  ];
  for (const text of texts) {
    const d = toDense(evaluateOperator(text, dense, noParams, ["op"]).matrix);
    const s = evaluateOperator(text, sparse, noParams, ["op"]).matrix;
    assert(!(s instanceof ComplexMatrix), `${text}: stored sparse`);
    assertMatrixClose(s, d, 1e-14, text);
  }
});
