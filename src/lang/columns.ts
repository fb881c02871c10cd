/**
 * Growable typed columns: the element tables of a network are built one value at a time, a million devices without
 * an object per device. The three classes stay separate on purpose: one class generic over the array type would
 * make push() polymorphic in the per-device loop.
 */

/** Growable Int32 column. */
export class IntColumn {
  data = new Int32Array(256);
  length = 0;
  push(v: number): void {
    if (this.length === this.data.length) {
      const d = new Int32Array(this.data.length * 2);
      d.set(this.data);
      this.data = d;
    }
    this.data[this.length++] = v;
  }
  /** Makes room for `n` values in all (no copy later while they are pushed). */
  reserve(n: number): void {
    if (n <= this.data.length) return;
    const d = new Int32Array(n);
    d.set(this.data.subarray(0, this.length));
    this.data = d;
  }
  /** The values; the column is not used after. */
  finish(): Int32Array {
    return this.length === this.data.length ? this.data : this.data.slice(0, this.length);
  }
}

/** Growable Uint8 column. */
export class ByteColumn {
  data = new Uint8Array(256);
  length = 0;
  push(v: number): void {
    if (this.length === this.data.length) {
      const d = new Uint8Array(this.data.length * 2);
      d.set(this.data);
      this.data = d;
    }
    this.data[this.length++] = v;
  }
  /** Makes room for `n` values in all. */
  reserve(n: number): void {
    if (n <= this.data.length) return;
    const d = new Uint8Array(n);
    d.set(this.data.subarray(0, this.length));
    this.data = d;
  }
  /** The values; the column is not used after. */
  finish(): Uint8Array {
    return this.length === this.data.length ? this.data : this.data.slice(0, this.length);
  }
}

/** Growable Float64 column. */
export class FloatColumn {
  data = new Float64Array(256);
  length = 0;
  push(v: number): void {
    if (this.length === this.data.length) {
      const d = new Float64Array(this.data.length * 2);
      d.set(this.data);
      this.data = d;
    }
    this.data[this.length++] = v;
  }
  /** Makes room for `n` values in all. */
  reserve(n: number): void {
    if (n <= this.data.length) return;
    const d = new Float64Array(n);
    d.set(this.data.subarray(0, this.length));
    this.data = d;
  }
  /** The values; the column is not used after. */
  finish(): Float64Array {
    return this.length === this.data.length ? this.data : this.data.slice(0, this.length);
  }
}
