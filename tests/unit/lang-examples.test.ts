import { spawnSync } from "node:child_process";
import { mkdtempSync, readdirSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { main } from "../../scripts/runnel";
import { elaborate, PFET } from "../../src/lang/index";
import type { Network } from "../../src/lang/network";

const root = join(__dirname, "../..");
const examplesDir = join(root, "examples");
const files = readdirSync(examplesDir).filter((f) => f.endsWith(".runnel"));

function load(name: string): Network {
  const r = elaborate(readFileSync(join(examplesDir, name), "utf8"));
  expect(r.diagnostics).toEqual([]);
  return r.network!;
}

describe("examples", () => {
  it("there are at least six", () => {
    expect(files.length).toBeGreaterThanOrEqual(6);
    for (const f of [
      "row64.runnel",
      "grid32.runnel",
      "divider.runnel",
      "mirror.runnel",
      "biassweep.runnel",
      "mismatch.runnel",
    ])
      expect(files).toContain(f);
  });

  it.each(files)("%s checks clean: no errors, no warnings", (f) => {
    const r = elaborate(readFileSync(join(examplesDir, f), "utf8"));
    expect(r.diagnostics).toEqual([]);
    expect(r.ok).toBe(true);
    expect(r.network).not.toBeNull();
  });

  it("row64: 63 lateral and 64 output devices, 64 injects, 66 probes", () => {
    const n = load("row64.runnel");
    expect(n.name).toBe("row64");
    expect(n.devices.count).toBe(127);
    expect(n.injects.count).toBe(64);
    expect(n.probes).toHaveLength(66);
  });

  it("grid32: a 32 x 32 grid from nested loops", () => {
    const n = load("grid32.runnel");
    expect(n.devices.count).toBe(32 * 31 * 2 + 32 * 32);
    expect(n.nodes.index.has("n31_31")).toBe(true);
    expect(n.injects.count).toBe(32 * 32 + 1);
  });

  it("mirror: a pfet in its well and four copies with W/L 1, 2, 4, 8", () => {
    const n = load("mirror.runnel");
    const ref = n.devices.index.get("ref")!;
    expect(n.devices.type[ref]).toBe(PFET);
    expect(n.nodes.names[n.devices.bulk[ref]]).toBe("vdd");
    const ratios = [0, 1, 2, 3].map((k) => {
      const i = n.devices.index.get(`copy${k}`)!;
      return n.devices.w[i] / n.devices.l[i] / 1;
    });
    expect(ratios).toEqual([1, 2, 4, 8]);
    expect(n.settings).toMatchObject({ i0: 0.5e-12, vt0: 0.45, ispec: 1e-7 });
  });

  it("biassweep: a bias sweep by a temperature sweep", () => {
    const n = load("biassweep.runnel");
    expect(n.sweeps.map((s) => [s.param, s.values.length])).toEqual([
      ["vh", 11],
      ["temp", 3],
    ]);
    expect(n.bindings.some((b) => b.target.kind === "rail" && b.dependsOn.includes("vh"))).toBe(true);
  });

  it("mismatch: seeded Monte Carlo over a small sweep", () => {
    const n = load("mismatch.runnel");
    expect(n.mismatch).toMatchObject({ runs: 200, seed: 7, avt: 3.5e-3 });
    expect(n.sweeps[0].values).toEqual([0, 0.01, 0.02]);
  });
});

function runnel(...args: string[]) {
  return spawnSync(join(root, "node_modules/.bin/tsx"), [join(root, "scripts/runnel.ts"), ...args], {
    encoding: "utf8",
    cwd: root,
  });
}

/** `main` in-process: the same code the script runs, without a process start per case. */
function run(...args: string[]) {
  let stdout = "";
  let stderr = "";
  const status = main(args, { out: (t) => (stdout += `${t}\n`), err: (t) => (stderr += `${t}\n`) });
  return { status, stdout, stderr };
}

describe("runnel command", () => {
  const dir = mkdtempSync(join(tmpdir(), "runnel-cli-"));
  const broken = join(dir, "broken.runnel");
  writeFileSync(broken, "network broken\nrail v = 1\nnfet m1 gate=v source=x drain=v colour=red\nparam p = q\n");

  it("check --json on a broken file prints ok:false with diagnostics and exits 1 (spawned)", () => {
    const r = runnel("check", broken, "--json");
    expect(r.status).toBe(1);
    expect(JSON.parse(r.stdout)).toEqual({
      network: "broken",
      ok: false,
      diagnostics: [
        {
          severity: "warning",
          line: 3,
          column: 23,
          message: "node 'x' is touched by only one terminal",
          hint: "a node joins at least two terminals: check the spelling of its name",
        },
        {
          severity: "error",
          line: 3,
          column: 33,
          message: "nfet has no pin 'colour'",
          hint: "nfet pins: gate, source, drain, bulk, w, l",
        },
        {
          severity: "error",
          line: 4,
          column: 11,
          message: "unknown name 'q'",
          hint: "declare it with param NAME = VALUE above this line",
        },
      ],
    });
  });

  it("check prints FILE:LINE:COLUMN: severity: message, hints indented", () => {
    const r = run("check", broken);
    expect(r.status).toBe(1);
    expect(r.stdout.split("\n").slice(0, 3)).toEqual([
      `${broken}:3:23: warning: node 'x' is touched by only one terminal`,
      "  hint: a node joins at least two terminals: check the spelling of its name",
      `${broken}:3:33: error: nfet has no pin 'colour'`,
    ]);
  });

  it("a clean example exits 0 and prints nothing; --json says ok", () => {
    const r = run("check", join(examplesDir, "row64.runnel"));
    expect(r).toEqual({ status: 0, stdout: "", stderr: "" });
    expect(JSON.parse(run("check", join(examplesDir, "row64.runnel"), "--json").stdout)).toEqual({
      network: "row64",
      ok: true,
      diagnostics: [],
    });
  });

  it("usage errors exit 2: unreadable file, no file, unknown option or command", () => {
    const missing = run("check", join(dir, "missing.runnel"));
    expect(missing.status).toBe(2);
    expect(missing.stderr).toMatch(/missing\.runnel: cannot read the file \(ENOENT\)/);
    expect(run("check", dir).status).toBe(2);
    expect(run("check").status).toBe(2);
    expect(run("check", broken, "--yaml").status).toBe(2);
    expect(run("frobnicate").status).toBe(2);
    expect(run().status).toBe(2);
  });
});
