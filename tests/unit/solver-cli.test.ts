/**
 * `runnel solve FILE --json` on every example (docs/language.md, The runnel command): one
 * JSON document, ok, every point with its method, and KCL residuals that are
 * negligible against the network's currents. The mirror bank is solved by
 * Newton and says why; the exact published check values are in
 * solver-physics.test.ts.
 */
import { spawnSync } from "node:child_process";
import { mkdtempSync, readdirSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { HeldBytes, MAX_PRINTED_VALUES, main } from "../../scripts/runnel";
import type { SolveJson } from "../../src/solver/json";

const root = join(__dirname, "../..");
const examples = readdirSync(join(root, "examples")).filter((f) => f.endsWith(".runnel"));

function solveJson(file: string): { code: number; doc: SolveJson; err: string } {
  let out = "";
  let err = "";
  const code = main(["solve", file, "--json"], { out: (t) => (out += t), err: (t) => (err += t) });
  return { code, doc: JSON.parse(out) as SolveJson, err };
}

describe("runnel solve --json on the examples", () => {
  it("there are examples to solve", () => {
    expect(examples.length).toBeGreaterThanOrEqual(6);
  });

  it.each(examples)(
    "%s solves: ok, exit 0, a method on every point, KCL residual ≤ 1e-9 of the largest current",
    (f) => {
      const { code, doc } = solveJson(join(root, "examples", f));
      expect(doc.diagnostics.filter((d) => d.severity === "error")).toEqual([]);
      expect(code).toBe(0);
      expect(doc.ok).toBe(true);
      expect(doc.points.length).toBeGreaterThan(0);
      for (const p of doc.points) {
        expect(["linear", "newton"]).toContain(p.solver.method);
        expect(p.solver.reason?.length).toBeGreaterThan(10);
        let imax = 0;
        for (const d of Object.values(p.devices)) imax = Math.max(imax, Math.abs(d.current));
        expect(p.solver.residual).toBeLessThanOrEqual(1e-9 * imax);
      }
    },
  );

  it("the mirror bank is solved by Newton, saying which gate is on an internal node", () => {
    const { doc } = solveJson(join(root, "examples", "mirror.runnel"));
    expect(doc.points[0].solver.method).toBe("newton");
    expect(doc.points[0].solver.reason).toBe("gate of diode is on internal node x");
    // W/L ratios 1, 2, 4, 8: gain = ratio·(1 − e^{−Vout/U_T})/(1 − e^{−Vx/U_T}) (docs/physics.md §8 Current mirror;
    // Mead 1989 [confirmed record; formula derived]).
    const p = doc.points[0];
    const ut = (1.380649e-23 * 300) / 1.602176634e-19;
    const factor = (1 - Math.exp(-p.nodes.vout / ut)) / (1 - Math.exp(-p.nodes.x / ut));
    for (let k = 0; k < 4; k++) expect(p.probes[`gain${k}`]! / (2 ** k * factor)).toBeCloseTo(1, 9);
  });

  it("the exact command line prints one document and exits 0 (spawned)", () => {
    const r = spawnSync("npm", ["run", "--silent", "runnel", "--", "solve", "examples/divider.runnel", "--json"], {
      cwd: root,
      encoding: "utf8",
    });
    expect(r.status).toBe(0);
    const doc = JSON.parse(r.stdout) as SolveJson;
    expect(doc).toMatchObject({ network: "divider", ok: true });
    expect(doc.points[0].solver.method).toBe("linear");
  });

  it("usage errors exit 2; an unsolvable network exits 1 with ok false and no points", () => {
    const io = { out: () => undefined, err: () => undefined };
    expect(main(["solve"], io)).toBe(2);
    expect(main(["solve", join(root, "examples", "nope.runnel"), "--json"], io)).toBe(2);
    const dir = mkdtempSync(join(tmpdir(), "runnel-solve-"));
    const file = join(dir, "push.runnel");
    writeFileSync(
      file,
      "rail gnd = 0\nrail vd = 1\nrail vg = 0.5\nnfet m gate=vg source=x drain=vd\ninject push from=gnd to=x value=1n\n",
    );
    const { code, doc } = solveJson(file);
    expect(code).toBe(1);
    expect(doc.ok).toBe(false);
    expect(doc.points).toEqual([]);
    expect(doc.diagnostics[0]).toMatchObject({ severity: "error", line: 4 });
  });

  it("a run's document is printed a point at a time, exactly as JSON.stringify(doc, null, 2) prints it whole", () => {
    let out = "";
    let writes = 0;
    const code = main(["solve", join(root, "examples", "biassweep.runnel"), "--json"], {
      out: (t) => ((out += t), writes++),
      err: () => undefined,
    });
    expect(code).toBe(0);
    const doc = JSON.parse(out) as SolveJson;
    expect(doc.points.length).toBeGreaterThan(1);
    expect(writes).toBeGreaterThan(doc.points.length);
    expect(out).toBe(`${JSON.stringify(doc, null, 2)}\n`);
  });

  it("a run that would print more than MAX_PRINTED_VALUES is refused before solving, at its sweep's line", () => {
    const dir = mkdtempSync(join(tmpdir(), "runnel-solve-"));
    const file = join(dir, "big.runnel");
    // 1,000 × 1,000 points of a one-device network: a million points, about 2e7 values.
    writeFileSync(
      file,
      "param a = 0.6\nparam b = 1n\nrail vdd = 1.8\nrail gnd = 0\nrail g = a\nnfet m gate=g source=x drain=vdd\ninject s from=x to=gnd value=b\nsweep a from 0.5 to 0.7 points 1000\nsweep b from 1n to 2n points 1000\n",
    );
    const { code, doc } = solveJson(file);
    expect(code).toBe(1);
    expect(doc.ok).toBe(false);
    expect(doc.points).toEqual([]);
    expect(doc.diagnostics[0]).toMatchObject({ severity: "error", line: 8 });
    expect(doc.diagnostics[0].message).toMatch(
      /would print about .* values \(1,000,000 points of 4 nodes and 1 device\), more than the command line's 10,000,000/,
    );
    expect(MAX_PRINTED_VALUES).toBe(10_000_000);
  });

  it("a probe that is not a finite number prints null with a warning at the probe's line", () => {
    const dir = mkdtempSync(join(tmpdir(), "runnel-solve-"));
    const file = join(dir, "nan.runnel");
    writeFileSync(
      file,
      "param z = 0\nrail vdd = 1.8\nrail gnd = 0\nrail gb = 0.6\nnfet m1 gate=gb source=x drain=vdd\ninject s from=x to=gnd value=1n\nprobe c = 1/z\nprobe v = voltage(x)\nsweep z values [1, 0]\n",
    );
    const { code, doc } = solveJson(file);
    expect(code).toBe(0);
    expect(doc.points[0].probes.c).toBe(1);
    expect(doc.points[1].probes.c).toBeNull();
    expect(doc.diagnostics).toEqual([
      {
        severity: "warning",
        line: 7,
        column: 7,
        message:
          "probe c is not a finite number (a division by zero, or a logarithm or root out of its domain): printed as null (first at point 1)",
      },
    ]);
  });
});

describe("runnel solve output options", () => {
  const biassweep = join(root, "examples", "biassweep.runnel");
  const grid = join(root, "examples", "grid32.runnel");
  const run = (...args: string[]) => {
    let out = "";
    let err = "";
    const code = main(["solve", ...args], { out: (t) => (out += t), err: (t) => (err += t) });
    return { code, out, err };
  };
  const doc = JSON.parse(run(biassweep, "--json").out) as SolveJson;

  it("--ndjson prints each point of the document on a line of its own, then the document without its points", () => {
    const r = run(biassweep, "--ndjson");
    expect(r.code).toBe(0);
    const lines = r.out.trimEnd().split("\n");
    expect(lines.length).toBe(doc.points.length + 1);
    expect(lines.slice(0, -1).map((l) => JSON.parse(l))).toEqual(doc.points);
    const { points: _, ...head } = doc;
    expect(JSON.parse(lines.at(-1)!)).toEqual(head);
    // Compact: JSON.stringify's own text of each point.
    expect(lines[0]).toBe(JSON.stringify(doc.points[0]));
  });

  it("--csv prints one table: a row per point for probes, a row per point and element otherwise", () => {
    const probes = run(biassweep, "--csv", "probes").out.trimEnd().split("\r\n");
    expect(probes[0]).toBe("point,sample,vv,vh,iin,temp,peak,spread,method,iterations,residual_A,error");
    expect(probes.length).toBe(doc.points.length + 1);
    const row = probes[3].split(",");
    expect(Number(row[6])).toBe(doc.points[2].probes.peak);
    expect(row[8]).toBe("linear");
    const nodes = run(grid, "--csv=nodes", "--nodes", "n16_*").out.trimEnd().split("\r\n");
    expect(nodes[0]).toBe("point,sample,node,rail,voltage_V");
    expect(nodes.length).toBe(1 + 32);
    expect(nodes[1]).toMatch(/^0,0,n16_0,0,0\.\d+$/);
  });

  it("--probes-only and --nodes/--devices/--rails print only what they name; a name that matches nothing is a usage error", () => {
    const only = JSON.parse(run(grid, "--json", "--probes-only").out) as SolveJson;
    // (grid32 states expectations: their verdicts are kept with the probes.)
    expect(Object.keys(only.points[0])).toEqual(["params", "probes", "solver", "sample", "expectations"]);
    const full = JSON.parse(run(grid, "--json").out) as SolveJson;
    expect(only.points[0].probes).toEqual(full.points[0].probes);
    const some = JSON.parse(run(grid, "--json", "--nodes", "n0_0,n31_*", "--devices", "o16_16").out) as SolveJson;
    expect(Object.keys(some.points[0].nodes)).toEqual(["n0_0", ...Array.from({ length: 32 }, (_, j) => `n31_${j}`)]);
    expect(some.points[0].nodes.n0_0).toBe(full.points[0].nodes.n0_0);
    expect(some.points[0].devices).toEqual({ o16_16: full.points[0].devices.o16_16 });
    expect(some.points[0].rails).toBeUndefined();
    const bad = run(grid, "--json", "--nodes", "nope*");
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/--nodes: no node matches 'nope\*'/);
    expect(run(grid, "--json", "--csv", "nodes").code).toBe(2);
    expect(run(grid, "--csv", "wires").err).toMatch(/--csv: a table is one of probes, nodes, devices, rails/);
  });

  it("held points move to a temporary file past the limit and come back byte for byte", () => {
    const held = new HeldBytes(1000);
    const pieces = Array.from({ length: 50 }, (_, k) =>
      new TextEncoder().encode(`piece ${k} µ ${"x".repeat(k * 7)}\n`),
    );
    for (const p of pieces) held.put(p);
    expect(held.spilled).toBe(true);
    let back = "";
    const utf8 = new TextDecoder();
    held.replay((b) => (back += utf8.decode(b, { stream: true })));
    expect(back).toBe(pieces.map((p) => new TextDecoder().decode(p)).join(""));
    expect(held.spilled).toBe(false);
  });
});
