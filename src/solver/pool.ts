/**
 * Work arrays kept between solves in one thread.
 *
 * A run's plan takes its large work arrays (orderings, factors, right-hand
 * sides, per-device conductances) from here and gives them back when the run
 * ends, so the next run in the same thread (a server worker's next job, the
 * next network of a batch) reuses memory the process already has instead of
 * asking the operating system for fresh pages. On the development VM a fresh
 * page costs about 2 µs on its first touch, 8 ms per 16 MB (bench/README
 * numbers), which dominated the million-node chain before this pool.
 *
 * Contract
 * - `take*` returns an array of exactly the requested length whose contents are
 *   undefined (whatever the last user left); `zeros*` returns it filled with 0.
 * - An array is given back at most once, with `give`, and not used afterwards.
 *   Arrays that are never given back are simply garbage-collected.
 * - Buffers are matched by capacity (the smallest free buffer that fits, and
 *   only when it is at most 4× the request, so a small request never pins a
 *   huge buffer). At most `limitBytes` of idle buffers are kept; the largest
 *   go first when the limit is passed.
 * - Synchronous code only: the solver core never awaits, so one pool per
 *   thread (module scope) is safe.
 */

type Typed = Float64Array | Int32Array | Uint8Array;

export class ArrayPool {
  /** Idle buffers, sorted by byteLength. */
  private idle: ArrayBuffer[] = [];
  private idleBytes = 0;

  constructor(private readonly limitBytes = 512 * 1024 * 1024) {}

  takeF64(n: number): Float64Array {
    return new Float64Array(this.buffer(8 * n), 0, n);
  }

  takeI32(n: number): Int32Array {
    return new Int32Array(this.buffer(4 * n), 0, n);
  }

  takeU8(n: number): Uint8Array {
    return new Uint8Array(this.buffer(n), 0, n);
  }

  zerosF64(n: number): Float64Array {
    return this.takeF64(n).fill(0);
  }

  zerosI32(n: number): Int32Array {
    return this.takeI32(n).fill(0);
  }

  zerosU8(n: number): Uint8Array {
    return this.takeU8(n).fill(0);
  }

  /** Gives arrays back (null and empty arrays are ignored). */
  give(...arrays: (Typed | null | undefined)[]): void {
    for (const a of arrays) {
      if (!a || a.byteLength === 0) continue;
      const buf = a.buffer as ArrayBuffer;
      // A view of a shared or foreign buffer (or one given twice) is not ours to keep.
      if (!(buf instanceof ArrayBuffer) || this.idle.includes(buf)) continue;
      this.insert(buf);
    }
    while (this.idleBytes > this.limitBytes && this.idle.length > 0) {
      const dropped = this.idle.pop() as ArrayBuffer;
      this.idleBytes -= dropped.byteLength;
    }
  }

  private buffer(bytes: number): ArrayBuffer {
    if (bytes === 0) return new ArrayBuffer(0);
    const idle = this.idle;
    // Smallest idle buffer that fits (binary search on the sorted list).
    let lo = 0;
    let hi = idle.length;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (idle[mid].byteLength < bytes) lo = mid + 1;
      else hi = mid;
    }
    if (lo < idle.length && idle[lo].byteLength <= 4 * bytes) {
      const buf = idle[lo];
      idle.splice(lo, 1);
      this.idleBytes -= buf.byteLength;
      return buf;
    }
    // Rounded up to 8 bytes so any typed view fits at offset 0.
    return new ArrayBuffer(Math.ceil(bytes / 8) * 8);
  }

  private insert(buf: ArrayBuffer): void {
    const idle = this.idle;
    let lo = 0;
    let hi = idle.length;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (idle[mid].byteLength < buf.byteLength) lo = mid + 1;
      else hi = mid;
    }
    idle.splice(lo, 0, buf);
    this.idleBytes += buf.byteLength;
  }
}

/** The pool of this thread. */
export const pool = new ArrayPool();

/**
 * Where an algorithm gets its arrays: zero-filled, as `new Int32Array(n)`
 * would give them. The analysis and factorisation functions take one
 * (default `heap`), so a run can draw them from the pool instead.
 */
export interface Alloc {
  i32(n: number): Int32Array;
  f64(n: number): Float64Array;
  u8(n: number): Uint8Array;
}

/** Fresh arrays from the JavaScript heap. */
export const heap: Alloc = {
  i32: (n) => new Int32Array(n),
  f64: (n) => new Float64Array(n),
  u8: (n) => new Uint8Array(n),
};

/**
 * Zero-filled arrays from the pool, remembered so that `release` gives them
 * all back at once (a run's analysis and factor live until the run ends).
 */
export class Arena implements Alloc {
  private held: Typed[] = [];

  constructor(private readonly from: ArrayPool = pool) {}

  i32(n: number): Int32Array {
    const a = this.from.zerosI32(n);
    this.held.push(a);
    return a;
  }

  f64(n: number): Float64Array {
    const a = this.from.zerosF64(n);
    this.held.push(a);
    return a;
  }

  u8(n: number): Uint8Array {
    const a = this.from.zerosU8(n);
    this.held.push(a);
    return a;
  }

  /** Gives every array back; none may be used afterwards. */
  release(): void {
    this.from.give(...this.held);
    this.held = [];
  }
}
