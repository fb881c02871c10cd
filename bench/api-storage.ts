/**
 * Results storage: typed-array blobs per point (what Runnel stores, db/work-schema.ts
 * `run_points`) against a narrow table of one row per value
 * (run, point, kind, entity, value), on the same invented data: a 64 × 64
 * diffuser grid's layout (4,096 internal nodes, 12,160 devices, 4 rails,
 * 2 probes, 3 params) for `--points N` points (default 100).
 *
 * Measured (medians of --reps runs, default 5): write time and file size; the
 * reads the run page makes: one whole point (Operating point and Devices
 * tables), the per-point series (probe curves), and one node across every
 * point. `npm run bench:api` runs it; `--json` prints one JSON document.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { openDatabase } from "../db/index";
import { seedDemo } from "../scripts/seed/index";
import { commits, networks, runs } from "../db/schema";
import { POINT_SECTIONS, type SectionName, type StoredPoint } from "../app/lib/point-codec";
import { insertPoints, readPoint, readSeries } from "../app/lib/results";

const argv = process.argv.slice(2);
const opt = (name: string, dflt: number) => (argv.includes(name) ? Number(argv[argv.indexOf(name) + 1]) : dflt);
const POINTS = opt("--points", 100);
const REPS = opt("--reps", 5);
const JSON_OUT = argv.includes("--json");

const NODES = 4096 + 4;
const DEVICES = 64 * 64 + 2 * 64 * 63;
const RAILS = 4;
const PROBES = 2;
const PARAMS = 3;

/** Deterministic invented values (a linear congruential sequence), so both layouts store the same numbers. */
function values(n: number, seed: number): Float64Array {
  const a = new Float64Array(n);
  let x = seed >>> 0 || 1;
  for (let i = 0; i < n; i++) {
    x = (Math.imul(x, 1664525) + 1013904223) >>> 0;
    a[i] = (x / 2 ** 32) * 1e-9;
  }
  return a;
}

function point(k: number): StoredPoint {
  const sat = new Uint8Array(DEVICES);
  for (let i = 0; i < DEVICES; i++) sat[i] = (i + k) % 3 ? 1 : 0;
  return {
    point: k,
    sample: 0,
    params: values(PARAMS, k + 1),
    probes: values(PROBES, k + 7),
    method: "linear",
    iterations: 1,
    residual: 1e-21,
    error: null,
    rails: values(RAILS, k + 13),
    nodes: values(NODES, k + 17),
    current: values(DEVICES, k + 19),
    ic: Float32Array.from(values(DEVICES, k + 23)),
    saturated: sat,
  };
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
function time(f: () => void): number {
  const t = performance.now();
  f();
  return performance.now() - t;
}

const dir = fs.mkdtempSync(path.join(os.tmpdir(), "runnel-bench-storage-"));
const file = path.join(dir, "bench.db");
const db = openDatabase(file);
seedDemo(db);
const RUN = "r_bench";
db.insert(networks)
  .values({ id: "n_bench", workspaceId: "ws_lm64", slug: "bench", name: "bench", createdBy: "u_designer1" })
  .run();
db.insert(commits)
  .values({
    id: "c_bench",
    networkId: "n_bench",
    text: "",
    textSha256: "",
    message: "bench",
    authorId: "u_designer1",
    ok: true,
    errorCount: 0,
    warningCount: 0,
    diagnostics: [],
  })
  .run();
db.insert(runs)
  .values({
    id: RUN,
    commitId: "c_bench",
    networkId: "n_bench",
    workspaceId: "ws_lm64",
    createdBy: "u_designer1",
    pointsTotal: POINTS,
    timeLimitMs: 1,
  })
  .run();
db.$client
  .exec(`create table narrow (run_id text not null, point integer not null, kind integer not null, entity integer not null, value real,
  primary key (run_id, point, kind, entity)) without rowid`);

const data = Array.from({ length: POINTS }, (_, k) => point(k));
const pageBytes = () =>
  (db.$client.pragma("page_count", { simple: true }) as number) *
  (db.$client.pragma("page_size", { simple: true }) as number);

// --- writes (once each; a write benchmark that repeats would measure a growing file)
const before = pageBytes();
const blobWrite = time(() => {
  for (let s = 0; s < POINTS; s += 64) db.transaction((tx) => insertPoints(RUN, data.slice(s, s + 64), tx));
});
const blobBytes = pageBytes() - before;
const KINDS = POINT_SECTIONS.map((s, kind) => [kind, s.name] as const);
const kindOf = (name: SectionName) => KINDS.findIndex(([, n]) => n === name);
const K_NODES = kindOf("nodes");
const K_CURRENT = kindOf("current");
const ins = db.$client.prepare("insert into narrow values (?, ?, ?, ?, ?)");
const narrowWrite = time(() => {
  for (let s = 0; s < POINTS; s += 64) {
    db.$client.transaction(() => {
      for (const p of data.slice(s, s + 64)) {
        for (const [kind, key] of KINDS) {
          const arr = p[key] as ArrayLike<number>;
          for (let e = 0; e < arr.length; e++) ins.run(RUN, p.point, kind, e, arr[e]);
        }
      }
    })();
  }
});
const narrowBytes = pageBytes() - before - blobBytes;

// --- reads
const selPoint = db.$client.prepare(
  "select kind, entity, value from narrow where run_id = ? and point = ? order by kind, entity",
);
const selSeries = db.$client.prepare(
  `select point, kind, entity, value from narrow where run_id = ? and kind in (${kindOf("params")}, ${kindOf("probes")}) order by point, kind, entity`,
);
const selNode = db.$client.prepare(
  `select point, value from narrow where run_id = ? and kind = ${K_NODES} and entity = ? order by point`,
);
const layout = { params: ["a", "b", "temp"], probes: ["p", "q"] };
const mid = Math.floor(POINTS / 2);

function narrowPoint() {
  const out = { nodes: new Float64Array(NODES), current: new Float64Array(DEVICES) };
  for (const r of selPoint.iterate(RUN, mid) as Iterable<{ kind: number; entity: number; value: number }>) {
    if (r.kind === K_NODES) out.nodes[r.entity] = r.value;
    else if (r.kind === K_CURRENT) out.current[r.entity] = r.value;
  }
  return out;
}

const reps = (f: () => unknown) => median(Array.from({ length: REPS }, () => time(() => void f())));
const results = {
  machine: `${os.cpus()[0]?.model ?? "cpu"} × ${os.availableParallelism()}, node ${process.version}`,
  points: POINTS,
  valuesPerPoint: PARAMS + PROBES + RAILS + NODES + 3 * DEVICES,
  blob: {
    write_ms: blobWrite,
    mbytes: blobBytes / 1e6,
    read_point_ms: reps(() => readPoint(RUN, mid, db)),
    read_series_ms: reps(() => readSeries(RUN, layout, 0, Number.MAX_SAFE_INTEGER, db)),
    read_node_over_points_ms: reps(() => {
      const out = new Float64Array(POINTS);
      for (let k = 0; k < POINTS; k++) out[k] = readPoint(RUN, k, db)!.nodes[100];
      return out;
    }),
  },
  narrow: {
    write_ms: narrowWrite,
    mbytes: narrowBytes / 1e6,
    read_point_ms: reps(narrowPoint),
    read_series_ms: reps(() => selSeries.all(RUN)),
    read_node_over_points_ms: reps(() => selNode.all(RUN, 100)),
  },
};

db.$client.close();
fs.rmSync(dir, { recursive: true, force: true });

if (JSON_OUT) {
  console.log(JSON.stringify(results, null, 2));
} else {
  console.log(
    `results storage, ${POINTS} points × ${results.valuesPerPoint.toLocaleString("en-US")} values (${results.machine}; medians of ${REPS})`,
  );
  const rows: [string, keyof typeof results.blob][] = [
    ["write all points (ms)", "write_ms"],
    ["file growth (MB)", "mbytes"],
    ["read one point (ms)", "read_point_ms"],
    ["read series: params + probes (ms)", "read_series_ms"],
    ["read one node over all points (ms)", "read_node_over_points_ms"],
  ];
  console.log(`${"".padEnd(38)}${"blobs per point".padStart(18)}${"narrow table".padStart(16)}`);
  for (const [label, key] of rows)
    console.log(
      `${label.padEnd(38)}${results.blob[key].toFixed(1).padStart(18)}${results.narrow[key].toFixed(1).padStart(16)}`,
    );
}
