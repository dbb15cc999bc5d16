/** A Float64Array that grows by doubling: columnar storage without an object per row. */
export class GrowableFloat64 {
  private buffer: Float64Array;
  length = 0;

  constructor(initialCapacity = 1024) {
    this.buffer = new Float64Array(initialCapacity);
  }

  push(value: number): void {
    if (this.length === this.buffer.length) {
      const next = new Float64Array(this.buffer.length * 2);
      next.set(this.buffer);
      this.buffer = next;
    }
    this.buffer[this.length] = value;
    this.length += 1;
  }

  /** The filled part, trimmed to its length (a copy, so the buffer can be released). */
  finish(): Float64Array {
    return this.buffer.slice(0, this.length);
  }
}

/** Interning of strings to small integer codes, in order of first appearance. */
export class StringCodes {
  readonly names: string[] = [];
  private readonly index = new Map<string, number>();
  private codes: Int32Array;
  length = 0;

  constructor(initialCapacity = 1024) {
    this.codes = new Int32Array(initialCapacity);
  }

  push(name: string): void {
    let code = this.index.get(name);
    if (code === undefined) {
      code = this.names.length;
      this.names.push(name);
      this.index.set(name, code);
    }
    if (this.length === this.codes.length) {
      const next = new Int32Array(this.codes.length * 2);
      next.set(this.codes);
      this.codes = next;
    }
    this.codes[this.length] = code;
    this.length += 1;
  }

  finish(): Int32Array {
    return this.codes.slice(0, this.length);
  }
}
