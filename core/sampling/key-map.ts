/**
 * An open-addressing hash map from non-negative integer keys (below 2^53) to float64 values,
 * used by the sampler to evaluate each lattice point once. Keys and values live in two flat typed
 * arrays (16 bytes per slot, load factor ≤ 0.5), where a JS `Map` keeps a heap entry per key;
 * a depth-10 surface needs millions of keys.
 */
const EMPTY = -1;

export class KeyMap {
  private keys: Float64Array;
  private vals: Float64Array;
  private mask: number;
  size = 0;

  constructor(expected = 1024) {
    let cap = 16;
    while (cap < expected * 2) cap *= 2;
    this.keys = new Float64Array(cap).fill(EMPTY);
    this.vals = new Float64Array(cap);
    this.mask = cap - 1;
  }

  private static hash(key: number): number {
    const lo = key % 4294967296 | 0;
    const hi = (key / 4294967296) | 0;
    let h = Math.imul(lo ^ Math.imul(hi, 0x27d4eb2d), 0x9e3779b1);
    h ^= h >>> 15;
    h = Math.imul(h, 0x85ebca6b);
    h ^= h >>> 13;
    return h >>> 0;
  }

  /** Slot of `key`, or of the empty slot where it would go. */
  private slot(key: number): number {
    let i = KeyMap.hash(key) & this.mask;
    const keys = this.keys;
    while (keys[i] !== EMPTY && keys[i] !== key) i = (i + 1) & this.mask;
    return i;
  }

  has(key: number): boolean {
    return this.keys[this.slot(key)] === key;
  }

  /** The value at `key`, or NaN when absent. */
  get(key: number): number {
    const i = this.slot(key);
    return this.keys[i] === key ? this.vals[i] : NaN;
  }

  /**
   * The value at `key`; when absent, stores `value` there and returns NaN (one probe instead of
   * a `get` followed by a `set`).
   */
  getOrSet(key: number, value: number): number {
    let i = this.slot(key);
    if (this.keys[i] === key) return this.vals[i];
    if ((this.size + 1) * 2 > this.keys.length) {
      this.grow();
      i = this.slot(key);
    }
    this.keys[i] = key;
    this.vals[i] = value;
    this.size++;
    return NaN;
  }

  set(key: number, value: number): void {
    let i = this.slot(key);
    if (this.keys[i] !== key) {
      if ((this.size + 1) * 2 > this.keys.length) {
        this.grow();
        i = this.slot(key);
      }
      this.keys[i] = key;
      this.size++;
    }
    this.vals[i] = value;
  }

  private grow(): void {
    const oldK = this.keys;
    const oldV = this.vals;
    const cap = oldK.length * 2;
    this.keys = new Float64Array(cap).fill(EMPTY);
    this.vals = new Float64Array(cap);
    this.mask = cap - 1;
    for (let i = 0; i < oldK.length; i++) {
      const k = oldK[i];
      if (k !== EMPTY) {
        const j = this.slot(k);
        this.keys[j] = k;
        this.vals[j] = oldV[i];
      }
    }
  }
}

/** A growable list of int32 values (amortized doubling), to avoid boxed JS arrays in hot loops. */
export class IntList {
  data: Int32Array;
  length = 0;
  constructor(capacity = 1024) {
    this.data = new Int32Array(Math.max(16, capacity));
  }
  private grow(need: number): void {
    let cap = this.data.length * 2;
    while (cap < need) cap *= 2;
    const next = new Int32Array(cap);
    next.set(this.data.subarray(0, this.length));
    this.data = next;
  }
  push(a: number): void {
    if (this.length === this.data.length) this.grow(this.length + 1);
    this.data[this.length++] = a;
  }
  push3(a: number, b: number, c: number): void {
    const n = this.length;
    if (n + 3 > this.data.length) this.grow(n + 3);
    const d = this.data;
    d[n] = a;
    d[n + 1] = b;
    d[n + 2] = c;
    this.length = n + 3;
  }
  /** A copy of the used part. */
  toArray(): Int32Array {
    return this.data.slice(0, this.length);
  }
}
