/**
 * Parsed layouts and layout texts kept per process, weighed by the length of their names text: at most
 * LAYOUT_CACHE_BYTES in all, the least recently used going first. A layout larger than that (a network of
 * millions of devices: its parsed names are hundreds of megabytes) is kept alone and only until
 * LARGE_LAYOUT_KEEP_MS after its last use, so paging through its point view does not parse it again each time
 * but the memory goes back when the reader has gone.
 */
const LAYOUT_CACHE_BYTES = 16 * 1024 * 1024;
const LARGE_LAYOUT_KEEP_MS = 20_000;

export class LayoutCache<T> {
  private entries = new Map<string, { value: T; weight: number }>();
  private total = 0;
  private large: { key: string; value: T; timer: ReturnType<typeof setTimeout> } | null = null;

  get(key: string): T | undefined {
    if (this.large?.key === key) {
      this.keepLarge(key, this.large.value);
      return this.large.value;
    }
    const e = this.entries.get(key);
    if (!e) return undefined;
    this.entries.delete(key);
    this.entries.set(key, e);
    return e.value;
  }

  set(key: string, value: T, weight: number): void {
    if (weight > LAYOUT_CACHE_BYTES) {
      this.keepLarge(key, value);
      return;
    }
    this.entries.set(key, { value, weight });
    this.total += weight;
    for (const [k, e] of this.entries) {
      if (this.total <= LAYOUT_CACHE_BYTES) break;
      this.entries.delete(k);
      this.total -= e.weight;
    }
  }

  private keepLarge(key: string, value: T): void {
    if (this.large) clearTimeout(this.large.timer);
    const timer = setTimeout(() => (this.large = null), LARGE_LAYOUT_KEEP_MS);
    timer.unref?.();
    this.large = { key, value, timer };
  }
}
