/**
 * A sparse LU factorisation for nodal circuit matrices, with the symbolic work done once
 * per topology and the numeric work done per Newton iteration into buffers it owns.
 *
 * Symbolic phase (constructor): a minimum-degree ordering on the symmetric pattern of
 * A + Aᵀ (the classic heuristic of Tinney and Walker, Proc. IEEE 1967, also the origin of
 * its use for network matrices), the fill it causes, and for every pivot the flat list of
 * value slots its elimination updates. Numeric phase (`factor`): right-looking elimination
 * in that order with diagonal pivots, a tight loop over typed arrays that allocates
 * nothing. `solve` is a forward and a backward substitution.
 *
 * Pivots are diagonal. Nodal matrices hold every conductance at a node on its diagonal,
 * but a tube's transconductance puts entries in its grid's column far larger than that,
 * and around a ring of stages the factors grow by the loop gain. We accept that growth
 * rather than pivot by rows (which, tried, filled the factors of a 4,000-stage ring
 * densely): Newton's method needs only an approximate step, and every solution is
 * accepted on the residual of the real circuit, never on the factors. A zero or
 * non-finite pivot makes `factor` return false, and Newton falls back on gmin stepping.
 *
 * Example: for the 2×2 pattern {(0,0), (0,1), (1,0), (1,1)} with values [4, 1, 2, 3],
 * `solve([5, 5])` gives [1, 1].
 */
export class SparseLu {
  readonly n: number;
  /** Value slots: the pattern of A plus fill, in the factor's own order. */
  readonly values: Float64Array;
  /** Elimination order: `perm[k]` is the original index of the k-th pivot. */
  readonly perm: Int32Array;
  private readonly slotOf = new Map<number, number>();
  private readonly diag: Int32Array;
  private readonly rStart: Int32Array;
  private readonly rIndex: Int32Array;
  private readonly lSlot: Int32Array;
  private readonly uSlot: Int32Array;
  private readonly updStart: Int32Array;
  private readonly updSlot: Int32Array;
  private readonly work: Float64Array;
  private readonly inverse: Int32Array;

  /** `rows[e]`, `cols[e]`: the non-zero pattern of A (original indices); the diagonal is always included. */
  constructor(n: number, rows: ArrayLike<number>, cols: ArrayLike<number>) {
    this.n = n;
    const adj: Set<number>[] = Array.from({ length: n }, () => new Set<number>());
    for (let e = 0; e < rows.length; e++) {
      const r = rows[e]!;
      const c = cols[e]!;
      if (r !== c) {
        adj[r]!.add(c);
        adj[c]!.add(r);
      }
    }
    // Minimum degree with a lazy binary heap of (degree, node).
    const heap: number[] = [];
    const push = (deg: number, node: number) => {
      heap.push(deg * (n + 1) + node);
      let i = heap.length - 1;
      while (i > 0) {
        const p = (i - 1) >> 1;
        if (heap[p]! <= heap[i]!) break;
        [heap[p], heap[i]] = [heap[i]!, heap[p]!];
        i = p;
      }
    };
    const pop = (): number => {
      const top = heap[0]!;
      const last = heap.pop()!;
      if (heap.length > 0) {
        heap[0] = last;
        let i = 0;
        for (;;) {
          const l = 2 * i + 1;
          const r = l + 1;
          let m = i;
          if (l < heap.length && heap[l]! < heap[m]!) m = l;
          if (r < heap.length && heap[r]! < heap[m]!) m = r;
          if (m === i) break;
          [heap[m], heap[i]] = [heap[i]!, heap[m]!];
          i = m;
        }
      }
      return top;
    };
    for (let v = 0; v < n; v++) push(adj[v]!.size, v);
    const eliminated = new Uint8Array(n);
    const order: number[] = [];
    const reach: number[][] = [];
    while (order.length < n) {
      const key = pop();
      const v = key % (n + 1);
      const deg = (key - v) / (n + 1);
      if (eliminated[v] || deg !== adj[v]!.size) continue;
      eliminated[v] = 1;
      const nbrs = [...adj[v]!];
      order.push(v);
      reach.push(nbrs);
      for (const u of nbrs) {
        const au = adj[u]!;
        au.delete(v);
        for (const w of nbrs) if (w !== u) au.add(w);
        push(au.size, u);
      }
      adj[v]!.clear();
    }
    this.perm = Int32Array.from(order);
    const inv = new Int32Array(n);
    order.forEach((v, k) => (inv[v] = k));
    this.inverse = inv;

    // Slots: diagonal, A's pattern, and the fill (L below, U right of the diagonal, same structure).
    const slot = (i: number, j: number): number => {
      const key = i * n + j;
      let s = this.slotOf.get(key);
      if (s === undefined) {
        s = this.slotOf.size;
        this.slotOf.set(key, s);
      }
      return s;
    };
    this.diag = new Int32Array(n);
    for (let k = 0; k < n; k++) this.diag[k] = slot(k, k);
    for (let e = 0; e < rows.length; e++) slot(inv[rows[e]!]!, inv[cols[e]!]!);
    const rStart = new Int32Array(n + 1);
    let total = 0;
    let updTotal = 0;
    const sorted: Int32Array[] = [];
    for (let k = 0; k < n; k++) {
      const r = Int32Array.from(reach[k]!.map((u) => inv[u]!)).sort();
      sorted.push(r);
      rStart[k] = total;
      total += r.length;
      updTotal += r.length * r.length;
    }
    rStart[n] = total;
    this.rStart = rStart;
    this.rIndex = new Int32Array(total);
    this.lSlot = new Int32Array(total);
    this.uSlot = new Int32Array(total);
    this.updStart = new Int32Array(n + 1);
    this.updSlot = new Int32Array(updTotal);
    let u = 0;
    for (let k = 0; k < n; k++) {
      const r = sorted[k]!;
      this.updStart[k] = u;
      for (let t = 0; t < r.length; t++) {
        const i = r[t]!;
        this.rIndex[rStart[k]! + t] = i;
        this.lSlot[rStart[k]! + t] = slot(i, k);
        this.uSlot[rStart[k]! + t] = slot(k, i);
      }
      for (let a = 0; a < r.length; a++) for (let b = 0; b < r.length; b++) this.updSlot[u++] = slot(r[a]!, r[b]!);
    }
    this.updStart[n] = u;
    this.values = new Float64Array(this.slotOf.size);
    this.work = new Float64Array(n);
  }

  /** The value slot of entry (row, col) in original indices; −1 if it is not in the pattern. */
  position(row: number, col: number): number {
    return this.slotOf.get(this.inverse[row]! * this.n + this.inverse[col]!) ?? -1;
  }

  /** Number of value slots (non-zeros of L + U), a measure of fill. */
  get size(): number {
    return this.values.length;
  }

  /** Zeroes every slot, fill included, before a new matrix is stamped. */
  clear(): void {
    this.values.fill(0);
  }

  /** Factors the stamped matrix in place. Returns false, leaving the values undefined, when a pivot is zero or not finite. */
  factor(): boolean {
    const v = this.values;
    const n = this.n;
    const rStart = this.rStart;
    const lSlot = this.lSlot;
    const uSlot = this.uSlot;
    const updStart = this.updStart;
    const updSlot = this.updSlot;
    for (let k = 0; k < n; k++) {
      const piv = v[this.diag[k]!]!;
      const r0 = rStart[k]!;
      const r1 = rStart[k + 1]!;
      if (piv === 0 || !Number.isFinite(piv)) return false;
      const inv = 1 / piv;
      for (let t = r0; t < r1; t++) v[lSlot[t]!]! *= inv;
      let u = updStart[k]!;
      for (let a = r0; a < r1; a++) {
        const l = v[lSlot[a]!]!;
        if (l === 0) {
          u += r1 - r0;
          continue;
        }
        for (let b = r0; b < r1; b++) v[updSlot[u++]!]! -= l * v[uSlot[b]!]!;
      }
    }
    return true;
  }

  /** Solves A·x = b with the last factorisation; `b` and `x` are in original indices and may be the same array. */
  solve(b: Float64Array, x: Float64Array): void {
    this.substitute(b, x, this.lSlot, this.uSlot, false);
  }

  /**
   * Solves Aᵀ·x = b with the last factorisation (for adjoint sensitivities): Uᵀ forward,
   * then Lᵀ backward. `b` and `x` are in original indices and may be the same array.
   */
  solveTransposed(b: Float64Array, x: Float64Array): void {
    this.substitute(b, x, this.uSlot, this.lSlot, true);
  }

  /**
   * Forward then backward substitution over the pivots' shared structure: L then U for A,
   * Uᵀ then Lᵀ for Aᵀ. The diagonal (U's) divides in the forward pass for Aᵀ, in the
   * backward pass for A.
   */
  private substitute(b: Float64Array, x: Float64Array, forward: Int32Array, backward: Int32Array, divideForward: boolean): void {
    const n = this.n;
    const y = this.work;
    const v = this.values;
    const perm = this.perm;
    const rStart = this.rStart;
    const rIndex = this.rIndex;
    for (let k = 0; k < n; k++) y[k] = b[perm[k]!]!;
    for (let k = 0; k < n; k++) {
      if (divideForward) y[k] = y[k]! / v[this.diag[k]!]!;
      const yk = y[k]!;
      if (yk === 0) continue;
      for (let t = rStart[k]!; t < rStart[k + 1]!; t++) y[rIndex[t]!]! -= v[forward[t]!]! * yk;
    }
    for (let k = n - 1; k >= 0; k--) {
      let sum = y[k]!;
      for (let t = rStart[k]!; t < rStart[k + 1]!; t++) sum -= v[backward[t]!]! * y[rIndex[t]!]!;
      y[k] = divideForward ? sum : sum / v[this.diag[k]!]!;
    }
    for (let k = 0; k < n; k++) x[perm[k]!] = y[k]!;
  }
}
