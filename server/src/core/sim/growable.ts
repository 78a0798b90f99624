// A growable Int32Array: the micro-op tables are appended to while micro-ops are compiled (all
// at once for a one-store machine, lazily for machines with several stores) and read by the hot
// loop as plain typed arrays. It is not a general container: no removal, no shrinking.

export class GrowableInt32 {
  data: Int32Array;
  length = 0;

  constructor(initialCapacity = 64) {
    this.data = new Int32Array(Math.max(4, initialCapacity));
  }

  push(value: number): void {
    if (this.length === this.data.length) {
      const grown = new Int32Array(this.data.length * 2);
      grown.set(this.data);
      this.data = grown;
    }
    this.data[this.length++] = value;
  }
}
