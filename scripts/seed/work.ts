/**
 * The workbench part of the demo: the example networks (examples/*.runnel,
 * invented LM-64 demo data) committed into the demo workspace by the demo
 * designers, each with a finished run solved in-process at seed time, so a
 * first visit shows real tables and plots. Idempotent: a network that exists
 * is left alone; a network without a finished run gets one.
 */
import fs from "node:fs";
import path from "node:path";
import { commitText, createNetwork, networkBySlug, slugify } from "@/app/lib/networks";
import { executeRun } from "@/app/lib/run-exec";
import { doneRunOf, insertRun } from "@/app/lib/runs";
import type { DB } from "@/db";
import { elaborate } from "@/src/lang/index";
import { pointCount } from "@/src/solver/index";

/** Demo networks: file, display name, author, commit message, and an earlier version to make a history. */
export const DEMO_NETWORKS: {
  file: string;
  name: string;
  author: string;
  message: string;
  earlier?: { edit: (text: string) => string; message: string };
}[] = [
  {
    file: "row64.runnel",
    name: "LM-64 edge row",
    author: "u_designer1",
    message: "Lateral gate at 750 mV for a space constant of about 4 taps",
    earlier: {
      edit: (t) => t.replace(/param vh = [^\n#]+/, "param vh = 0.70"),
      message: "First cut of the 64-tap row",
    },
  },
  {
    file: "grid32.runnel",
    name: "Smoothing grid 32 × 32",
    author: "u_designer2",
    message: "Bright spot in the middle of a 32 × 32 grid",
  },
  {
    file: "divider.runnel",
    name: "Bias divider",
    author: "u_designer1",
    message: "Differential-pair divider, 20 mV gate difference",
  },
  {
    file: "mirror.runnel",
    name: "Mirror bank",
    author: "u_designer2",
    message: "Binary-weighted mirror bank fed by a pfet source",
  },
  {
    file: "biassweep.runnel",
    name: "Bias sweep",
    author: "u_designer1",
    message: "Lateral gate sweep at three temperatures",
  },
  {
    file: "mismatch.runnel",
    name: "Divider mismatch study",
    author: "u_designer2",
    message: "Pelgrom mismatch, 200 samples per gate difference",
  },
  {
    file: "spread.runnel",
    name: "LM-64 spreading row",
    author: "u_designer1",
    message: "One bright tap; seek the lateral gate for a 6-tap space constant, with threshold mismatch",
  },
];

export function examplesFolder(): string {
  return path.resolve(/*turbopackIgnore: true*/ process.env.RUNNEL_EXAMPLES ?? "examples");
}

/** Commits and runs the demo networks into `workspaceId`; returns how many networks and runs it added. */
export function seedWork(db: DB, workspaceId = "ws_lm64"): { networks: number; runs: number } {
  let addedNetworks = 0;
  let addedRuns = 0;
  const folder = examplesFolder();
  for (const demo of DEMO_NETWORKS) {
    const file = path.join(/*turbopackIgnore: true*/ folder, demo.file);
    if (!fs.existsSync(/*turbopackIgnore: true*/ file)) continue;
    const text = fs.readFileSync(/*turbopackIgnore: true*/ file, "utf8");
    let network = networkBySlug(workspaceId, slugify(demo.name), db);
    if (!network) {
      if (demo.earlier) {
        const first = createNetwork(
          {
            workspaceId,
            name: demo.name,
            text: demo.earlier.edit(text),
            message: demo.earlier.message,
            authorId: demo.author,
          },
          db,
        );
        commitText(
          {
            networkId: first.network.id,
            parentId: first.commit!.id,
            text,
            message: demo.message,
            authorId: demo.author,
          },
          db,
        );
      } else {
        createNetwork({ workspaceId, name: demo.name, text, message: demo.message, authorId: demo.author }, db);
      }
      network = networkBySlug(workspaceId, slugify(demo.name), db)!;
      addedNetworks++;
    }
    const head = network.headCommitId;
    if (!head) continue;
    if (doneRunOf(head, db)) continue;
    if (!solveNow({ commitId: head, networkId: network.id, createdBy: demo.author, text }, db)) continue;
    addedRuns++;
  }
  return { networks: addedNetworks, runs: addedRuns };
}

/**
 * Queues a run of the commit and executes it in this process, as the run
 * worker would; returns its id, or null when the text does not elaborate.
 */
export function solveNow(
  run: { commitId: string; networkId: string; createdBy: string; text: string },
  db: DB,
): string | null {
  const net = elaborate(run.text).network;
  if (!net) return null;
  const { text: _text, ...rest } = run;
  const id = insertRun({ ...rest, pointsTotal: pointCount(net), timeLimitMs: 10 * 60_000 }, db);
  executeRun(id, {}, db);
  return id;
}
