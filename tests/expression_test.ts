// Expressions: our compiled code against mathjs's own evaluator (a
// general-purpose reference), the pulse shapes against their formulas, and
// the lock-down of the expression language.
import { all, create } from "mathjs";
import { assert, assertThrows } from "./assert.ts";
import { assertClose } from "./helpers.ts";
import { compileExpression, type Scope } from "../cli/case/expression.ts";
import { CaseError } from "../cli/case/errors.ts";
import { chirp, flattop, gauss, sinsq } from "../cli/case/pulses.ts";

const reference = create(all!);
const params = new Map<string, number | { re: number; im: number }>([
  ["g", 0.3],
  ["w", 2.5],
  ["z", { re: 0.5, im: -1.5 }],
]);
const scope: Scope = { params, allowTime: true };

const EXPRESSIONS = [
  "g*cos(w*t)",
  "sin(t)*exp(-t^2/4)",
  "g*exp(-i*w*t)",
  "sqrt(2)*cos(w*t + pi/3) - 3t",
  "(1 + 2i)^2 * t",
  "abs(1 + i)*t + re(z) - im(z)",
  "conj(z) * exp(i*t) / (2 + t^2)",
  "z^2 + z*t - sinh(t/3) + cosh(i*t)",
  "tanh(t) + atan2(t, 2) + max(t, 1) - min(t, 0.5)",
  "t < 1.5 ? g : w",
  "exp(log(2 + t)) + tan(t/7) + arg(z)",
  "-(t^3) + sqrt(z) * i",
];

Deno.test("compileExpression() agrees with mathjs evaluate on real and complex expressions", () => {
  for (const source of EXPRESSIONS) {
    const compiled = compileExpression(source, scope, ["coef"]);
    for (const t of [-1.3, 0, 0.7, 1.5, 2.9]) {
      const mine = compiled.at(t);
      const theirs = reference.evaluate(source, {
        t,
        g: 0.3,
        w: 2.5,
        z: reference.complex(0.5, -1.5),
      });
      const m = typeof mine === "number" ? { re: mine, im: 0 } : mine;
      const c = reference.complex(theirs);
      assertClose(
        m.re,
        c.re,
        { abs: 1e-13, rel: 1e-13 },
        `${source} at t=${t} (re)`,
      );
      assertClose(
        m.im,
        c.im,
        { abs: 1e-13, rel: 1e-13 },
        `${source} at t=${t} (im)`,
      );
    }
  }
});

Deno.test("sample() fills interleaved values that match at()", () => {
  const f = compileExpression("g*exp(-i*w*t)", scope, ["coef"]);
  const times = new Float64Array([0, 0.5, 1]);
  const out = new Float64Array(6);
  f.sample(times, out);
  times.forEach((t, k) => {
    const z = f.at(t) as { re: number; im: number };
    assertClose(out[2 * k]!, z.re, { abs: 0 });
    assertClose(out[2 * k + 1]!, z.im, { abs: 0 });
  });
});

Deno.test("pulse shapes follow their formulas", () => {
  // Gaussian with standard deviation w: exp(−(t−c)²/(2w²)).
  assertClose(gauss(3, 1, 2), Math.exp(-0.5), { rel: 1e-15 });
  assertClose(
    sinsq(5, 0, 10),
    1,
    { abs: 1e-15 },
    "sin² window peaks in the middle",
  );
  assertClose(sinsq(0, 0, 10), 0, { abs: 1e-15 });
  assertClose(sinsq(2.5, 0, 10), 0.5, { abs: 1e-15 });
  assertClose(
    flattop(0.5, 0, 10, 1),
    0.5,
    { abs: 1e-15 },
    "half-way up the ramp",
  );
  assertClose(flattop(5, 0, 10, 1), 1, { abs: 0 });
  assertClose(
    flattop(9.5, 0, 10, 1),
    0.5,
    { abs: 1e-15 },
    "half-way down the ramp",
  );
  assertClose(flattop(11, 0, 10, 1), 0, { abs: 0 });
  assertClose(chirp(2, 1, 0.5), Math.cos(2 + 0.25 * 4), { abs: 1e-15 });
  const f = compileExpression("step(t, 1) + box(t, 2, 3)", scope, ["coef"]);
  assert(f.at(0.5) === 0 && f.at(1) === 1 && f.at(2.5) === 2 && f.at(3) === 1);
});

Deno.test("compileExpression() refuses what the restricted language does not allow", () => {
  const bad: [string, string][] = [
    ["import({x: 1})", "unknown function"],
    ['evaluate("1+1")', "unknown function"],
    ["f(x) = x", "syntax is not supported"],
    ["z.re", "syntax is not supported"],
    ["[1, 2]", "syntax is not supported"],
    ['createUnit("foo")', "unknown function"],
    ['"text"', "is not a number"],
    ["5 cm", "unknown name"],
    ["gauss(t, 1)", "takes 3 arguments"],
    ["gauss(t, z, 1)", "needs real arguments"],
    ["omega * t", 'unknown name "omega"'],
  ];
  for (const [source, message] of bad) {
    assertThrows(
      () => compileExpression(source, scope, ["coef"]),
      CaseError,
      message,
    );
  }
  assertThrows(
    () => compileExpression("2*t", { params, allowTime: false }, ["params", "x"]),
    CaseError,
    "t cannot appear here",
  );
});

Deno.test("angular(f) turns a frequency in the case's unit into rad per time unit (2π·f for GHz with ns)", () => {
  // 5 GHz with times in ns: ω = 2π·5 rad/ns (the definition of a cyclic frequency, common practice)
  const scope: Scope = { params: new Map([["f", 5]]), allowTime: true, angularFactor: 2 * Math.PI };
  assertClose(compileExpression("angular(f)", scope, ["coef"]).at(0) as number, 10 * Math.PI, { rel: 1e-15 });
  assertClose(
    compileExpression("cos(angular(f)*t)", scope, ["coef"]).at(0.05) as number,
    Math.cos(Math.PI / 2),
    {
      abs: 1e-15,
    },
  );
  // dimensionless cases: angular(x) = x
  assertClose(
    compileExpression("angular(3)", { params: new Map(), allowTime: false }, ["x"]).at(0) as number,
    3,
    {
      abs: 0,
    },
  );
});

Deno.test("the bundled parser (deno task build) gives mathjs's own trees and syntax errors", async () => {
  // the bundle expression.ts loads, against the parse of a full mathjs instance (the general-purpose reference)
  const { parse } = await import(
    "../cli/case/mathjs_parse.bundle.js"
  ) as typeof import("../cli/case/mathjs_parse.ts");
  const shape = (node: import("mathjs").MathNode): string => {
    const kids: string[] = [];
    node.forEach((child) => kids.push(shape(child)));
    return `${node.type}(${kids.join(",")})`;
  };
  const more = [
    "a.b[2] = f(x) = {c: 1:3}",
    "[1, 2; 3, 4]'",
    "-t^2 + 2.5e-3t - 3 i / (1 + 1e+2)",
    't >= 1 and t < 2 or not (t == 3) ? "s" : 5 cm to m',
    "x!^2 % 3 mod 4 & 5 | 6 << 1 >> 2 >>> 3",
    "gauss(t, 10, 2) * cos(2 pi t) * sinsq(t, 1, 3) + conj(z) .* 2 ./ 3",
  ];
  for (const source of [...EXPRESSIONS, ...more]) {
    const ours = parse(source), theirs = reference.parse(source);
    assert(shape(ours) === shape(theirs), `${source}: ${shape(ours)} against ${shape(theirs)}`);
    assert(ours.toString() === theirs.toString(), `${source}: ${ours} against ${theirs}`);
  }
  for (const bad of ["2*", "(t", "cos(t))", "3 +* 4", "t ? 1", "[1, 2", "f(x,", "2 )", "a..b"]) {
    const message = (f: () => unknown) => {
      try {
        f();
      } catch (e) {
        return (e as Error).message;
      }
      return "parsed";
    };
    const ours = message(() => parse(bad));
    assert(ours !== "parsed" && ours === message(() => reference.parse(bad)), `${bad}: ${ours}`);
  }
});
