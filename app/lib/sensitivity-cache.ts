/**
 * The Sensitivity view of a commit (app/lib/sensitivity-view.ts), computed in the interactive pool once per
 * commit (a commit's text never changes) and kept for the newest few: the run page's view and the compare page's
 * sensitivity changes read the same answers.
 */
import { sensitivityInWorker } from "./interactive";
import type { SensitivityView } from "./sensitivity-view";
import { processShared } from "./process-shared";

const CACHE_SIZE = 16;
const cache = processShared("sensitivity.cache", () => new Map<string, Promise<SensitivityView>>());

export function commitSensitivity(commit: { id: string; text: string }): Promise<SensitivityView> {
  let view = cache.get(commit.id);
  if (!view) {
    view = sensitivityInWorker(commit.text);
    view.catch(() => cache.delete(commit.id));
    if (cache.size >= CACHE_SIZE) cache.delete(cache.keys().next().value!);
    cache.set(commit.id, view);
  }
  return view;
}
