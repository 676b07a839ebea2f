// Operator notation: algebraic identities that hold for spin and truncated
// oscillator operators (textbook facts), tensor embedding against mathjs's
// kron, and ket-bra resolution.
import { all, create } from "mathjs";
import { assert, assertEqual, assertThrows } from "./assert.ts";
import { assertClose } from "./helpers.ts";
import { evaluateOperator } from "../cli/case/operators.ts";
import { productSpace, spinLabels, type Subsystem } from "../cli/case/space.ts";
import { ComplexMatrix } from "../cli/case/complex_matrix.ts";
import { CaseError } from "../cli/case/errors.ts";

const math = create(all!);
const noParams = { params: new Map(), allowTime: false };

function assertMatrixClose(
  a: ComplexMatrix,
  b: ComplexMatrix,
  tol: number,
  what: string,
) {
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
    const comm = op("sx(q)*sy(q) - sy(q)*sx(q)");
    assertMatrixClose(
      comm,
      op("sz(q)").scale({ re: 0, im: 1 }),
      1e-13,
      `[Sx,Sy] for s=${s}`,
    );
    const s2 = op("sx(q)^2 + sy(q)^2 + sz(q)^2");
    assertMatrixClose(
      s2,
      ComplexMatrix.identity(space.dim).scale({ re: s * (s + 1), im: 0 }),
      1e-13,
      `S² for s=${s}`,
    );
    assertMatrixClose(
      op("splus(q)"),
      op("sx(q) + i*sy(q)"),
      1e-14,
      `S+ for s=${s}`,
    );
  }
});

Deno.test("spin-1/2 Pauli operators are the textbook matrices", () => {
  const space = productSpace(spinSpace(0.5));
  const op = (text: string) => evaluateOperator(text, space, noParams, ["op"]).matrix;
  assertMatrixClose(
    op("sigmax(q)"),
    new ComplexMatrix(2, 2, new Float64Array([0, 0, 1, 0, 1, 0, 0, 0])),
    0,
    "σx",
  );
  assertMatrixClose(
    op("sigmay(q)"),
    new ComplexMatrix(2, 2, new Float64Array([0, 0, 0, -1, 0, 1, 0, 0])),
    0,
    "σy",
  );
  assertMatrixClose(
    op("sigmaz(q)"),
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
  const comm = op("a(m)*adag(m) - adag(m)*a(m)");
  for (let k = 0; k < n; k++) {
    // Below the cutoff the commutator is 1; the last Fock state carries −(n−1), the truncation's price.
    assertClose(
      comm.get(k, k).re,
      k < n - 1 ? 1 : -(n - 1),
      { abs: 1e-14 },
      `[a,a†] at ${k}`,
    );
  }
  assertMatrixClose(op("num(m)"), op("adag(m)*a(m)"), 1e-14, "num = a†a");
  for (let k = 0; k < n; k++) {
    assertClose(op("num(m)").get(k, k).re, k, { abs: 1e-14 });
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
    "sz(q)*num(m) + 0.25*sigmax(q)*(a(m) + adag(m))",
    space,
    noParams,
    ["op"],
  ).matrix;
  const sz = [[0.5, 0], [0, -0.5]], sx = [[0, 1], [1, 0]];
  const num = [[0, 0, 0], [0, 1, 0], [0, 0, 2]];
  const x = [[0, 1, 0], [1, 0, Math.SQRT2], [0, Math.SQRT2, 0]];
  const ref = math.add(
    math.kron(sz, num),
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
    () => evaluateOperator("sx(atom)", space, noParams, ["op"]),
    CaseError,
    "does not apply",
  );
  assertThrows(
    () => evaluateOperator("3", space, noParams, ["op"]),
    CaseError,
    "not an operator",
  );
});
