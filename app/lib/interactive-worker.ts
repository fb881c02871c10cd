/**
 * The interactive worker: piscina's entry for work a request waits on
 * (bundled to .build/interactive-worker.mjs by scripts/build-worker.mjs). Pure
 * computation on what the task carries: no database, no network.
 */
import { parseMeasurementCsv, type ParseResult } from "./review/measurements";
import { checkNetworkText, planNetworkText, type PlanText, type TextCheck } from "./text-check";
import { releaseWhenIdle } from "./worker-memory";

export type InteractiveTask =
  | { kind: "check"; text: string }
  | { kind: "plan"; text: string; workers: number; extraPointMs?: number }
  | { kind: "csv"; bytes: Uint8Array };
export type InteractiveResult<T extends InteractiveTask> = T extends { kind: "check" }
  ? TextCheck
  : T extends { kind: "plan" }
    ? PlanText | null
    : ParseResult;

export default function interactiveTask(task: InteractiveTask): TextCheck | PlanText | ParseResult | null {
  try {
    switch (task.kind) {
      case "check":
        return checkNetworkText(task.text);
      case "plan":
        return planNetworkText(task.text, task.workers, task.extraPointMs);
      case "csv":
        return parseMeasurementCsv(task.bytes);
    }
  } finally {
    // The kept thread gives back what the task left (a large network's elaboration) once it is idle.
    releaseWhenIdle();
  }
}
