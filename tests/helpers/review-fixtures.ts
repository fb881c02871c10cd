/**
 * Review fixtures: a divider network committed twice (device m2's width
 * changed) and a "done" run per commit whose points are written straight into
 * run_points, solved in closed form — so these tests need neither the solver
 * nor the run worker.
 *
 * Closed form: m1 and m2 share source node x, drains on rail vdd, gates on rail
 * vg, `iin` pulled out of x; m3 alone on node y carries 5 nA. With
 * u = exp(−V/U_T) and G = I0·(W/L)·exp(κVg/U_T), I_k = G_k·(u_x − u_d) and
 * u_x = u_d + iin/ΣG (E. Vittoz, "Analog VLSI signal processing: why, where
 * and how?", J. VLSI Signal Processing 8, 1994 [confirmed]; docs/physics.md §3 Pseudo-voltages) [derived].
 */
import { runPoints, runs } from "@/db/schema";
import type { DB } from "@/db";
import { commitText, createNetwork } from "@/app/lib/networks";
import { newId } from "@/db/ids";
import { storedLayout, writeLayout } from "@/app/lib/run-layouts";

const UT = (1.380649e-23 * 300.15) / 1.602176634e-19;
const I0 = 1e-15;
const KAPPA = 0.7;
const VG = 0.6;
const VDD = 1.8;
export const SWEEP = [1e-9, 1e-8, 1e-7];

export const dividerText = (w2: string) => `network divider
rail vdd = 1.8
rail vg = 0.6
rail gnd = 0
param iin = 10n
nfet m1 gate=vg source=x drain=vdd w=1u
nfet m2 gate=vg source=x drain=vdd w=${w2}
nfet m3 gate=vg source=y drain=vdd
inject bias from=x to=gnd value=iin
inject ref from=y to=gnd value=5n
probe ratio = current(m1) / current(m2)
sweep iin values [1n, 10n, 100n]
`;

export const LAYOUT = {
  network: "divider",
  nodes: ["vdd", "vg", "gnd", "x", "y"],
  nodeIsRail: [true, true, true, false, false],
  devices: ["m1", "m2", "m3"],
  deviceTypes: "nnn",
  rails: ["vdd", "vg", "gnd"],
  probes: ["ratio"],
  params: ["iin", "temp"],
  sweeps: [{ param: "iin", values: SWEEP, log: false }],
  mismatch: null,
};

const f64 = (xs: number[]) => Buffer.from(new Float64Array(xs).buffer);

/** Writes a done run of `commitId` whose devices m1, m2 have widths w1, w2 (metres). */
export function insertDividerRun(
  db: DB,
  input: { commitId: string; networkId: string; w2: number; createdBy?: string; createdAt?: Date },
): string {
  const id = newId("r");
  const g = (w: number) => I0 * (w / 1e-6) * Math.exp((KAPPA * VG) / UT);
  const ud = Math.exp(-VDD / UT);
  db.insert(runs)
    .values({
      id,
      commitId: input.commitId,
      networkId: input.networkId,
      workspaceId: "ws_lm64",
      createdBy: input.createdBy ?? "u_designer1",
      state: "done",
      pointsTotal: SWEEP.length,
      pointsDone: SWEEP.length,
      timeLimitMs: 60_000,
      createdAt: input.createdAt ?? new Date(),
    })
    .run();
  writeLayout(id, storedLayout(LAYOUT), db);
  SWEEP.forEach((iin, k) => {
    const ux = ud + iin / (g(1e-6) + g(input.w2));
    const uy = ud + 5e-9 / g(1e-6);
    const i1 = g(1e-6) * (ux - ud);
    const i2 = g(input.w2) * (ux - ud);
    const i3 = g(1e-6) * (uy - ud);
    db.insert(runPoints)
      .values({
        runId: id,
        point: k,
        sample: 0,
        params: f64([iin, 300.15]),
        probes: f64([i1 / i2]),
        method: "linear",
        iterations: 1,
        residual: 0,
        error: null,
        rails: f64([iin + 5e-9, 0, -(iin + 5e-9)]),
        nodes: f64([VDD, VG, 0, -UT * Math.log(ux), -UT * Math.log(uy)]),
        current: f64([i1, i2, i3]),
        ic: Buffer.from(new Float32Array([NaN, NaN, NaN]).buffer),
        saturated: Buffer.from(new Uint8Array([1, 1, 1])),
      })
      .run();
  });
  return id;
}

/** The divider network with two commits (m2 at 1 µm, then 2 µm) and a done run of each. */
export function dividerHistory(db: DB) {
  const { network, commit } = createNetwork(
    {
      workspaceId: "ws_lm64",
      name: "Divider",
      text: dividerText("1u"),
      message: "divider, equal widths",
      authorId: "u_designer1",
    },
    db,
  );
  const first = commit!;
  const second = commitText(
    {
      networkId: network.id,
      parentId: first.id,
      text: dividerText("2u"),
      message: "m2 twice as wide",
      authorId: "u_designer1",
    },
    db,
  );
  const run1 = insertDividerRun(db, {
    commitId: first.id,
    networkId: network.id,
    w2: 1e-6,
    createdAt: new Date(Date.now() - 1000),
  });
  const run2 = insertDividerRun(db, { commitId: second.id, networkId: network.id, w2: 2e-6 });
  return { network, first, second, run1, run2 };
}
