/**
 * Maximum-cardinality matching, ignoring weights: Edmonds' blossom algorithm in its
 * unweighted form (one alternating-tree search per single vertex, blossoms shrunk by
 * union–find on their bases), from a greedy start. The weighted solver uses it to learn how
 * many vertices every maximum matching must leave single.
 *
 * Two standard facts keep it fast: a vertex with no augmenting path stays so after later
 * augmentations, and the vertices of a failed (Hungarian) search tree can be dropped for all
 * later searches, so failed searches cost O(edges) in total.
 */

export interface CardinalityMatching {
  /** Per vertex, its partner or -1. */
  partner: Int32Array;
  /** Per vertex, the index of its matched edge or -1. */
  matchedEdge: Int32Array;
  pairCount: number;
  /** Vertices left single: vertexCount − 2·pairCount. */
  exposed: number;
  /**
   * Per vertex, 1 for the odd (inner) vertices of the failed search trees: a Tutte–Berge
   * barrier A with (odd components of G − A) − |A| = exposed, which proves the matching maximum.
   */
  barrier: Uint8Array;
}

/**
 * Maximum-cardinality matching of the graph with `vertexCount` vertices and edges
 * tail[k]–head[k]. Self-loops are ignored; parallel edges are fine. `startPartner` (per vertex
 * its partner or -1, pairs joined by edges of this graph) replaces the greedy start.
 *
 * @example
 * // path 0–1–2–3: two pairs, nobody single
 * findMaximumCardinalityMatching(4, Int32Array.of(0, 1, 2), Int32Array.of(1, 2, 3)).exposed  // → 0
 */
export function findMaximumCardinalityMatching(
  vertexCount: number,
  tail: Int32Array,
  head: Int32Array,
  startPartner?: Int32Array,
): CardinalityMatching {
  const n = vertexCount;
  const m = tail.length;
  const start = new Int32Array(n + 1);
  for (let k = 0; k < m; k++) {
    if (tail[k] === head[k]) continue;
    start[tail[k] + 1]++;
    start[head[k] + 1]++;
  }
  for (let v = 0; v < n; v++) start[v + 1] += start[v];
  const neighbour = new Int32Array(start[n]);
  const neighbourEdge = new Int32Array(start[n]);
  {
    const fill = start.slice(0, n);
    for (let k = 0; k < m; k++) {
      const a = tail[k];
      const b = head[k];
      if (a === b) continue;
      neighbour[fill[a]] = b;
      neighbourEdge[fill[a]++] = k;
      neighbour[fill[b]] = a;
      neighbourEdge[fill[b]++] = k;
    }
  }

  const mate = startPartner ? Int32Array.from(startPartner) : new Int32Array(n).fill(-1);
  // Greedy start, lowest degree first: vertices with few options get one of them.
  const order = startPartner ? [] : Array.from({ length: n }, (_, v) => v).sort((x, y) => start[x + 1] - start[x] - (start[y + 1] - start[y]));
  for (const v of order) {
    if (mate[v] !== -1) continue;
    let best = -1;
    for (let i = start[v]; i < start[v + 1]; i++) {
      const w = neighbour[i];
      if (mate[w] === -1 && w !== v && (best === -1 || start[w + 1] - start[w] < start[best + 1] - start[best])) best = w;
    }
    if (best !== -1) {
      mate[v] = best;
      mate[best] = v;
    }
  }

  // Per-search state, valid only where its stamp equals the current search.
  const searchStamp = new Int32Array(n);
  const isEven = new Uint8Array(n);
  const parent = new Int32Array(n);
  const unionParent = new Int32Array(n);
  const markStamp = new Int32Array(n);
  const dead = new Uint8Array(n);
  const barrier = new Uint8Array(n);
  const queue = new Int32Array(n);
  let search = 0;
  let mark = 0;

  const touch = (v: number): void => {
    if (searchStamp[v] !== search) {
      searchStamp[v] = search;
      isEven[v] = 0;
      parent[v] = -1;
      unionParent[v] = v;
    }
  };
  const baseOf = (v: number): number => {
    touch(v);
    let root = v;
    while (unionParent[root] !== root) root = unionParent[root];
    while (unionParent[v] !== root) {
      const next = unionParent[v];
      unionParent[v] = root;
      v = next;
    }
    return root;
  };

  for (let root = 0; root < n; root++) {
    if (mate[root] !== -1 || dead[root] === 1 || start[root] === start[root + 1]) continue;
    search++;
    touch(root);
    isEven[root] = 1;
    let queueHead = 0;
    let queueTail = 0;
    queue[queueTail++] = root;
    const explored: number[] = [root];
    let found = -1;

    const commonBase = (a: number, b: number): number => {
      mark++;
      for (;;) {
        a = baseOf(a);
        markStamp[a] = mark;
        if (mate[a] === -1) break;
        a = parent[mate[a]];
      }
      for (;;) {
        b = baseOf(b);
        if (markStamp[b] === mark) return b;
        b = parent[mate[b]];
      }
    };
    const shrinkPath = (v: number, base: number, child: number, bases: number[]): void => {
      while (baseOf(v) !== base) {
        const odd = mate[v];
        bases.push(baseOf(v), baseOf(odd));
        parent[v] = child;
        child = odd;
        if (isEven[odd] === 0) {
          isEven[odd] = 1;
          queue[queueTail++] = odd;
          explored.push(odd);
        }
        v = parent[odd];
      }
    };

    while (queueHead < queueTail && found === -1) {
      const v = queue[queueHead++];
      for (let i = start[v]; i < start[v + 1]; i++) {
        const to = neighbour[i];
        if (dead[to] === 1 || mate[v] === to) continue;
        touch(to);
        if (baseOf(v) === baseOf(to)) continue;
        if (isEven[to] === 1) {
          // two even vertices of this tree: shrink the odd cycle through their common base
          const base = commonBase(v, to);
          const bases: number[] = [];
          shrinkPath(v, base, to, bases);
          shrinkPath(to, base, v, bases);
          for (const b of bases) if (b !== base) unionParent[b] = base;
        } else if (parent[to] === -1) {
          parent[to] = v;
          explored.push(to);
          if (mate[to] === -1) {
            found = to;
            break;
          }
          const next = mate[to];
          touch(next);
          isEven[next] = 1;
          queue[queueTail++] = next;
          explored.push(next);
        }
      }
    }

    if (found === -1) {
      // Hungarian tree: no augmenting path can ever use these vertices
      for (const v of explored) {
        dead[v] = 1;
        if (isEven[v] === 0) barrier[v] = 1;
      }
      continue;
    }
    for (let v = found; v !== -1; ) {
      const previous = parent[v];
      const nextFree = mate[previous];
      mate[v] = previous;
      mate[previous] = v;
      v = nextFree;
    }
  }

  const matchedEdge = new Int32Array(n).fill(-1);
  let pairCount = 0;
  for (let v = 0; v < n; v++) {
    if (mate[v] <= v) continue;
    pairCount++;
    for (let i = start[v]; i < start[v + 1]; i++) {
      if (neighbour[i] === mate[v]) {
        matchedEdge[v] = neighbourEdge[i];
        matchedEdge[mate[v]] = neighbourEdge[i];
        break;
      }
    }
  }
  return { partner: mate, matchedEdge, pairCount, exposed: n - 2 * pairCount, barrier };
}

/**
 * Whether `barrier` proves that no matching leaves fewer than `exposed` vertices single:
 * by the Tutte–Berge formula every matching leaves at least (odd components of G − A) − |A|
 * vertices single. Components are found by union–find over the edges not touching A.
 *
 * @example
 * // star with centre 0 and leaves 1, 2, 3: A = {0} leaves three odd components, 3 − 1 = 2
 * barrierProvesDeficiency(4, Int32Array.of(0, 0, 0), Int32Array.of(1, 2, 3), Uint8Array.of(1, 0, 0, 0), 2)  // → true
 */
export function barrierProvesDeficiency(
  vertexCount: number,
  tail: Int32Array,
  head: Int32Array,
  barrier: Uint8Array,
  exposed: number,
): boolean {
  const parent = new Int32Array(vertexCount);
  for (let v = 0; v < vertexCount; v++) parent[v] = v;
  const find = (v: number): number => {
    while (parent[v] !== v) {
      parent[v] = parent[parent[v]];
      v = parent[v];
    }
    return v;
  };
  for (let k = 0; k < tail.length; k++) {
    const a = tail[k];
    const b = head[k];
    if (barrier[a] === 1 || barrier[b] === 1) continue;
    const ra = find(a);
    const rb = find(b);
    if (ra !== rb) parent[ra] = rb;
  }
  const size = new Int32Array(vertexCount);
  let barrierSize = 0;
  for (let v = 0; v < vertexCount; v++) {
    if (barrier[v] === 1) barrierSize++;
    else size[find(v)]++;
  }
  let oddComponents = 0;
  for (let v = 0; v < vertexCount; v++) if (barrier[v] === 0 && parent[v] === v && size[v] % 2 === 1) oddComponents++;
  return oddComponents - barrierSize >= exposed;
}
