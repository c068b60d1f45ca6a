/**
 * Sparse per-node storage for the octree sampler. The lattice's nodes are cut into bricks of 4³
 * nodes, allocated on first touch and found through a two-level directory (super-bricks of 8³
 * bricks, each with its own sub-directory), so a node's slot costs two array reads and no hashing.
 * The directory for depth 12 (4097³ nodes) is 129³ entries plus one 512-entry sub-directory per
 * super-brick touched. Bricks of 4³ rather than 8³: on sphere_sdf.onnx at depth 8 the sampler's
 * 513 k nodes filled 11% of the slots of 8³ bricks (9,114 bricks).
 *
 * A slot is `brick · 64 + local`, local = x + 4y + 16z within the brick; slots never move when the
 * pools grow. Per slot the store keeps the node's signed value, its state (unknown, queued, known),
 * and a flag for the finest cell whose lowest corner is that node (seen by the flood fill or not).
 */
const SHIFT = 2;
const B = 1 << SHIFT;
const LOCAL_MASK = B - 1;
/** Nodes per brick edge; a brick's local slot is x + B·y + B²·z. */
export const BRICK_EDGE = B;
/** Nodes per brick. */
export const BRICK_NODES = B * B * B;
/** Bricks per super-brick edge (the directory's first level). */
const SUPER_SHIFT = 3;
const SB = 1 << SUPER_SHIFT;
const SUPER_MASK = SB - 1;
const SUB_ENTRIES = SB * SB * SB;

export const NODE_UNKNOWN = 0;
export const NODE_QUEUED = 1;
export const NODE_KNOWN = 2;

export class NodeBricks {
  /** Signed value per slot (valid when state is NODE_KNOWN). */
  vals: Float32Array;
  /** NODE_UNKNOWN, NODE_QUEUED or NODE_KNOWN per slot. */
  state: Uint8Array;
  /** Per slot: 1 when the finest cell whose lowest corner is this node has been visited. */
  cellSeen: Uint8Array;
  /** Brick coordinates, 3 per brick. */
  brickCoords: Int32Array;
  bricks = 0;

  private readonly top: Int32Array;
  private sub: Int32Array;
  private subs = 0;
  private readonly bnx: number;
  private readonly bny: number;
  private readonly snx: number;
  private readonly sny: number;

  /** `nodes`: nodes per axis of the lattice (cells + 1). */
  constructor(nodes: readonly [number, number, number]) {
    this.bnx = (nodes[0] + LOCAL_MASK) >> SHIFT;
    this.bny = (nodes[1] + LOCAL_MASK) >> SHIFT;
    const bnz = (nodes[2] + LOCAL_MASK) >> SHIFT;
    this.snx = (this.bnx + SUPER_MASK) >> SUPER_SHIFT;
    this.sny = (this.bny + SUPER_MASK) >> SUPER_SHIFT;
    const snz = (bnz + SUPER_MASK) >> SUPER_SHIFT;
    this.top = new Int32Array(this.snx * this.sny * snz).fill(-1);
    this.sub = new Int32Array(SUB_ENTRIES * 8).fill(-1);
    // Initial room: a surface crossing the lattice touches about (nx·ny + ny·nz + nz·nx) / 8 bricks
    // (measured at depth 9: sphere_sdf.onnx 77,732 for 98,304; torus_sdf.onnx 65,296 for 58,944;
    // lantern_density.onnx 109,401 for 58,912), capped at 2^17 bricks (50 MB) for deep lattices.
    const faces = (nodes[0] * nodes[1] + nodes[1] * nodes[2] + nodes[2] * nodes[0]) / 8;
    const cap = Math.min(1 << 17, Math.max(64, Math.ceil(faces)));
    this.vals = new Float32Array(cap * BRICK_NODES);
    this.state = new Uint8Array(cap * BRICK_NODES);
    this.cellSeen = new Uint8Array(cap * BRICK_NODES);
    this.brickCoords = new Int32Array(cap * 3);
  }

  /** Slot of node (i, j, k), or −1 when its brick was never touched. */
  find(i: number, j: number, k: number): number {
    const bi = i >> SHIFT, bj = j >> SHIFT, bk = k >> SHIFT;
    const t = this.top[(bi >> SUPER_SHIFT) + this.snx * ((bj >> SUPER_SHIFT) + this.sny * (bk >> SUPER_SHIFT))];
    if (t < 0) return -1;
    const b = this.sub[t * SUB_ENTRIES + (bi & SUPER_MASK) + SB * ((bj & SUPER_MASK) + SB * (bk & SUPER_MASK))];
    if (b < 0) return -1;
    return b * BRICK_NODES + (i & LOCAL_MASK) + B * ((j & LOCAL_MASK) + B * (k & LOCAL_MASK));
  }

  /** Slot of node (i, j, k), allocating its brick when needed. */
  slot(i: number, j: number, k: number): number {
    const bi = i >> SHIFT, bj = j >> SHIFT, bk = k >> SHIFT;
    const ti = (bi >> SUPER_SHIFT) + this.snx * ((bj >> SUPER_SHIFT) + this.sny * (bk >> SUPER_SHIFT));
    let t = this.top[ti];
    if (t < 0) t = this.top[ti] = this.newSub();
    const si = t * SUB_ENTRIES + (bi & SUPER_MASK) + SB * ((bj & SUPER_MASK) + SB * (bk & SUPER_MASK));
    let b = this.sub[si];
    if (b < 0) b = this.sub[si] = this.newBrick(bi, bj, bk);
    return b * BRICK_NODES + (i & LOCAL_MASK) + B * ((j & LOCAL_MASK) + B * (k & LOCAL_MASK));
  }

  /** Node coordinates of a slot, written to out[0..2]. */
  coordsOf(slot: number, out: Int32Array): void {
    const b = slot >> (3 * SHIFT);
    const local = slot & (BRICK_NODES - 1);
    const bc = this.brickCoords;
    out[0] = (bc[3 * b] << SHIFT) + (local & LOCAL_MASK);
    out[1] = (bc[3 * b + 1] << SHIFT) + ((local >> SHIFT) & LOCAL_MASK);
    out[2] = (bc[3 * b + 2] << SHIFT) + (local >> (2 * SHIFT));
  }

  private newSub(): number {
    if ((this.subs + 1) * SUB_ENTRIES > this.sub.length) {
      const next = new Int32Array(this.sub.length * 2).fill(-1);
      next.set(this.sub);
      this.sub = next;
    }
    return this.subs++;
  }

  private newBrick(bi: number, bj: number, bk: number): number {
    const b = this.bricks++;
    if (this.bricks * 3 > this.brickCoords.length) {
      const cap = (this.brickCoords.length / 3) * 2;
      this.vals = grow(this.vals, new Float32Array(cap * BRICK_NODES));
      this.state = grow(this.state, new Uint8Array(cap * BRICK_NODES));
      this.cellSeen = grow(this.cellSeen, new Uint8Array(cap * BRICK_NODES));
      this.brickCoords = grow(this.brickCoords, new Int32Array(cap * 3));
    }
    this.brickCoords[3 * b] = bi;
    this.brickCoords[3 * b + 1] = bj;
    this.brickCoords[3 * b + 2] = bk;
    return b;
  }
}

function grow<T extends Float32Array | Uint8Array | Int32Array>(old: T, next: T): T {
  next.set(old);
  return next;
}
