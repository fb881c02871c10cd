import { readdirSync, readFileSync } from "node:fs";
import { join } from "node:path";
import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { elaborate, LineIndex } from "../../src/lang/index";
import type { ElaborateOptions } from "../../src/lang/index";
import { STATEMENT_WORDS } from "../../src/lang/syntax";

/**
 * Elaboration never throws and always ends: random text and random mutations
 * of the examples. The work is bounded by the limits (smaller ones here, so a
 * mutated loop cannot ask for millions of devices), not by wall-clock asserts.
 */
const LIMITS: ElaborateOptions = {
  limits: { maxDevices: 20_000, maxWork: 200_000, maxSweepValues: 1000, maxPoints: 10_000 },
};

const examplesDir = join(__dirname, "../../examples");
const examples = readdirSync(examplesDir)
  .filter((f) => f.endsWith(".runnel"))
  .map((f) => readFileSync(join(examplesDir, f), "utf8"));

function checkInvariants(text: string): void {
  const r = elaborate(text, LIMITS);
  const lines = new LineIndex(text);
  expect(r.ok).toBe(!r.diagnostics.some((d) => d.severity === "error"));
  if (!r.ok) expect(r.network).toBeNull();
  for (const d of r.diagnostics) {
    expect(d.from).toBeGreaterThanOrEqual(0);
    expect(d.to).toBeGreaterThanOrEqual(d.from);
    expect(d.to).toBeLessThanOrEqual(text.length);
    expect(lines.position(d.from)).toEqual({ line: d.line, column: d.column });
    expect(d.message.length).toBeGreaterThan(0);
  }
  for (let i = 1; i < r.diagnostics.length; i++)
    expect(r.diagnostics[i].from).toBeGreaterThanOrEqual(r.diagnostics[i - 1].from);
}

const TOKENS = [
  ...STATEMENT_WORDS,
  "in",
  "from",
  "to",
  "step",
  "points",
  "log",
  "values",
  "mismatch",
  "runs",
  "seed",
  "avt",
  "gate=",
  "source=",
  "drain=",
  "well=",
  "bulk=",
  "w=",
  "l=",
  "value=",
  "x",
  "x{k}",
  "n{i}_{j}",
  "{",
  "}",
  "(",
  ")",
  "[",
  "]",
  "=",
  "..",
  ",",
  "+",
  "-",
  "*",
  "/",
  "^",
  "0",
  "1",
  "63",
  "0.45",
  "450mV",
  "10nA",
  "300K",
  "2u",
  "1e-15",
  "µ",
  "exp(",
  "voltage(",
  "current(",
  "ut",
  "kappa",
  "#",
  "\n",
  " ",
  "\t",
  "\r\n",
];

const tokenText = fc.array(fc.constantFrom(...TOKENS), { maxLength: 120 }).map((t) => t.join(" "));

const mutation = fc.oneof(
  fc.record({ kind: fc.constant("delete" as const), at: fc.nat(), len: fc.integer({ min: 1, max: 40 }) }),
  fc.record({
    kind: fc.constant("insert" as const),
    at: fc.nat(),
    text: fc.oneof(fc.constantFrom(...TOKENS), fc.string({ maxLength: 8 })),
  }),
  fc.record({ kind: fc.constant("duplicate" as const), at: fc.nat(), len: fc.integer({ min: 1, max: 200 }) }),
  fc.record({
    kind: fc.constant("replace" as const),
    at: fc.nat(),
    char: fc.string({ minLength: 1, maxLength: 1, unit: "binary" }),
  }),
);

type Mutation = typeof mutation extends fc.Arbitrary<infer M> ? M : never;

function mutate(text: string, ms: Mutation[]): string {
  let t = text;
  for (const m of ms) {
    const at = t.length ? m.at % (t.length + 1) : 0;
    if (m.kind === "delete") t = t.slice(0, at) + t.slice(at + m.len);
    else if (m.kind === "insert") t = t.slice(0, at) + m.text + t.slice(at);
    else if (m.kind === "duplicate") t = t.slice(0, at) + t.slice(at, at + m.len) + t.slice(at);
    else t = t.slice(0, at) + m.char + t.slice(at + 1);
  }
  return t;
}

describe("elaboration never throws and keeps every position inside the file", () => {
  it("random unicode text", { timeout: 120_000 }, () => {
    fc.assert(fc.property(fc.string({ maxLength: 300, unit: "binary" }), checkInvariants), { numRuns: 300 });
  });

  it("random sequences of language tokens", { timeout: 120_000 }, () => {
    fc.assert(fc.property(tokenText, checkInvariants), { numRuns: 400 });
  });

  it("random mutations of the examples", { timeout: 120_000 }, () => {
    fc.assert(
      fc.property(fc.nat({ max: examples.length - 1 }), fc.array(mutation, { minLength: 1, maxLength: 6 }), (i, ms) =>
        checkInvariants(mutate(examples[i], ms)),
      ),
      { numRuns: 300 },
    );
  });
});
