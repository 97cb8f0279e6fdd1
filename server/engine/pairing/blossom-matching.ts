/**
 * Maximum-weight perfect matching on a general graph: Edmonds' blossom algorithm in its
 * primal–dual (weighted) form, as laid out in Galil's 1986 survey "Efficient algorithms for
 * finding maximum matching in graphs" (ACM Computing Surveys 18(1)): alternating trees of
 * outer and inner vertices grow along tight edges, odd cycles shrink into blossoms, duals
 * change by the largest step that keeps every edge feasible, and an augmenting path between
 * two trees adds a pair.
 *
 * Written for the pairing engine; it differs from the textbook O(n³) loop in these ways, all
 * for speed on large sparse graphs with a good starting point:
 *
 * - Warm start. Any feasible dual with a matching on tight edges may be handed in. This is
 *   the perfect-matching LP (vertex duals have no sign constraint), so free vertices need
 *   not share one dual value as they must in the non-perfect formulation.
 * - One clock for all duals. Every outer vertex moves down and every inner vertex up by the
 *   same step, so a vertex's dual is a fixed base plus the "frame" of its top-level blossom,
 *   and a top blossom's frame follows a global clock. A dual change is O(1): the clock moves.
 *   A nested blossom or vertex keeps a fixed offset from its parent's frame, so shrinking and
 *   expanding a blossom touch its children only; the top-level blossom of a vertex is found by
 *   walking parents with remembered shortcuts that die when their target is expanded.
 * - Event heaps. Future events (an outer–free edge or outer–outer edge becoming tight, an
 *   inner blossom's dual reaching zero) sit in heaps keyed by the clock value at which they
 *   happen. Entries are checked when popped and dropped or re-scheduled when stale. A free
 *   vertex keeps only its earliest outer edge on the heap and rescans its edges when needed.
 * - Trees survive augmentation. After an augmenting path is used only the two alternating
 *   trees it joined are dissolved; every other tree keeps growing from where it was.
 * - No recursion on blossom nesting, which can be thousands deep.
 *
 * Scale: duals use the "doubled" convention, slack(k) = dual[a] + dual[b] − 2·weight[k]
 * + 2·Σ blossomDual over blossoms containing both ends. With integer weights and all warm-start
 * duals even, every dual stays an integer (trees only ever join along tight edges, so the
 * roots' common parity keeps outer–outer slacks even), and doubles represent them exactly while
 * magnitudes stay below 2^53; callers keep weights well inside that.
 *
 * Terminology: "outer" = even = S label, "inner" = odd = T label (Edmonds' own words).
 */

import { EventHeap } from "./event-heap.ts";

/** An undirected graph; edge k joins edgeTail[k] and edgeHead[k] with weight edgeWeight[k]. */
export interface MatchingGraph {
  vertexCount: number;
  edgeTail: Int32Array;
  edgeHead: Int32Array;
  /** Weights to maximise. Use integers: the solver's exactness relies on it. */
  edgeWeight: Float64Array;
}

/** A starting point: duals feasible for every edge and a matching on tight edges only. */
export interface MatchingWarmStart {
  /** Per vertex, the index of its matched edge, or -1. */
  matchedEdge: Int32Array;
  /** Per vertex, dual in the doubled scale (see module comment). */
  vertexDual: Float64Array;
}

/** A perfect matching with the dual solution that proves it optimal. */
export interface PerfectMatchingCertificate {
  ok: true;
  /** Per vertex, the index of its matched edge. */
  matchedEdge: Int32Array;
  vertexDual: Float64Array;
  /** Indexed 0..2n-1; blossom ids are n..2n-1; zero for vertices and unused ids. */
  blossomDual: Float64Array;
  /** Indexed 0..2n-1; -1 for top-level vertices/blossoms and unused ids. */
  blossomParent: Int32Array;
  /** Dual changes (clock moves) the solve needed. */
  events: number;
  augmentations: number;
}

/**
 * No perfect matching. When the solver ran out of events the matching it reached is of
 * maximum cardinality; `exposed` counts its single vertices and `matchedEdge` gives it (both
 * absent when the failure had another cause).
 */
export interface PerfectMatchingFailure {
  ok: false;
  reason: string;
  exposed?: number;
  /** Per vertex its matched edge, or -1. */
  matchedEdge?: Int32Array;
}

export type PerfectMatchingOutcome = PerfectMatchingCertificate | PerfectMatchingFailure;

const FREE = 0;
const OUTER = 1;
const INNER = 2;
const BREADCRUMB = 4;

/** Python-style index: negative counts from the end. Blossom rings are walked both ways. */
function ringAt(values: number[], index: number): number {
  return values[index < 0 ? index + values.length : index];
}

/**
 * Maximum-weight perfect matching of `graph`, optionally from a warm start.
 *
 * Returns `{ ok: true, matchedEdge, vertexDual, blossomDual, blossomParent, … }` — the dual
 * solution certifies optimality (every edge's slack ≥ 0, matched edges' slack = 0) — or
 * `{ ok: false, reason }` when the graph has no perfect matching or the event cap is reached.
 * Throws RangeError for malformed input (edge ends out of range, a self-loop, or a warm start
 * that is not feasible or whose matched edges are not tight).
 *
 * @example
 * // path 0–1–2–3 with weights 5, 1, 5: the perfect matching is {0–1, 2–3}, weight 10
 * solveMaximumWeightPerfectMatching({ vertexCount: 4,
 *   edgeTail: Int32Array.of(0, 1, 2), edgeHead: Int32Array.of(1, 2, 3),
 *   edgeWeight: Float64Array.of(5, 1, 5) }).matchedEdge  // → Int32Array [0, 0, 2, 2]
 */
export function solveMaximumWeightPerfectMatching(
  graph: MatchingGraph,
  warmStart?: MatchingWarmStart,
): PerfectMatchingOutcome {
  const n = graph.vertexCount;
  const tail = graph.edgeTail;
  const head = graph.edgeHead;
  const weight = graph.edgeWeight;
  const edgeCount = tail.length;
  if (head.length !== edgeCount || weight.length !== edgeCount) {
    throw new RangeError("edgeTail, edgeHead and edgeWeight must have the same length");
  }
  if (!Number.isInteger(n) || n < 0) throw new RangeError("vertexCount must be a non-negative integer");

  // ---- adjacency: for vertex v, the edge endpoints p whose vertex is a neighbour of v ----
  const adjacencyStart = new Int32Array(n + 1);
  for (let k = 0; k < edgeCount; k++) {
    const a = tail[k];
    const b = head[k];
    if (a < 0 || a >= n || b < 0 || b >= n) throw new RangeError(`edge ${k} has an end outside 0..${n - 1}`);
    if (a === b) throw new RangeError(`edge ${k} is a self-loop`);
    adjacencyStart[a + 1]++;
    adjacencyStart[b + 1]++;
  }
  for (let v = 0; v < n; v++) adjacencyStart[v + 1] += adjacencyStart[v];
  const adjacency = new Int32Array(2 * edgeCount);
  {
    const fill = adjacencyStart.slice(0, n);
    for (let k = 0; k < edgeCount; k++) {
      adjacency[fill[tail[k]]++] = 2 * k + 1;
      adjacency[fill[head[k]]++] = 2 * k;
    }
  }
  const endpoint = (p: number): number => ((p & 1) === 1 ? head[p >> 1] : tail[p >> 1]);

  // ---- primal state ----
  const twoN = 2 * n;
  /** Remote endpoint of the matched edge, or -1. */
  const mate = new Int32Array(n).fill(-1);
  const label = new Uint8Array(twoN);
  /** Endpoint through which a vertex/top blossom got its label (points at the labelling vertex). */
  const labelEnd = new Int32Array(twoN).fill(-1);
  const blossomParent = new Int32Array(twoN).fill(-1);
  const blossomChildren: number[][] = new Array<number[]>(twoN);
  const blossomEnds: number[][] = new Array<number[]>(twoN);
  /** Per top blossom, the vertices inside it (other than itself) that carry a label. */
  const markedLeaves: number[][] = new Array<number[]>(twoN);
  for (let b = 0; b < twoN; b++) {
    blossomChildren[b] = [];
    blossomEnds[b] = [];
    markedLeaves[b] = [];
  }
  const blossomBase = new Int32Array(twoN).fill(-1);
  for (let v = 0; v < n; v++) blossomBase[v] = v;
  const blossomVersion = new Int32Array(twoN);
  const unusedBlossoms: number[] = [];
  for (let b = twoN - 1; b >= n; b--) unusedBlossoms.push(b);
  /** Root vertex of the alternating tree a labelled top blossom belongs to. */
  const treeOf = new Int32Array(twoN).fill(-1);
  const treeMembers: (number[] | null)[] = new Array<number[] | null>(n).fill(null);
  const seenStamp = new Int32Array(twoN);
  let seenEpoch = 0;

  // ---- lazy dual state ----
  // Every vertex and blossom x has a "frame" F(x). For a top-level x it follows the clock,
  // F(x) = offsetBase + sign·(clock − offsetTime), with sign -1 (outer), +1 (inner) or 0 (free),
  // so one clock move changes every dual at once. A nested x keeps F(x) = F(parent) + rel[x],
  // rel fixed when it was nested. A vertex's dual is vertexBase[v] + F(v). Shrinking and
  // expanding a blossom therefore touch its children only, never all of its vertices.
  let clock = 0;
  const vertexBase = new Float64Array(n);
  const offsetBase = new Float64Array(twoN);
  const offsetTime = new Float64Array(twoN);
  const offsetSign = new Int8Array(twoN);
  const rel = new Float64Array(twoN);
  const zBase = new Float64Array(twoN);
  const zTime = new Float64Array(twoN);
  const zSign = new Int8Array(twoN);

  const offsetValue = (b: number): number => offsetBase[b] + offsetSign[b] * (clock - offsetTime[b]);
  const zOf = (b: number): number => zBase[b] + zSign[b] * (clock - zTime[b]);

  // Top-level blossom of a vertex by walking parents, with shortcuts: shortcutTarget[x] is an
  // ancestor of x and shortcutSum[x] the sum of rel from x up to it. A shortcut is valid while
  // its target has not been expanded (only top-level blossoms expand, so nothing between x and
  // the target can have changed first); blossomVersion tells.
  const shortcutTarget = new Int32Array(twoN).fill(-1);
  const shortcutSum = new Float64Array(twoN);
  const shortcutVersion = new Int32Array(twoN);
  const walkNode = new Int32Array(twoN);
  const walkSum = new Float64Array(twoN);
  let resolvedSum = 0;
  const topOf = (v: number): number => {
    if (blossomParent[v] === -1) {
      resolvedSum = 0;
      return v;
    }
    let target = shortcutTarget[v];
    if (target !== -1 && blossomVersion[target] === shortcutVersion[v] && blossomParent[target] === -1) {
      resolvedSum = shortcutSum[v];
      return target;
    }
    let x = v;
    let sum = 0;
    let steps = 0;
    while (blossomParent[x] !== -1) {
      walkNode[steps] = x;
      walkSum[steps++] = sum;
      target = shortcutTarget[x];
      if (target !== -1 && blossomVersion[target] === shortcutVersion[x]) {
        sum += shortcutSum[x];
        x = target;
      } else {
        sum += rel[x];
        x = blossomParent[x];
      }
    }
    const version = blossomVersion[x];
    for (let step = 0; step < steps; step++) {
      const node = walkNode[step];
      shortcutTarget[node] = x;
      shortcutSum[node] = sum - walkSum[step];
      shortcutVersion[node] = version;
    }
    resolvedSum = sum;
    return x;
  };
  const dualOf = (v: number): number => {
    const top = topOf(v);
    return vertexBase[v] + resolvedSum + offsetValue(top);
  };
  const slack = (k: number): number => dualOf(tail[k]) + dualOf(head[k]) - 2 * weight[k];

  /** Outer: vertices go down (-1) and the blossom dual up; inner the reverse; free: frozen. */
  const setSign = (b: number, sign: number): void => {
    offsetBase[b] = offsetValue(b);
    offsetTime[b] = clock;
    offsetSign[b] = sign;
    if (b >= n) {
      zBase[b] = zOf(b);
      zTime[b] = clock;
      zSign[b] = -sign;
    }
  };
  const setFrozenOffset = (b: number, value: number): void => {
    offsetBase[b] = value;
    offsetTime[b] = clock;
    offsetSign[b] = 0;
  };

  // ---- initial matching and duals ----
  if (warmStart) {
    if (warmStart.matchedEdge.length !== n || warmStart.vertexDual.length !== n) {
      throw new RangeError("warm start arrays must have one entry per vertex");
    }
    vertexBase.set(warmStart.vertexDual);
    for (let v = 0; v < n; v++) {
      const k = warmStart.matchedEdge[v];
      if (k < 0) continue;
      if (k >= edgeCount || (tail[k] !== v && head[k] !== v)) throw new RangeError(`warm start: edge ${k} does not touch vertex ${v}`);
      const partner = tail[k] === v ? head[k] : tail[k];
      if (warmStart.matchedEdge[partner] !== k) throw new RangeError(`warm start: vertex ${partner} does not share edge ${k}`);
      mate[v] = tail[k] === v ? 2 * k + 1 : 2 * k;
    }
    for (let k = 0; k < edgeCount; k++) {
      const s = slack(k);
      if (s < 0) throw new RangeError(`warm start: dual infeasible on edge ${k} (slack ${s})`);
      if (mate[tail[k]] === 2 * k + 1 && s !== 0) throw new RangeError(`warm start: matched edge ${k} is not tight`);
    }
  } else {
    let maximumWeight = Number.NEGATIVE_INFINITY;
    for (let k = 0; k < edgeCount; k++) if (weight[k] > maximumWeight) maximumWeight = weight[k];
    vertexBase.fill(edgeCount > 0 ? maximumWeight : 0);
  }

  const queue: number[] = [];
  const edgeEvents = new EventHeap(Math.min(1 << 16, 4 * edgeCount + 4));
  const blossomEvents = new EventHeap(64);

  const leafStack: number[] = [];
  const collectLeaves = (b: number, out: number[]): void => {
    if (b < n) {
      out.push(b);
      return;
    }
    leafStack.length = 0;
    leafStack.push(b);
    while (leafStack.length > 0) {
      const t = leafStack.pop() as number;
      if (t < n) out.push(t);
      else for (const child of blossomChildren[t]) leafStack.push(child);
    }
  };

  const addTreeMember = (tree: number, b: number): void => {
    treeOf[b] = tree;
    let members = treeMembers[tree];
    if (members === null) {
      members = [];
      treeMembers[tree] = members;
    }
    members.push(b);
  };

  /** Label a vertex inside (or equal to) top blossom b, remembering it so the label can be cleared. */
  const markVertex = (w: number, b: number, t: number, p: number): void => {
    label[w] = t;
    labelEnd[w] = p;
    if (w !== b) markedLeaves[b].push(w);
  };
  const clearMarks = (b: number): void => {
    const marked = markedLeaves[b];
    for (const w of marked) {
      label[w] = FREE;
      labelEnd[w] = -1;
    }
    marked.length = 0;
  };

  const assignLabel = (w: number, t: number, p: number): void => {
    const b = topOf(w);
    markVertex(w, b, t, p);
    label[b] = t;
    labelEnd[b] = p;
    addTreeMember(p === -1 ? w : treeOf[topOf(endpoint(p))], b);
    if (t === OUTER) {
      setSign(b, -1);
      collectLeaves(b, queue);
    } else {
      setSign(b, 1);
      if (b >= n) blossomEvents.push(clock + zOf(b), b, blossomVersion[b]);
      const base = blossomBase[b];
      assignLabel(endpoint(mate[base]), OUTER, mate[base] ^ 1);
    }
  };

  /** Trace both tree paths upward; the first blossom met twice is the new blossom's base, -1 if the paths reach two roots. */
  const scanBlossom = (vStart: number, wStart: number): number => {
    let v = vStart;
    let w = wStart;
    const path: number[] = [];
    let base = -1;
    while (v !== -1 || w !== -1) {
      let b = topOf(v);
      if ((label[b] & BREADCRUMB) !== 0) {
        base = blossomBase[b];
        break;
      }
      path.push(b);
      label[b] = OUTER | BREADCRUMB;
      if (labelEnd[b] === -1) {
        v = -1;
      } else {
        v = endpoint(labelEnd[b]);
        b = topOf(v);
        v = endpoint(labelEnd[b]);
      }
      if (w !== -1) {
        const swap = v;
        v = w;
        w = swap;
      }
    }
    for (const b of path) label[b] = OUTER;
    return base;
  };

  const addBlossom = (base: number, k: number): void => {
    let v = tail[k];
    let w = head[k];
    const bb = topOf(base);
    let bv = topOf(v);
    let bw = topOf(w);
    const b = unusedBlossoms.pop();
    if (b === undefined) throw new Error("blossom ids exhausted (internal error)");
    blossomVersion[b]++;
    blossomBase[b] = base;
    blossomParent[b] = -1;
    // walk both tree paths down to the base first: parents are set only afterwards, because
    // top-level lookups follow them
    const path: number[] = [];
    const ends: number[] = [];
    while (bv !== bb) {
      path.push(bv);
      ends.push(labelEnd[bv]);
      v = endpoint(labelEnd[bv]);
      bv = topOf(v);
    }
    path.push(bb);
    path.reverse();
    ends.reverse();
    ends.push(2 * k);
    while (bw !== bb) {
      path.push(bw);
      ends.push(labelEnd[bw] ^ 1);
      w = endpoint(labelEnd[bw]);
      bw = topOf(w);
    }
    for (const child of path) blossomParent[child] = b;
    blossomChildren[b] = path;
    blossomEnds[b] = ends;
    label[b] = OUTER;
    labelEnd[b] = labelEnd[bb];
    addTreeMember(treeOf[bb], b);

    // The new blossom's frame starts at 0; each child keeps its frame as rel (fixed from now).
    offsetBase[b] = 0;
    offsetTime[b] = clock;
    offsetSign[b] = -1;
    zBase[b] = 0;
    zTime[b] = clock;
    zSign[b] = 1;
    shortcutTarget[b] = -1;
    for (const child of path) {
      const childWasInner = label[child] === INNER;
      rel[child] = offsetValue(child);
      setSign(child, 0);
      clearMarks(child);
      label[child] = FREE;
      labelEnd[child] = -1;
      treeOf[child] = -1;
      // inner vertices become outer: they must now look at their own edges
      if (childWasInner) collectLeaves(child, queue);
    }
  };

  /**
   * A free vertex w keeps few outer–free edges on the heap. Invariant: when freeBestEdge[w]
   * is set, that edge is on the heap at time freeBestDue[w]; every other edge from w to an
   * outer vertex has an entry of its own, or is due no earlier and freeSkipped[w] is set.
   * When the best entry is popped or goes stale and edges were skipped, w's edges are scanned
   * again, before any skipped edge can become tight.
   */
  const freeBestEdge = new Int32Array(n).fill(-1);
  const freeBestDue = new Float64Array(n).fill(Number.POSITIVE_INFINITY);
  const freeSkipped = new Uint8Array(n);
  const otherEnd = (k: number, v: number): number => (tail[k] === v ? head[k] : tail[k]);
  const freeBestIsCurrent = (w: number): boolean => {
    const k = freeBestEdge[w];
    if (k < 0) return false;
    const x = otherEnd(k, w);
    const bx = topOf(x);
    if (label[bx] !== OUTER) return false;
    const dx = vertexBase[x] + resolvedSum + offsetValue(bx);
    const bw = topOf(w);
    if (bw === bx) return false;
    const dw = vertexBase[w] + resolvedSum + offsetValue(bw);
    return clock + dx + dw - 2 * weight[k] === freeBestDue[w];
  };

  /** x is free: schedule its earliest edge to an outer vertex. */
  const scheduleEdgesOf = (x: number): void => {
    let best = -1;
    let bestDue = Number.POSITIVE_INFINITY;
    let candidates = 0;
    const bx = topOf(x);
    const dx = vertexBase[x] + resolvedSum + offsetValue(bx);
    for (let i = adjacencyStart[x]; i < adjacencyStart[x + 1]; i++) {
      const p = adjacency[i];
      const w = endpoint(p);
      const bw = topOf(w);
      if (bw !== bx && label[bw] === OUTER) {
        const k = p >> 1;
        const due = clock + dx + vertexBase[w] + resolvedSum + offsetValue(bw) - 2 * weight[k];
        candidates++;
        if (due < bestDue) {
          best = k;
          bestDue = due;
        }
      }
    }
    freeBestEdge[x] = best;
    freeBestDue[x] = bestDue;
    freeSkipped[x] = candidates > 1 ? 1 : 0;
    if (best >= 0) edgeEvents.push(bestDue, best, 0);
  };

  const offerFreeEdge = (w: number, k: number, due: number): void => {
    if (freeBestIsCurrent(w)) {
      if (due < freeBestDue[w]) {
        freeBestEdge[w] = k;
        freeBestDue[w] = due;
      } else {
        freeSkipped[w] = 1;
        return;
      }
    } else if (freeSkipped[w] === 1) {
      scheduleEdgesOf(w);
      return;
    } else {
      freeBestEdge[w] = k;
      freeBestDue[w] = due;
    }
    edgeEvents.push(due, k, 0);
  };

  const retireBlossom = (b: number): void => {
    label[b] = FREE;
    labelEnd[b] = -1;
    blossomChildren[b] = [];
    blossomEnds[b] = [];
    markedLeaves[b] = [];
    blossomBase[b] = -1;
    blossomVersion[b]++;
    treeOf[b] = -1;
    setFrozenOffset(b, 0);
    zBase[b] = 0;
    zSign[b] = 0;
    unusedBlossoms.push(b);
  };

  /** Child s of expanding blossom b becomes top-level, keeping its frame (F(b) + rel[s]). */
  const releaseChild = (s: number, frame: number): void => {
    blossomParent[s] = -1;
    setFrozenOffset(s, frame + rel[s]);
    rel[s] = 0;
  };

  /**
   * After an augmentation: take apart an outer blossom whose dual is zero, and with it every
   * nested blossom whose dual is zero (a work list, since nesting can be deep). Labels inside
   * are already clear.
   */
  const expandZeroBlossoms = (root: number): void => {
    const work = [root];
    const frames = [offsetValue(root)];
    while (work.length > 0) {
      const b = work.pop() as number;
      const frame = frames.pop() as number;
      blossomVersion[b]++;
      for (const s of blossomChildren[b]) {
        if (s >= n && zOf(s) === 0) {
          blossomParent[s] = -1;
          work.push(s);
          frames.push(frame + rel[s]);
          rel[s] = 0;
        } else {
          releaseChild(s, frame);
        }
      }
      retireBlossom(b);
    }
  };

  /** An inner blossom whose dual reached zero: make its children top-level and relabel them. */
  const expandBlossom = (b: number): void => {
    const children = blossomChildren[b];
    const frame = offsetValue(b);
    const leaves: number[] = [];
    // shortcuts to b die now, before any vertex is looked up again
    blossomVersion[b]++;
    for (const s of children) releaseChild(s, frame);
    // labels still on vertices now belong to the child tops
    for (const w of markedLeaves[b]) {
      if (label[w] === FREE) continue;
      const top = topOf(w);
      if (top !== w) markedLeaves[top].push(w);
    }
    markedLeaves[b] = [];
    if (label[b] === INNER) {
      // Relabel the part of the ring on the even-length side from the entry child to the base.
      const tree = treeOf[b];
      const ends = blossomEnds[b];
      const entryChild = topOf(endpoint(labelEnd[b] ^ 1));
      let j = children.indexOf(entryChild);
      let jStep: number;
      let endTrick: number;
      if ((j & 1) !== 0) {
        j -= children.length;
        jStep = 1;
        endTrick = 0;
      } else {
        jStep = -1;
        endTrick = 1;
      }
      let p = labelEnd[b];
      while (j !== 0) {
        label[endpoint(p ^ 1)] = FREE;
        label[endpoint(ringAt(ends, j - endTrick) ^ endTrick ^ 1)] = FREE;
        assignLabel(endpoint(p ^ 1), INNER, p);
        j += jStep;
        p = ringAt(ends, j - endTrick) ^ endTrick;
        j += jStep;
      }
      const baseChild = ringAt(children, j);
      markVertex(endpoint(p ^ 1), baseChild, INNER, p);
      label[baseChild] = INNER;
      labelEnd[baseChild] = p;
      addTreeMember(tree, baseChild);
      setSign(baseChild, 1);
      if (baseChild >= n) blossomEvents.push(clock + zOf(baseChild), baseChild, blossomVersion[baseChild]);
      j += jStep;
      while (ringAt(children, j) !== entryChild) {
        const child = ringAt(children, j);
        if (label[child] === OUTER) {
          j += jStep;
          continue;
        }
        // a vertex of this child reached by a tight edge from a live outer vertex makes it inner
        let reached = -1;
        const marked = child < n ? (label[child] !== FREE ? [child] : []) : markedLeaves[child];
        for (const v of marked) {
          if (label[v] === FREE) continue;
          const q = labelEnd[v];
          if (q !== -1 && label[topOf(endpoint(q))] === OUTER && slack(q >> 1) <= 0) {
            reached = v;
            break;
          }
          label[v] = FREE;
          labelEnd[v] = -1;
        }
        if (reached !== -1) {
          label[reached] = FREE;
          label[endpoint(mate[blossomBase[child]])] = FREE;
          assignLabel(reached, INNER, labelEnd[reached]);
        }
        j += jStep;
      }
    }
    retireBlossom(b);
    // children left unlabelled are free again: their edges to outer vertices count from now
    for (const child of children) {
      if (blossomParent[child] !== -1 || label[child] !== FREE) continue;
      clearMarks(child);
      leaves.length = 0;
      collectLeaves(child, leaves);
      for (const leaf of leaves) scheduleEdgesOf(leaf);
    }
  };

  /**
   * Swap matched and unmatched edges on the even path from vertex v to the base of blossom b,
   * making v the base. Sub-blossoms on the path are handled from a work list rather than by
   * recursion: nesting can be thousands deep, and the sub-blossoms touched are disjoint, so
   * the order does not matter.
   */
  const augmentWork: number[] = [];
  const augmentBlossom = (outer: number, vertex: number): void => {
    augmentWork.push(outer, vertex);
    while (augmentWork.length > 0) {
      const v = augmentWork.pop() as number;
      const b = augmentWork.pop() as number;
      let t = v;
      while (blossomParent[t] !== b) t = blossomParent[t];
      if (t >= n) augmentWork.push(t, v);
      const children = blossomChildren[b];
      const ends = blossomEnds[b];
      const i = children.indexOf(t);
      let j = i;
      let jStep: number;
      let endTrick: number;
      if ((i & 1) !== 0) {
        j -= children.length;
        jStep = 1;
        endTrick = 0;
      } else {
        jStep = -1;
        endTrick = 1;
      }
      while (j !== 0) {
        j += jStep;
        t = ringAt(children, j);
        const p = ringAt(ends, j - endTrick) ^ endTrick;
        if (t >= n) augmentWork.push(t, endpoint(p));
        j += jStep;
        t = ringAt(children, j);
        if (t >= n) augmentWork.push(t, endpoint(p ^ 1));
        mate[endpoint(p)] = p ^ 1;
        mate[endpoint(p ^ 1)] = p;
      }
      blossomChildren[b] = children.slice(i).concat(children.slice(0, i));
      blossomEnds[b] = ends.slice(i).concat(ends.slice(0, i));
      // v becomes the base (set here, not read from the first child, whose turn may still be queued)
      blossomBase[b] = v;
    }
  };

  const augmentMatching = (k: number): void => {
    const starts = [tail[k], 2 * k + 1, head[k], 2 * k];
    for (let side = 0; side < 2; side++) {
      let s = starts[2 * side];
      let p = starts[2 * side + 1];
      for (;;) {
        const bs = topOf(s);
        if (bs >= n) augmentBlossom(bs, s);
        mate[s] = p;
        if (labelEnd[bs] === -1) break;
        const t = endpoint(labelEnd[bs]);
        const bt = topOf(t);
        s = endpoint(labelEnd[bt]);
        const j = endpoint(labelEnd[bt] ^ 1);
        if (bt >= n) augmentBlossom(bt, j);
        mate[j] = labelEnd[bt];
        p = labelEnd[bt] ^ 1;
      }
    }
  };

  /**
   * Unlabel every top blossom of one tree; outer blossoms with zero dual are taken apart.
   * Vertices that were inner are collected: their edges to outer vertices of other trees
   * were not scheduled while their slack could not change. Edges of formerly outer vertices
   * that were scanned are already scheduled at an earlier time than they can now become
   * tight, so the heap re-schedules them when they come up; outer vertices not yet scanned
   * (still queued, or interrupted by this augmentation) are handled by the caller.
   */
  const dissolveTree = (root: number, formerlyInner: number[]): void => {
    const members = treeMembers[root];
    treeMembers[root] = null;
    if (members === null) return;
    seenEpoch++;
    const tops: number[] = [];
    for (const b of members) {
      if (blossomParent[b] !== -1 || treeOf[b] !== root || label[b] === FREE) continue;
      if (b >= n && blossomBase[b] < 0) continue;
      if (seenStamp[b] === seenEpoch) continue;
      seenStamp[b] = seenEpoch;
      tops.push(b);
    }
    for (const b of tops) {
      const wasOuter = label[b] === OUTER;
      setSign(b, 0);
      label[b] = FREE;
      labelEnd[b] = -1;
      treeOf[b] = -1;
      clearMarks(b);
      if (!wasOuter) collectLeaves(b, formerlyInner);
      else if (b >= n && zOf(b) === 0) expandZeroBlossoms(b);
    }
  };

  let freeCount = 0;
  let augmentations = 0;
  /** The outer vertex whose edges are being scanned, or -1. */
  let scanning = -1;

  /** Edge endpoint p points at w; v is outer; the edge is tight. */
  const handleTightEdge = (v: number, p: number): void => {
    const w = endpoint(p);
    const bw = topOf(w);
    const lw = label[bw];
    if (lw === FREE) {
      assignLabel(w, INNER, p ^ 1);
    } else if (lw === OUTER) {
      const base = scanBlossom(v, w);
      if (base >= 0) {
        addBlossom(base, p >> 1);
      } else {
        const rootA = treeOf[topOf(v)];
        const rootB = treeOf[bw];
        augmentMatching(p >> 1);
        augmentations++;
        freeCount -= 2;
        const formerlyInner: number[] = [];
        dissolveTree(rootA, formerlyInner);
        dissolveTree(rootB, formerlyInner);
        for (const x of formerlyInner) scheduleEdgesOf(x);
        if (scanning !== -1 && label[topOf(scanning)] === FREE) scheduleEdgesOf(scanning);
        for (const x of queue) if (label[topOf(x)] === FREE) scheduleEdgesOf(x);
      }
    } else if (label[w] === FREE) {
      markVertex(w, bw, INNER, p ^ 1);
    }
  };

  const scanVertex = (v: number): void => {
    scanning = v;
    // v's dual does not change while the clock stands still, whatever happens to its blossom
    let bv = topOf(v);
    const dv = vertexBase[v] + resolvedSum + offsetValue(bv);
    for (let i = adjacencyStart[v]; i < adjacencyStart[v + 1]; i++) {
      if (label[bv] !== OUTER) break;
      const p = adjacency[i];
      const w = endpoint(p);
      const bw = topOf(w);
      if (bv === bw) continue;
      const k = p >> 1;
      const s = dv + vertexBase[w] + resolvedSum + offsetValue(bw) - 2 * weight[k];
      const lw = label[bw];
      if (lw === INNER) {
        if (label[w] === FREE && s <= 0) markVertex(w, bw, INNER, p ^ 1);
        continue;
      }
      if (s <= 0) {
        handleTightEdge(v, p);
        bv = topOf(v);
      } else if (lw === OUTER) {
        edgeEvents.push(clock + s / 2, k, 0);
      } else {
        offerFreeEdge(w, k, clock + s);
      }
    }
    scanning = -1;
  };

  const advanceClock = (time: number): void => {
    if (time < clock) throw new Error(`dual clock would move backwards (${time} < ${clock}): internal error`);
    clock = time;
  };

  /** Pops events until a current one is found and handled; false when none is left. */
  const handleNextEvent = (): boolean => {
    for (;;) {
      const edgeTime = edgeEvents.peekTime();
      const blossomTime = blossomEvents.peekTime();
      if (edgeTime === Number.POSITIVE_INFINITY && blossomTime === Number.POSITIVE_INFINITY) return false;
      if (blossomTime <= edgeTime) {
        const time = blossomEvents.pop();
        const b = blossomEvents.poppedItem;
        const stamp = blossomEvents.poppedStamp;
        if (blossomVersion[b] !== stamp || blossomBase[b] < 0 || blossomParent[b] !== -1 || label[b] !== INNER) continue;
        const due = clock + zOf(b);
        if (due > time) {
          blossomEvents.push(due, b, stamp);
          continue;
        }
        advanceClock(due);
        expandBlossom(b);
        return true;
      }
      const time = edgeEvents.pop();
      const k = edgeEvents.poppedItem;
      // a popped best entry is no longer on the heap, whatever happens to it now
      const tailRelied = freeBestEdge[tail[k]] === k;
      const headRelied = freeBestEdge[head[k]] === k;
      if (tailRelied) freeBestEdge[tail[k]] = -1;
      if (headRelied) freeBestEdge[head[k]] = -1;
      const bt = topOf(tail[k]);
      const tailDual = vertexBase[tail[k]] + resolvedSum + offsetValue(bt);
      const bh = topOf(head[k]);
      const headDual = vertexBase[head[k]] + resolvedSum + offsetValue(bh);
      const edgeSlack = tailDual + headDual - 2 * weight[k];
      const lt = bt === bh ? FREE : label[bt];
      const lh = bt === bh ? FREE : label[bh];
      let due: number;
      if (lt === OUTER && lh === OUTER) {
        due = clock + edgeSlack / 2;
      } else if ((lt === OUTER && lh === FREE) || (lt === FREE && lh === OUTER)) {
        due = clock + edgeSlack;
        const w = lt === FREE ? tail[k] : head[k];
        if (due > time && (lt === FREE ? tailRelied : headRelied)) {
          if (freeSkipped[w] === 1) {
            scheduleEdgesOf(w);
            continue;
          }
          freeBestEdge[w] = k;
          freeBestDue[w] = due;
        }
      } else {
        // no longer an outer–free or outer–outer edge; a free end that relied on it looks again
        if (tailRelied && label[bt] === FREE && freeSkipped[tail[k]] === 1) scheduleEdgesOf(tail[k]);
        if (headRelied && label[bh] === FREE && freeSkipped[head[k]] === 1) scheduleEdgesOf(head[k]);
        continue;
      }
      if (due > time) {
        edgeEvents.push(due, k, 0);
        continue;
      }
      advanceClock(due);
      if (lt === OUTER) handleTightEdge(tail[k], 2 * k + 1);
      else handleTightEdge(head[k], 2 * k);
      return true;
    }
  };

  for (let v = 0; v < n; v++) if (mate[v] === -1) freeCount++;
  for (let v = 0; v < n; v++) {
    if (mate[v] === -1 && label[topOf(v)] === FREE) assignLabel(v, OUTER, -1);
  }

  // Each event labels, shrinks, expands or augments; O(n) of them per augmentation at worst.
  const eventCap = 4 * (n + 1) * (n + 1) + 1000;
  let events = 0;
  while (freeCount > 0) {
    if (queue.length > 0) {
      const v = queue.pop() as number;
      if (label[topOf(v)] === OUTER) scanVertex(v);
      continue;
    }
    events++;
    if (events > eventCap) return { ok: false, reason: `event cap of ${eventCap} reached (internal error)` };
    if (!handleNextEvent()) {
      // No event left: every tree is Hungarian, so the matching is of maximum cardinality.
      const reached = new Int32Array(n);
      for (let v = 0; v < n; v++) reached[v] = mate[v] >> 1;
      return { ok: false, reason: "the graph has no perfect matching", exposed: freeCount, matchedEdge: reached };
    }
  }

  const matchedEdge = new Int32Array(n);
  const vertexDual = new Float64Array(n);
  for (let v = 0; v < n; v++) {
    matchedEdge[v] = mate[v] >> 1;
    vertexDual[v] = dualOf(v);
  }
  const blossomDual = new Float64Array(twoN);
  const parents = new Int32Array(twoN).fill(-1);
  for (let b = 0; b < twoN; b++) {
    if (b >= n && blossomBase[b] < 0) continue;
    parents[b] = blossomParent[b];
    if (b >= n) blossomDual[b] = zOf(b);
  }
  return { ok: true, matchedEdge, vertexDual, blossomDual, blossomParent: parents, events, augmentations };
}

/**
 * Slack of a (possibly new) edge u–v of weight `weight` under a certificate's duals:
 * dual[u] + dual[v] − 2·weight + 2·Σ blossomDual over the blossoms holding both u and v.
 * The certificate stays a proof of optimality for a larger edge set exactly when every
 * added edge has slack ≥ 0.
 *
 * @example
 * const slackOf = createCertificateSlack(certificate);
 * slackOf(0, 3, 2)  // → 0 or more when edge 0–3 of weight 2 could not improve the matching
 */
export function createCertificateSlack(
  certificate: PerfectMatchingCertificate,
): (u: number, v: number, weight: number) => number {
  const n = certificate.vertexDual.length;
  const nodeCount = 2 * n;
  const parent = certificate.blossomParent;
  // Blossoms nest deeply when a component must leave a vertex single, so the smallest
  // blossom holding both ends is found by binary lifting over a preorder numbering
  // (O(log depth) per edge) rather than by walking up the nesting.
  const firstChild = new Int32Array(nodeCount).fill(-1);
  const nextSibling = new Int32Array(nodeCount).fill(-1);
  const isNode = new Uint8Array(nodeCount);
  for (let x = 0; x < nodeCount; x++) {
    if (x < n || parent[x] !== -1) isNode[x] = 1;
    if (parent[x] !== -1) {
      isNode[parent[x]] = 1;
      nextSibling[x] = firstChild[parent[x]];
      firstChild[parent[x]] = x;
    }
  }
  const entry = new Int32Array(nodeCount);
  const exit = new Int32Array(nodeCount);
  const zFromTop = new Float64Array(nodeCount);
  const top = new Int32Array(nodeCount);
  let clock = 0;
  const stack: number[] = [];
  for (let root = 0; root < nodeCount; root++) {
    if (isNode[root] === 0 || parent[root] !== -1) continue;
    stack.push(root);
    while (stack.length > 0) {
      const x = stack[stack.length - 1];
      if (x >= 0) {
        stack[stack.length - 1] = ~x;
        entry[x] = clock++;
        top[x] = root;
        zFromTop[x] = (parent[x] === -1 ? 0 : zFromTop[parent[x]]) + (x >= n ? certificate.blossomDual[x] : 0);
        for (let child = firstChild[x]; child !== -1; child = nextSibling[child]) stack.push(child);
      } else {
        stack.pop();
        exit[~x] = clock;
      }
    }
  }
  let levels = 1;
  while (1 << levels < nodeCount) levels++;
  const jump: Int32Array[] = [Int32Array.from(parent)];
  for (let level = 1; level < levels; level++) {
    const previous = jump[level - 1];
    const current = new Int32Array(nodeCount);
    for (let x = 0; x < nodeCount; x++) current[x] = previous[x] === -1 ? -1 : previous[previous[x]];
    jump.push(current);
  }
  const holds = (b: number, x: number): boolean => entry[b] <= entry[x] && entry[x] < exit[b];
  return (u: number, v: number, weight: number): number => {
    const base = certificate.vertexDual[u] + certificate.vertexDual[v] - 2 * weight;
    if (top[u] !== top[v]) return base;
    // climb from u to the highest ancestor that does not hold v; its parent is the smallest common blossom
    let x = u;
    for (let level = levels - 1; level >= 0; level--) {
      const y = jump[level][x];
      if (y !== -1 && !holds(y, v)) x = y;
    }
    const common = parent[x];
    return common === -1 ? base : base + 2 * zFromTop[common];
  };
}
