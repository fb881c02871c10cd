/**
 * The compare page's sensitivity changes: GET /api/commits/[id]/sensitivity for two commits of the demo's
 * mismatch study, one with the pair's devices twice as wide and long. By Pelgrom's law (M. J. M. Pelgrom,
 * A. C. J. Duinmaijer, A. P. G. Welbers, "Matching properties of MOS transistors", IEEE JSSC 1989) each device's
 * σ(V_T) = A_VT/√(WL) halves when W and L double, while in weak inversion ∂ln I/∂V_T = −κ/U_T does not depend on
 * the size (the exponential law, common practice): so the first-order σ of ln(I1/I2) halves, from
 * (κ/U_T)·√2·A_VT/√(WL) before.
 */
import fs from "node:fs";
import { describe, expect, it, vi } from "vitest";
import { commitText, createNetwork } from "@/app/lib/networks";
import { compareSensitivities } from "@/app/lib/review/sensitivity-compare";
import type { SensitivityJson } from "@/src/solver/design-json";
import { apiFixtureForFile } from "../helpers/api";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);
vi.mock("next/cache", async () => (await import("../helpers/request-context")).nextCacheMock);

const t = apiFixtureForFile();

const get = async (commitId: string) => {
  const r = await t.call("viewer", "commits/[id]/sensitivity/route", "GET", `/api/commits/${commitId}/sensitivity`, {
    id: commitId,
  });
  expect(r.status).toBe(200);
  return r.json as unknown as SensitivityJson;
};

describe("sensitivity changes between two commits", () => {
  it("halves the pair's first-order σ when its devices are twice as wide and long (Pelgrom 1989)", async () => {
    const text = fs.readFileSync("examples/mismatch.runnel", "utf8");
    const { network, commit } = createNetwork(
      { workspaceId: demoWorkspace(), name: "Pair sizes", text, authorId: "u_designer1" },
      t.db,
    );
    const wider = commitText(
      {
        networkId: network.id,
        parentId: commit!.id,
        text: text.replace("param wl = 2u", "param wl = 4u"),
        message: "twice as wide and long",
        authorId: "u_designer1",
      },
      t.db,
    );
    const [before, after] = [await get(commit!.id), await get(wider.id)];
    const cmp = compareSensitivities(before, after);
    expect(cmp.problems).toEqual([]);
    const p = cmp.probes.find((x) => x.probe === "lnratio")!;
    // κ = 0.7, U_T = kT/q at 300 K, A_VT = 3.5 mV·µm, √(WL) = 2 µm: σ(V_T) = 1.75 mV per device
    const ut = (1.380649e-23 * 300) / 1.602176634e-19;
    expect(p.before!.sigma!).toBeCloseTo((0.7 / ut) * Math.SQRT2 * 1.75e-3, 4);
    expect(p.sigmaChange!).toBeCloseTo(-0.5, 6);
    // both devices weigh alike; their ∂Q/∂V_T per mV is ∓κ/U_T/1000 on both sides
    expect(p.devices.map((d) => d.device).sort()).toEqual(["m1", "m2"]);
    for (const d of p.devices) {
      expect(Math.abs(d.before!)).toBeCloseTo(0.7 / ut / 1000, 6);
      expect(d.after!).toBeCloseTo(d.before!, 9);
    }
  });
});

function demoWorkspace(): string {
  const row = t.db.$client.prepare("select id from workspaces limit 1").get() as { id: string };
  return row.id;
}
