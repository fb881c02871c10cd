import { readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { elaborate, formatDiagnostics, parse } from "../../src/lang/index";
import { solveNetwork, toSolveJson } from "../../src/solver/index";

/**
 * The examples of docs/language.md are part of the language's tests. A fenced block's info string says what it
 * is (the words after `runnel`):
 *   (none)                       checks clean (no diagnostic at all) and every point solves;
 *   expect NAME=V[,V…] … [rel=R] also: probe NAME at point k equals the k-th value, within relative error R
 *                                (default 1e-6) — the check values of docs/physics.md;
 *   holds                        also: every `expect` statement holds at every point;
 *   breaks NAME[,NAME…]          also: each named expectation fails at some point, every other one holds at every point;
 *   fails                        has errors: the ```diagnostics block after it is exactly what
 *                                `runnel check net.runnel` prints;
 *   fragment                     a piece of a network shown for its syntax: it parses without a syntax error.
 * A ```json block right after prose that follows an example is that example's `runnel solve --json` document,
 * numbers shortened: the shape must be exactly the command's, and every number within 1e-4 of it (the residual:
 * at most what the page shows, times 100).
 */
const root = join(__dirname, "../..");

interface Block {
  info: string[];
  text: string;
  line: number;
}

function blocks(file: string): Block[] {
  const lines = readFileSync(join(root, file), "utf8").split("\n");
  const out: Block[] = [];
  for (let i = 0; i < lines.length; i++) {
    const open = /^```(\S+)(.*)$/.exec(lines[i]);
    if (!open) continue;
    const start = i + 1;
    let end = start;
    while (end < lines.length && lines[end] !== "```") end++;
    out.push({
      info: [open[1], ...open[2].trim().split(/\s+/).filter(Boolean)],
      text: lines.slice(start, end).join("\n") + "\n",
      line: start,
    });
    i = end;
  }
  return out;
}

const doc = blocks("docs/language.md");
const examples = doc.filter((b) => b.info[0] === "runnel");

function solved(text: string) {
  const r = elaborate(text);
  expect(r.diagnostics).toEqual([]);
  const run = solveNetwork(r.network!);
  expect(run.ok, run.failures.map((f) => f.message).join("; ")).toBe(true);
  return { net: r.network!, run, diagnostics: r.diagnostics };
}

/** Whether the shape (keys, kinds) of `actual` is `shown`'s and every number is close to it. */
function matches(shown: unknown, actual: unknown, path: string): void {
  if (typeof shown === "number") {
    expect(typeof actual, path).toBe("number");
    const a = actual as number;
    if (path.endsWith(".residual")) expect(Math.abs(a), path).toBeLessThanOrEqual(Math.abs(shown) * 100);
    else expect(Math.abs(a - shown), path).toBeLessThanOrEqual(1e-4 * Math.max(Math.abs(shown), Math.abs(a)));
    return;
  }
  if (shown === null || typeof shown !== "object") {
    expect(actual, path).toEqual(shown);
    return;
  }
  expect(actual !== null && typeof actual === "object", path).toBe(true);
  expect(Object.keys(actual as object), path).toEqual(Object.keys(shown));
  for (const [k, v] of Object.entries(shown)) matches(v, (actual as Record<string, unknown>)[k], `${path}.${k}`);
}

describe("docs/language.md examples", () => {
  it("has examples of every kind", () => {
    const kinds = new Set(examples.map((b) => b.info[1] ?? "plain"));
    for (const k of ["expect", "holds", "breaks", "fails", "fragment"]) expect(kinds).toContain(k);
  });

  for (const b of examples) {
    const kind = b.info[1] ?? "plain";
    it(`line ${b.line}: ${kind} ${b.info.slice(2).join(" ")}`.trim(), () => {
      if (kind === "fragment") {
        let error = false;
        parse(b.text).iterate({ enter: (n) => void (n.type.isError && (error = true)) });
        expect(error).toBe(false);
        return;
      }
      if (kind === "fails") {
        const next = doc[doc.indexOf(b) + 1];
        expect(next.info[0]).toBe("diagnostics");
        const r = elaborate(b.text);
        expect(r.ok).toBe(false);
        expect(formatDiagnostics("net.runnel", r.diagnostics) + "\n").toBe(next.text);
        return;
      }
      const { net, run } = solved(b.text);
      if (kind === "holds" || kind === "breaks") {
        const broken = new Set(kind === "breaks" ? b.info[2].split(",") : []);
        expect(net.expectations.length).toBeGreaterThan(0);
        net.expectations.forEach((x, i) => {
          const failing = run.points.filter((p) => p.expectations!.passed[i] !== 1).length;
          if (broken.has(x.name)) expect(failing, `${x.name} fails somewhere`).toBeGreaterThan(0);
          else expect(failing, `${x.name} holds everywhere`).toBe(0);
        });
        for (const name of broken) expect(net.expectations.map((x) => x.name)).toContain(name);
        return;
      }
      if (kind !== "expect") return;
      const rel = Number(b.info.find((w) => w.startsWith("rel="))?.slice(4) ?? 1e-6);
      for (const w of b.info.slice(2).filter((x) => !x.startsWith("rel="))) {
        const [name, list] = w.split("=");
        const want = list.split(",").map(Number);
        expect(run.points.length, name).toBe(want.length);
        want.forEach((v, k) => {
          const got = run.points[k].probes[name];
          expect(Math.abs(got - v), `${name} at point ${k}: ${got}`).toBeLessThanOrEqual(rel * Math.abs(v));
        });
      }
      expect(net.probes.length).toBeGreaterThan(0);
    });
  }

  it("the solve --json document shown is the first example's", () => {
    const json = doc.find((b) => b.info[0] === "json")!;
    const first = examples[0];
    const { net, run, diagnostics } = solved(first.text);
    matches(JSON.parse(json.text), toSolveJson(net, diagnostics, run, first.text), "document");
  });
});
