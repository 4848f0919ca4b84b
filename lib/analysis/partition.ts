/**
 * The coarsest partition of `n` elements that refines the initial one (`initial[i]`, any
 * labels) and is stable: two elements of a class have, position by position, their k-th
 * successors (`successors[i][k]`, an element index, or −1 for one outside the set) in
 * one class. Returns each element's class, numbered by first appearance (element 0's class
 * is 0, the next new one 1, …).
 *
 * Hopcroft's algorithm for minimising automata (J. Hopcroft, "An n log n algorithm for
 * minimizing states in a finite automaton", 1971), with one letter per successor
 * position: each class is split by the preimages of a splitter class, and of the two
 * halves of a split only the smaller becomes a new splitter, so an element is handled
 * O(log n) times per position — O(k·n·log n) in all. The round-by-round refinement it
 * replaces (every element re-signed until nothing splits) takes as many rounds as the
 * longest chain, quadratic for a chain of 10,000 alike stages.
 *
 * Elements with different numbers of successors are never in one class.
 *
 * Example: three stages in a ring, each the successor of the last, `initial` all equal,
 * form one class: `coarsestPartition(['s','s','s'], [[1],[2],[0]])` is `[0, 0, 0]`; in a
 * chain `[[1],[2],[-1]]` each is its own: `[0, 1, 2]`.
 */
export function coarsestPartition(initial: readonly string[], successors: readonly (readonly number[])[]): Int32Array {
  const n = initial.length;
  // Element n stands for every successor outside the set; it keeps a class of its own.
  const size = n + 1;
  const none = n;
  let letters = 0;
  for (const s of successors) letters = Math.max(letters, s.length);
  const succ = (i: number, k: number) => {
    const t = successors[i]![k]!;
    return t < 0 ? none : t;
  };

  // Inverse transitions per letter, in compressed rows: sources of target t under letter k.
  const invStart: Int32Array[] = [];
  const invList: Int32Array[] = [];
  for (let k = 0; k < letters; k++) {
    const count = new Int32Array(size + 1);
    for (let i = 0; i < n; i++) if (successors[i]!.length > k) count[succ(i, k) + 1]!++;
    for (let t = 0; t < size; t++) count[t + 1]! += count[t]!;
    const list = new Int32Array(count[size]!);
    const fill = count.slice(0, size);
    for (let i = 0; i < n; i++) if (successors[i]!.length > k) list[fill[succ(i, k)]!++] = i;
    invStart.push(count);
    invList.push(list);
  }

  // The partition: elements laid out class by class in `elems`, each class a range.
  const elems = new Int32Array(size);
  const pos = new Int32Array(size);
  const cls = new Int32Array(size);
  const start: number[] = [];
  const end: number[] = [];
  {
    const byKey = new Map<string, number[]>();
    for (let i = 0; i < n; i++) {
      const key = `${successors[i]!.length}|${initial[i]}`;
      (byKey.get(key) ?? byKey.set(key, []).get(key)!).push(i);
    }
    let at = 0;
    for (const members of [...byKey.values(), [none]]) {
      const c = start.length;
      start.push(at);
      for (const i of members) {
        elems[at] = i;
        pos[i] = at;
        cls[i] = c;
        at++;
      }
      end.push(at);
    }
  }

  // Splitters: (class, letter), each at most once in the list.
  const work: number[] = [];
  const queued = new Set<number>();
  const key = (c: number, k: number) => c * letters + k;
  const push = (c: number, k: number) => {
    if (!queued.has(key(c, k))) {
      queued.add(key(c, k));
      work.push(c, k);
    }
  };
  for (let c = 0; c < start.length; c++) for (let k = 0; k < letters; k++) push(c, k);

  const marked = new Int32Array(size); // per class: how many of its elements are in the preimage
  const preimage: number[] = [];
  const touched: number[] = [];
  while (work.length > 0) {
    const k = work.pop()!;
    const c = work.pop()!;
    queued.delete(key(c, k));
    preimage.length = 0;
    for (let p = start[c]!; p < end[c]!; p++) {
      const t = elems[p]!;
      for (let q = invStart[k]![t]!; q < invStart[k]![t + 1]!; q++) preimage.push(invList[k]![q]!);
    }
    // Move each preimage element to the front of its class's range.
    touched.length = 0;
    for (const i of preimage) {
      const y = cls[i]!;
      if (marked[y] === 0) touched.push(y);
      const front = start[y]! + marked[y]!;
      if (pos[i]! >= front) {
        const other = elems[front]!;
        elems[pos[i]!] = other;
        pos[other] = pos[i]!;
        elems[front] = i;
        pos[i] = front;
        marked[y]!++;
      }
    }
    for (const y of touched) {
      const m = marked[y]!;
      marked[y] = 0;
      if (m === end[y]! - start[y]!) continue;
      // Split: the marked front becomes a new class z, the rest stays y.
      const z = start.length;
      start.push(start[y]!);
      end.push(start[y]! + m);
      start[y] = start[y]! + m;
      for (let p = start[z]!; p < end[z]!; p++) cls[elems[p]!] = z;
      const smaller = end[z]! - start[z]! <= end[y]! - start[y]! ? z : y;
      for (let l = 0; l < letters; l++) {
        if (queued.has(key(y, l))) push(z, l);
        else push(smaller, l);
      }
    }
  }

  // Number classes by first appearance.
  const number = new Map<number, number>();
  const out = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    if (!number.has(cls[i]!)) number.set(cls[i]!, number.size);
    out[i] = number.get(cls[i]!)!;
  }
  return out;
}
