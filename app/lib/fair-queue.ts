/**
 * The fair run queue: which run starts, and which chunk is solved next.
 *
 * - A workspace has at most `perWorkspace` runs admitted (started or about to
 *   be) at once; its other runs wait, oldest first.
 * - Chunks of admitted runs are ordered by a virtual time (start-time fair
 *   queuing): a workspace's chunks are numbered one after another (two
 *   apart) from max(the queue's clock, the workspace's last number), so a run
 *   from a workspace with nothing queued slots in right behind the chunk
 *   being solved, and two busy workspaces alternate chunk by chunk. Within a
 *   workspace, runs go in the order they were admitted.
 * - The clock is the number of the last chunk handed out.
 *
 * Pure and in memory: the truth about runs is the database (queued runs are
 * queued again after a restart). The local pool takes chunks with `next()`; a
 * Redis queue gets every chunk of a run when it is admitted, with its number
 * as the job's priority.
 */

export interface QueuedRun {
  id: string;
  workspaceId: string;
  /** Chunk indices still to solve, in order. */
  chunks: number[];
}

export interface TaggedChunk {
  runId: string;
  chunk: number;
  /** Virtual time: lower first. */
  tag: number;
}

export class FairQueue {
  /** Runs not yet admitted, per workspace, oldest first. */
  private readonly waiting = new Map<string, QueuedRun[]>();
  /** Admitted runs and their workspace. */
  private readonly admitted = new Map<string, string>();
  private readonly perWs = new Map<string, number>();
  private readonly lastTag = new Map<string, number>();
  /** Admitted chunks not handed out yet (a binary heap on tag). */
  private readonly heap: TaggedChunk[] = [];
  private clock = 0;

  /**
   * `hold`: keep admitted chunks for `next()` (the local pool); false when the caller takes every admitted chunk
   * at once (a Redis queue, which orders them by their tags as priorities).
   */
  constructor(
    private readonly perWorkspace: () => number,
    private readonly hold = true,
  ) {}

  /** Adds a queued run; returns the chunks of the runs this admits (none when its workspace is at its cap). */
  add(run: QueuedRun): TaggedChunk[] {
    if (this.admitted.has(run.id) || this.isWaiting(run.id)) return [];
    const list = this.waiting.get(run.workspaceId) ?? [];
    list.push({ ...run, chunks: [...run.chunks] });
    this.waiting.set(run.workspaceId, list);
    return this.admit(run.workspaceId);
  }

  /** The next chunk to solve (the lowest tag), or null; advances the clock. */
  next(): TaggedChunk | null {
    const c = this.pop();
    if (c) this.advance(c.tag);
    return c;
  }

  /** Moves the clock to a chunk that was handed out elsewhere (a queue worker took it). */
  advance(tag: number): void {
    if (tag > this.clock) this.clock = tag;
  }

  /** A run ended: frees its workspace's slot; returns the chunks of the runs this admits. */
  ended(runId: string): TaggedChunk[] {
    this.drop(runId);
    const ws = this.admitted.get(runId);
    if (ws === undefined) return [];
    this.admitted.delete(runId);
    this.perWs.set(ws, (this.perWs.get(ws) ?? 1) - 1);
    const out = this.admit(ws);
    if (this.admitted.size === 0 && this.heap.length === 0) {
      // Idle: start the clock again, so tags (and queue priorities) stay small.
      this.clock = 0;
      this.lastTag.clear();
    }
    return out;
  }

  /** Forgets a run's chunks not handed out yet, and the run itself if it is still waiting; true if it was waiting. */
  drop(runId: string): boolean {
    for (let i = this.heap.length - 1; i >= 0; i--) if (this.heap[i].runId === runId) this.removeAt(i);
    for (const [ws, list] of this.waiting) {
      const at = list.findIndex((r) => r.id === runId);
      if (at >= 0) {
        list.splice(at, 1);
        if (list.length === 0) this.waiting.delete(ws);
        return true;
      }
    }
    return false;
  }

  isAdmitted(runId: string): boolean {
    return this.admitted.has(runId);
  }

  isWaiting(runId: string): boolean {
    for (const list of this.waiting.values()) if (list.some((r) => r.id === runId)) return true;
    return false;
  }

  /** Chunks admitted and not handed out. */
  get pending(): number {
    return this.heap.length;
  }

  /** Runs admitted or waiting. */
  get size(): number {
    let n = this.admitted.size;
    for (const list of this.waiting.values()) n += list.length;
    return n;
  }

  private admit(ws: string): TaggedChunk[] {
    const out: TaggedChunk[] = [];
    const list = this.waiting.get(ws);
    while (list && list.length > 0 && (this.perWs.get(ws) ?? 0) < Math.max(1, this.perWorkspace())) {
      const run = list.shift()!;
      this.admitted.set(run.id, ws);
      this.perWs.set(ws, (this.perWs.get(ws) ?? 0) + 1);
      // Chunks are two apart; a workspace that has fallen behind the clock starts one after it, ahead of
      // the chunks already numbered (so a newcomer never waits behind a tie).
      const last = this.lastTag.get(ws) ?? 0;
      let tag = last < this.clock ? this.clock - 1 : last;
      for (const chunk of run.chunks) {
        tag += 2;
        const c = { runId: run.id, chunk, tag };
        if (this.hold) this.push(c);
        out.push(c);
      }
      this.lastTag.set(ws, tag);
    }
    if (list && list.length === 0) this.waiting.delete(ws);
    return out;
  }

  private push(c: TaggedChunk): void {
    const h = this.heap;
    h.push(c);
    let i = h.length - 1;
    while (i > 0) {
      const parent = (i - 1) >> 1;
      if (!before(h[i], h[parent])) break;
      [h[i], h[parent]] = [h[parent], h[i]];
      i = parent;
    }
  }

  private pop(): TaggedChunk | null {
    if (this.heap.length === 0) return null;
    const top = this.heap[0];
    this.removeAt(0);
    return top;
  }

  private removeAt(i: number): void {
    const h = this.heap;
    const last = h.pop()!;
    if (i === h.length) return;
    h[i] = last;
    // Restore the heap both ways from i.
    for (let j = i; j > 0;) {
      const parent = (j - 1) >> 1;
      if (!before(h[j], h[parent])) break;
      [h[j], h[parent]] = [h[parent], h[j]];
      j = parent;
    }
    for (let j = i; ;) {
      const l = 2 * j + 1;
      const r = l + 1;
      let m = j;
      if (l < h.length && before(h[l], h[m])) m = l;
      if (r < h.length && before(h[r], h[m])) m = r;
      if (m === j) break;
      [h[j], h[m]] = [h[m], h[j]];
      j = m;
    }
  }
}

/** Heap order: tag, then run and chunk (ties only between workspaces; deterministic). */
function before(a: TaggedChunk, b: TaggedChunk): boolean {
  if (a.tag !== b.tag) return a.tag < b.tag;
  if (a.runId !== b.runId) return a.runId < b.runId;
  return a.chunk < b.chunk;
}
