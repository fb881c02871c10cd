/**
 * A run split into chunks stores what the same run as one chunk stores: the
 * linear path and mismatch samples bit for bit, Newton within its tolerance
 * (a Newton chunk's first point starts from the network's own start, not from
 * the previous chunk's last solution: src/solver/sweep.ts); the run-wide
 * figures (warnings, counts, failures) merged from the chunks are the same.
 * Runs execute in-process (executeRun), chunk after chunk.
 *
 * Tolerance: Newton stops when its last step moved no node more than 1e-9 V
 * and KCL holds to 1e-9 of the largest current (src/solver/newton.ts); two
 * starts may end anywhere inside that, so voltages are compared to 1e-8 V
 * and currents to 1e-7 relative (common practice: a few times the stopping
 * tolerance).
 */
import fs from "node:fs";
import { and, asc, eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import type { DB } from "@/db";
import { runPoints, runs } from "@/db/schema";
import { commitAndRun } from "../helpers/runs";
import { accountsCopy } from "../helpers/accounts";

let db: DB;

accountsCopy((_fixture, d) => (db = d));

/** A gate-bias sweep of a 12 × 12 diffuser grid: linear, a new factorisation at every point. */
const GRID = `network grid12
param vg = 0.6
rail vdd = 1.8
rail gnd = 0
rail gl = 0.75
rail gv = vg
for i in 0..11 {
  for j in 0..10 {
    nfet h{i}_{j} gate=gl source=n{i}_{j} drain=n{i}_{j+1}
  }
}
for i in 0..10 {
  for j in 0..11 {
    nfet v{i}_{j} gate=gl source=n{i}_{j} drain=n{i+1}_{j}
  }
}
for i in 0..11 {
  for j in 0..11 {
    nfet o{i}_{j} gate=gv source=n{i}_{j} drain=vdd
  }
}
inject input from=n5_5 to=gnd value=1n
probe centre = current(o5_5)
sweep vg from 0.55 to 0.75 points 23
`;

/** Splits of a run of `points` points: uneven, with a one-point chunk. */
function splits(points: number): { start: number; end: number }[] {
  const cuts = [0, 1, Math.floor(points / 3), Math.floor(points / 3) + 1, Math.floor((2 * points) / 3), points];
  const out: { start: number; end: number }[] = [];
  for (let i = 0; i + 1 < cuts.length; i++) if (cuts[i + 1] > cuts[i]) out.push({ start: cuts[i], end: cuts[i + 1] });
  return out;
}

function execute(text: string, name: string, chunked: boolean, total: number): string {
  return commitAndRun(db, name, text, total, chunked ? splits(total) : undefined, 120_000).runId;
}

function stored(runId: string) {
  return db.select().from(runPoints).where(eq(runPoints.runId, runId)).orderBy(asc(runPoints.point)).all();
}

function figures(runId: string) {
  const r = db
    .select()
    .from(runs)
    .where(and(eq(runs.id, runId)))
    .get()!;
  return {
    pointsDone: r.pointsDone,
    newtonPoints: r.newtonPoints,
    devicesNotWeak: r.devicesNotWeak,
    devicesNotSaturated: r.devicesNotSaturated,
    warnings: r.warnings,
    failures: r.failures,
    solverReason: r.solverReason,
    maxResidual: r.maxResidual,
  };
}

const f64 = (b: Buffer) => new Float64Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));

describe("chunked runs", () => {
  it("linear: a gate-bias sweep split five ways stores the same bytes as one chunk", () => {
    const one = execute(GRID, "Grid one", false, 23);
    const five = execute(GRID, "Grid five", true, 23);
    const a = stored(one);
    const b = stored(five);
    expect(b).toHaveLength(23);
    expect(b.map((p) => p.point)).toEqual([...Array(23).keys()]);
    for (let k = 0; k < a.length; k++) expect({ ...b[k], runId: "" }).toEqual({ ...a[k], runId: "" });
    expect(figures(five)).toEqual(figures(one));
  });

  it("mismatch: 600 samples split five ways store the same bytes as one chunk", () => {
    const text = fs.readFileSync("examples/mismatch.runnel", "utf8");
    const one = execute(text, "MC one", false, 600);
    const five = execute(text, "MC five", true, 600);
    const a = stored(one);
    const b = stored(five);
    expect(b).toHaveLength(600);
    for (let k = 0; k < a.length; k++) expect({ ...b[k], runId: "" }).toEqual({ ...a[k], runId: "" });
    expect(figures(five)).toEqual(figures(one));
  });

  it("Newton: a mirror's bias sweep split five ways agrees with one chunk within Newton's tolerance", () => {
    const text = fs
      .readFileSync("examples/mirror.runnel", "utf8")
      .replace("probe iref", "sweep vbp from 1.2 to 1.5 points 16\nprobe iref");
    const one = execute(text, "Mirror one", false, 16);
    const five = execute(text, "Mirror five", true, 16);
    const a = stored(one);
    const b = stored(five);
    expect(b).toHaveLength(16);
    for (let k = 0; k < a.length; k++) {
      expect(b[k].method).toBe("newton");
      expect(b[k].error).toBe(a[k].error);
      const [va, vb] = [f64(a[k].nodes), f64(b[k].nodes)];
      for (let i = 0; i < va.length; i++) expect(Math.abs(vb[i] - va[i])).toBeLessThan(1e-8);
      const [ia, ib] = [f64(a[k].current), f64(b[k].current)];
      for (let i = 0; i < ia.length; i++)
        expect(Math.abs(ib[i] - ia[i])).toBeLessThanOrEqual(1e-7 * Math.abs(ia[i]) + 1e-21);
    }
    const [fa, fb] = [figures(one), figures(five)];
    expect({ ...fb, maxResidual: 0 }).toEqual({ ...fa, maxResidual: 0 });
  });
});
