/**
 * Maximum-cardinality minimum-cost matching on a general graph with integer edge costs.
 *
 * Method, per connected component (components never interact):
 * 1. How many must stay single. An unweighted maximum matching (cardinality-matching.ts) gives
 *    the deficiency D: the number of vertices every maximum matching leaves single.
 * 2. A perfect-matching problem with the same optimum, in one of two forms:
 *    - spare vertices (used when D × size is small): D extra vertices, each joined at one
 *      equal cost to every vertex. A perfect matching then leaves exactly D real vertices
 *      single — a maximum-cardinality matching — and the equal cost lets the optimum pick
 *      which ones.
 *    - doubling: the component G and a copy G', joined by an edge v–v' for every vertex at a
 *      cost C above any matching's total. A minimum-cost perfect matching uses a link exactly
 *      for the vertices left single, so it first leaves as few single as possible and then has
 *      the least cost; its restriction to G is the answer (both halves of an optimum are
 *      optimal matchings of G with the same single vertices).
 *    The perfect form lets the blossom solver (blossom-matching.ts) start from any feasible
 *    dual solution.
 * 3. Sparse first, then prove. The solver first sees only each vertex's cheapest edges
 *    (`nearestEdgesPerVertex`) plus the edges of the maximum matching from step 1. Its dual
 *    solution is then checked against *every* edge of the component; edges with negative
 *    slack are added (per vertex, the most violated few) and the solve repeated. When no edge
 *    has negative slack the dual solution is feasible for the whole graph and certifies the
 *    matching optimal for it (LP duality). In round `PRICING_ROUND_CAP` all edges are used, so
 *    the answer is always exact.
 * 4. Warm start. A dual-greedy pass raises each single vertex's dual until one of its edges is
 *    tight and matches it when the other end is single too, then joins single vertices along
 *    tight paths of three edges; this matches most vertices before the blossom solver runs.
 */

import { createCertificateSlack, solveMaximumWeightPerfectMatching } from "./blossom-matching.ts";
import type { MatchingGraph, MatchingWarmStart } from "./blossom-matching.ts";
import { barrierProvesDeficiency, findMaximumCardinalityMatching } from "./cardinality-matching.ts";

/** Graph with non-negative integer edge costs (to minimise). */
export interface CostGraph {
  vertexCount: number;
  edgeTail: Int32Array;
  edgeHead: Int32Array;
  edgeCost: Float64Array;
}

export interface MaximumMatchingOptions {
  /** How many of each vertex's cheapest edges the first solve sees (default 24). */
  nearestEdgesPerVertex?: number;
  /**
   * Perfect-matching form (step 2 above): "auto" (default) uses spare vertices when
   * D × size ≤ 2 × edges, else doubling. The others force one form; the optimum is the same.
   */
  form?: "auto" | "spare-vertices" | "doubled";
}

export interface MaximumMatchingResult {
  /** Per vertex, its partner or -1. */
  partner: Int32Array;
  /** Per vertex, the index of its matched edge or -1. */
  matchedEdge: Int32Array;
  pairCount: number;
  totalCost: number;
  /** Connected components with at least one edge. */
  components: number;
  largestComponent: number;
  /** Most solve rounds any component needed (1 = the sparse solve was already proven optimal). */
  pricingRounds: number;
  /** Edges handed to the blossom solver over all components in the last round, before doubling. */
  solverEdges: number;
  /** Dual changes over all blossom solves. */
  solverEvents: number;
}

/** Largest integer cost × (vertices + 2) the doubled solve keeps exact in doubles. */
export const COST_MAGNITUDE_LIMIT = 2 ** 48;
/** Solve rounds per component before falling back to every edge. */
export const PRICING_ROUND_CAP = 8;
const DEFAULT_NEAREST_EDGES = 24;

/**
 * Maximum-cardinality matching of least total cost.
 *
 * Returns the matching as partner/edge arrays with its pair count, total cost and solve
 * statistics. Throws RangeError when a cost is not a non-negative integer, an edge end is out
 * of range or a self-loop, or costs are so large that the doubled solve would lose exactness
 * (maximum cost × (vertices + 2) > 2^48). Throws Error if the blossom solver fails (a bug).
 *
 * @example
 * // triangle 0,1,2 plus pendant 3 on 2; costs 0–1:1, 1–2:1, 0–2:1, 2–3:5
 * // two pairs are possible only as {0–1, 2–3}: cost 6, even though 2–3 is expensive
 * solveMinimumCostMaximumMatching({ vertexCount: 4, edgeTail: Int32Array.of(0, 1, 0, 2),
 *   edgeHead: Int32Array.of(1, 2, 2, 3), edgeCost: Float64Array.of(1, 1, 1, 5) })
 * // → { pairCount: 2, totalCost: 6, partner: [1, 0, 3, 2], … }
 */
export function solveMinimumCostMaximumMatching(
  graph: CostGraph,
  options: MaximumMatchingOptions = {},
): MaximumMatchingResult {
  const n = graph.vertexCount;
  const { edgeTail: tail, edgeHead: head, edgeCost: cost } = graph;
  const edgeCount = tail.length;
  if (head.length !== edgeCount || cost.length !== edgeCount) {
    throw new RangeError("edgeTail, edgeHead and edgeCost must have the same length");
  }
  const nearest = options.nearestEdgesPerVertex ?? DEFAULT_NEAREST_EDGES;
  if (!Number.isInteger(nearest) || nearest < 1) throw new RangeError("nearestEdgesPerVertex must be a positive integer");
  const form = options.form ?? "auto";

  // ---- components by union–find ----
  const parent = new Int32Array(n);
  for (let v = 0; v < n; v++) parent[v] = v;
  const find = (v: number): number => {
    let root = v;
    while (parent[root] !== root) root = parent[root];
    while (parent[v] !== root) {
      const next = parent[v];
      parent[v] = root;
      v = next;
    }
    return root;
  };
  let maximumCost = 0;
  for (let k = 0; k < edgeCount; k++) {
    const a = tail[k];
    const b = head[k];
    if (a < 0 || a >= n || b < 0 || b >= n) throw new RangeError(`edge ${k} has an end outside 0..${n - 1}`);
    if (a === b) throw new RangeError(`edge ${k} is a self-loop`);
    const c = cost[k];
    if (!Number.isInteger(c) || c < 0) throw new RangeError(`edge ${k} cost ${c} is not a non-negative integer`);
    if (c > maximumCost) maximumCost = c;
    const ra = find(a);
    const rb = find(b);
    if (ra !== rb) parent[ra] = rb;
  }
  if (maximumCost * (n + 2) > COST_MAGNITUDE_LIMIT) {
    throw new RangeError(`costs too large for an exact solve: maximum ${maximumCost} × (${n} + 2) > 2^48`);
  }

  // Group vertices and edges by component, keeping the callers' order inside each.
  const componentOf = new Int32Array(n).fill(-1);
  const componentSize: number[] = [];
  const localIndex = new Int32Array(n);
  let componentCount = 0;
  const rootComponent = new Int32Array(n).fill(-1);
  const hasEdge = new Uint8Array(n);
  for (let k = 0; k < edgeCount; k++) {
    hasEdge[tail[k]] = 1;
    hasEdge[head[k]] = 1;
  }
  for (let v = 0; v < n; v++) {
    if (hasEdge[v] === 0) continue;
    const r = find(v);
    if (rootComponent[r] === -1) {
      rootComponent[r] = componentCount++;
      componentSize.push(0);
    }
    const c = rootComponent[r];
    componentOf[v] = c;
    localIndex[v] = componentSize[c]++;
  }
  const componentVertices: Int32Array[] = componentSize.map((size) => new Int32Array(size));
  for (let v = 0; v < n; v++) if (componentOf[v] >= 0) componentVertices[componentOf[v]][localIndex[v]] = v;
  const componentEdgeCount = new Int32Array(componentCount);
  for (let k = 0; k < edgeCount; k++) componentEdgeCount[componentOf[tail[k]]]++;
  const componentEdges: Int32Array[] = Array.from(componentEdgeCount, (count) => new Int32Array(count));
  const componentEdgeFill = new Int32Array(componentCount);
  for (let k = 0; k < edgeCount; k++) {
    const c = componentOf[tail[k]];
    componentEdges[c][componentEdgeFill[c]++] = k;
  }

  const partner = new Int32Array(n).fill(-1);
  const matchedEdge = new Int32Array(n).fill(-1);
  let pricingRounds = componentCount > 0 ? 1 : 0;
  let solverEdges = 0;
  let solverEvents = 0;
  let largestComponent = 0;

  for (let c = 0; c < componentCount; c++) {
    const vertices = componentVertices[c];
    const edges = componentEdges[c];
    largestComponent = Math.max(largestComponent, vertices.length);
    let chosen: Int32Array;
    if (vertices.length === 2) {
      let best = edges[0];
      for (const k of edges) if (cost[k] < cost[best]) best = k;
      chosen = Int32Array.of(best);
    } else {
      const local = solveComponent(vertices.length, edges, tail, head, cost, localIndex, nearest, form);
      chosen = local.chosenEdges;
      pricingRounds = Math.max(pricingRounds, local.rounds);
      solverEdges += local.solverEdges;
      solverEvents += local.events;
    }
    for (const k of chosen) {
      partner[tail[k]] = head[k];
      partner[head[k]] = tail[k];
      matchedEdge[tail[k]] = k;
      matchedEdge[head[k]] = k;
    }
  }

  let pairCount = 0;
  let totalCost = 0;
  for (let v = 0; v < n; v++) {
    if (partner[v] > v) {
      pairCount++;
      totalCost += cost[matchedEdge[v]];
    }
  }
  return {
    partner,
    matchedEdge,
    pairCount,
    totalCost,
    components: componentCount,
    largestComponent,
    pricingRounds,
    solverEdges,
    solverEvents,
  };
}

interface ComponentSolution {
  chosenEdges: Int32Array;
  rounds: number;
  solverEdges: number;
  events: number;
}

function solveComponent(
  size: number,
  edges: Int32Array,
  tail: Int32Array,
  head: Int32Array,
  cost: Float64Array,
  localIndex: Int32Array,
  nearest: number,
  form: "auto" | "spare-vertices" | "doubled",
): ComponentSolution {
  const m = edges.length;
  const localTail = new Int32Array(m);
  const localHead = new Int32Array(m);
  const localCost = new Float64Array(m);
  let componentMaximumCost = 0;
  for (let i = 0; i < m; i++) {
    const k = edges[i];
    localTail[i] = localIndex[tail[k]];
    localHead[i] = localIndex[head[k]];
    localCost[i] = cost[k];
    if (cost[k] > componentMaximumCost) componentMaximumCost = cost[k];
  }
  const unitCost = Math.max(componentMaximumCost, 1);

  // How many vertices any maximum matching leaves single: first on the cheap edges; when that
  // leaves more single than parity forces and its Tutte–Berge barrier does not prove the same
  // on all edges, on all edges, starting from that matching.
  const inSolver = selectNearestEdges(size, localTail, localHead, localCost, nearest);
  const sparse = indicesOf(inSolver);
  const sparseTail = new Int32Array(sparse.length);
  const sparseHead = new Int32Array(sparse.length);
  for (let j = 0; j < sparse.length; j++) {
    sparseTail[j] = localTail[sparse[j]];
    sparseHead[j] = localHead[sparse[j]];
  }
  const sparseProbe = findMaximumCardinalityMatching(size, sparseTail, sparseHead);
  const provenOnAllEdges =
    sparseProbe.exposed === size % 2 || barrierProvesDeficiency(size, localTail, localHead, sparseProbe.barrier, sparseProbe.exposed);
  const probe = provenOnAllEdges ? sparseProbe : findMaximumCardinalityMatching(size, localTail, localHead, sparseProbe.partner);
  if (probe !== sparseProbe) {
    // its matching keeps the first solve's graph as matchable as the whole one
    for (let v = 0; v < size; v++) if (probe.matchedEdge[v] >= 0) inSolver[probe.matchedEdge[v]] = 1;
  }
  const spareCount = probe.exposed;
  const doubled = form === "doubled" || (form === "auto" && spareCount * size > 2 * m);
  let events = 0;
  for (let round = 1; ; round++) {
    if (round >= PRICING_ROUND_CAP) inSolver.fill(1);
    const solverEdgeIndex = indicesOf(inSolver);
    const built = doubled
      ? buildDoubledGraph(size, solverEdgeIndex, localTail, localHead, localCost, unitCost)
      : buildDirectGraph(size, solverEdgeIndex, localTail, localHead, localCost, unitCost, spareCount);
    const outcome = solveMaximumWeightPerfectMatching(built.graph, built.warmStart);
    if (!outcome.ok) throw new Error(`matching solver failed on a component of ${size}: ${outcome.reason} (internal error)`);
    events += outcome.events;

    // Price every edge the solver did not see (in both halves when doubled). Each vertex
    // brings at most 2 × `nearest` of its most violated edges into the next round, so a round
    // with many violations does not hand the solver most of the graph at once.
    const s = solverEdgeIndex.length;
    let violations = 0;
    if (s < m) {
      const slackOf = createCertificateSlack(outcome);
      const dual = outcome.vertexDual;
      // Blossom duals only add slack, so an edge feasible on vertex duals alone needs no more.
      const negativeSlack = (a: number, b: number, w: number): number => {
        if (dual[a] + dual[b] - 2 * w >= 0) return 0;
        return Math.min(0, slackOf(a, b, w));
      };
      const violation = new Float64Array(m);
      for (let i = 0; i < m; i++) {
        if (inSolver[i] === 1) continue;
        const a = localTail[i];
        const b = localHead[i];
        const w = -localCost[i];
        const worst = doubled ? Math.min(negativeSlack(a, b, w), negativeSlack(a + size, b + size, w)) : negativeSlack(a, b, w);
        if (worst < 0) {
          violation[i] = worst;
          violations++;
        }
      }
      if (violations > 0) {
        const violated = new Int32Array(violations);
        for (let i = 0, j = 0; i < m; i++) if (violation[i] < 0) violated[j++] = i;
        const violatedTail = new Int32Array(violations);
        const violatedHead = new Int32Array(violations);
        const violatedSlack = new Float64Array(violations);
        for (let j = 0; j < violations; j++) {
          violatedTail[j] = localTail[violated[j]];
          violatedHead[j] = localHead[violated[j]];
          violatedSlack[j] = violation[violated[j]];
        }
        const chosen = selectNearestEdges(size, violatedTail, violatedHead, violatedSlack, 2 * nearest);
        for (let j = 0; j < violations; j++) if (chosen[j] === 1) inSolver[violated[j]] = 1;
      }
    }
    if (violations === 0) {
      const chosen: number[] = [];
      for (let v = 0; v < size; v++) {
        const j = outcome.matchedEdge[v];
        if (j < s && built.graph.edgeTail[j] === v) chosen.push(edges[solverEdgeIndex[j]]);
      }
      return { chosenEdges: Int32Array.from(chosen), rounds: round, solverEdges: s, events };
    }
    if (round >= PRICING_ROUND_CAP) {
      throw new Error("pricing found violated edges with every edge in the solver (internal error)");
    }
  }
}

/** Positions of the 1s in a 0/1 array. */
function indicesOf(flags: Uint8Array): Int32Array {
  let count = 0;
  for (let i = 0; i < flags.length; i++) count += flags[i];
  const indices = new Int32Array(count);
  let j = 0;
  for (let i = 0; i < flags.length; i++) if (flags[i] === 1) indices[j++] = i;
  return indices;
}

interface BuiltGraph {
  graph: MatchingGraph;
  warmStart: MatchingWarmStart;
}

/**
 * The component plus `spareCount` extra vertices, each joined at equal cost to every vertex.
 * With spareCount = the number of vertices every maximum matching leaves single, a perfect
 * matching of this graph is exactly a maximum-cardinality matching plus an assignment of its
 * single vertices to spares, and the equal cost lets the optimum choose which vertices stay
 * single. Edges 0..s-1 are the solver edges.
 */
function buildDirectGraph(
  size: number,
  solverEdgeIndex: Int32Array,
  localTail: Int32Array,
  localHead: Int32Array,
  localCost: Float64Array,
  unitCost: number,
  spareCount: number,
): BuiltGraph {
  const s = solverEdgeIndex.length;
  const vertexCount = size + spareCount;
  const edgeCount = s + spareCount * size;
  const edgeTail = new Int32Array(edgeCount);
  const edgeHead = new Int32Array(edgeCount);
  const edgeWeight = new Float64Array(edgeCount);
  for (let j = 0; j < s; j++) {
    const i = solverEdgeIndex[j];
    edgeTail[j] = localTail[i];
    edgeHead[j] = localHead[i];
    edgeWeight[j] = -localCost[i];
  }
  let j = s;
  for (let spare = 0; spare < spareCount; spare++) {
    for (let v = 0; v < size; v++) {
      edgeTail[j] = v;
      edgeHead[j] = size + spare;
      edgeWeight[j] = -unitCost;
      j++;
    }
  }
  const greedy = dualGreedyStart(size, edgeTail.subarray(0, s), edgeHead.subarray(0, s), localCostOf(solverEdgeIndex, localCost));
  const matchedEdge = new Int32Array(vertexCount).fill(-1);
  const vertexDual = new Float64Array(vertexCount);
  for (let v = 0; v < size; v++) {
    vertexDual[v] = -2 * greedy.potential[v];
    matchedEdge[v] = greedy.matchedEdge[v];
  }
  // spare vertices have potential 0; their edges cost unitCost ≥ any potential, so stay feasible
  return { graph: { vertexCount, edgeTail, edgeHead, edgeWeight }, warmStart: { matchedEdge, vertexDual } };
}

/**
 * The component G, a copy G', and a link v–v' for every vertex at a cost above any
 * matching's total: edges 0..s-1 in G, s..2s-1 in G', then the links.
 */
function buildDoubledGraph(
  size: number,
  solverEdgeIndex: Int32Array,
  localTail: Int32Array,
  localHead: Int32Array,
  localCost: Float64Array,
  unitCost: number,
): BuiltGraph {
  const s = solverEdgeIndex.length;
  const copyCost = (Math.floor(size / 2) + 1) * unitCost + 1;
  const edgeTail = new Int32Array(2 * s + size);
  const edgeHead = new Int32Array(2 * s + size);
  const edgeWeight = new Float64Array(2 * s + size);
  for (let j = 0; j < s; j++) {
    const i = solverEdgeIndex[j];
    edgeTail[j] = localTail[i];
    edgeHead[j] = localHead[i];
    edgeWeight[j] = -localCost[i];
    edgeTail[s + j] = localTail[i] + size;
    edgeHead[s + j] = localHead[i] + size;
    edgeWeight[s + j] = -localCost[i];
  }
  for (let v = 0; v < size; v++) {
    edgeTail[2 * s + v] = v;
    edgeHead[2 * s + v] = v + size;
    edgeWeight[2 * s + v] = -copyCost;
  }
  const greedy = dualGreedyStart(size, edgeTail.subarray(0, s), edgeHead.subarray(0, s), localCostOf(solverEdgeIndex, localCost));
  const matchedEdge = new Int32Array(2 * size).fill(-1);
  const vertexDual = new Float64Array(2 * size);
  for (let v = 0; v < size; v++) {
    vertexDual[v] = -2 * greedy.potential[v];
    vertexDual[v + size] = -2 * greedy.potential[v];
    const j = greedy.matchedEdge[v];
    if (j >= 0) {
      matchedEdge[v] = j;
      matchedEdge[v + size] = s + j;
    }
  }
  return { graph: { vertexCount: 2 * size, edgeTail, edgeHead, edgeWeight }, warmStart: { matchedEdge, vertexDual } };
}

function localCostOf(indices: Int32Array, localCost: Float64Array): Float64Array {
  const out = new Float64Array(indices.length);
  for (let j = 0; j < indices.length; j++) out[j] = localCost[indices[j]];
  return out;
}

/**
 * Marks, for every vertex, its `nearest` cheapest edges. The union is what the first solve
 * sees. Each vertex keeps its cheapest edges so far in a small max-heap (most expensive on top).
 */
function selectNearestEdges(
  size: number,
  tail: Int32Array,
  head: Int32Array,
  cost: Float64Array,
  nearest: number,
): Uint8Array {
  const m = tail.length;
  const chosen = new Uint8Array(m);
  const heapEdge = new Int32Array(size * nearest);
  const heapCost = new Float64Array(size * nearest);
  const filled = new Int32Array(size);
  const keep = (v: number, i: number, c: number): void => {
    const offset = v * nearest;
    let count = filled[v];
    let position: number;
    if (count < nearest) {
      // sift up from the new last slot
      position = count;
      filled[v] = ++count;
      while (position > 0) {
        const parent = (position - 1) >> 1;
        if (heapCost[offset + parent] >= c) break;
        heapCost[offset + position] = heapCost[offset + parent];
        heapEdge[offset + position] = heapEdge[offset + parent];
        position = parent;
      }
    } else {
      if (c >= heapCost[offset]) return;
      // replace the most expensive and sift down
      position = 0;
      for (;;) {
        let child = 2 * position + 1;
        if (child >= count) break;
        if (child + 1 < count && heapCost[offset + child + 1] > heapCost[offset + child]) child++;
        if (heapCost[offset + child] <= c) break;
        heapCost[offset + position] = heapCost[offset + child];
        heapEdge[offset + position] = heapEdge[offset + child];
        position = child;
      }
    }
    heapCost[offset + position] = c;
    heapEdge[offset + position] = i;
  };
  for (let i = 0; i < m; i++) {
    const c = cost[i];
    keep(tail[i], i, c);
    keep(head[i], i, c);
  }
  for (let v = 0; v < size; v++) {
    for (let slot = 0; slot < filled[v]; slot++) chosen[heapEdge[v * nearest + slot]] = 1;
  }
  return chosen;
}

/**
 * Dual-greedy start in the minimisation form: potentials p with c(u,v) − p(u) − p(v) ≥ 0 on
 * every edge, and a matching on edges where it is 0. Integer costs give integer potentials.
 *
 * Vertices are visited cheapest-edge first; each single vertex raises its potential until an
 * edge is tight and takes the other end if that is single too. A second pass then uses tight
 * alternating paths of length three (v–u=x–y with v, y single) to match two more vertices.
 */
function dualGreedyStart(
  size: number,
  tail: Int32Array,
  head: Int32Array,
  cost: Float64Array,
): { potential: Float64Array; matchedEdge: Int32Array } {
  const m = tail.length;
  const start = new Int32Array(size + 1);
  for (let i = 0; i < m; i++) {
    start[tail[i] + 1]++;
    start[head[i] + 1]++;
  }
  for (let v = 0; v < size; v++) start[v + 1] += start[v];
  const incident = new Int32Array(2 * m);
  const fill = start.slice(0, size);
  for (let i = 0; i < m; i++) {
    incident[fill[tail[i]]++] = i;
    incident[fill[head[i]]++] = i;
  }
  const potential = new Float64Array(size);
  const cheapestCost = new Float64Array(size);
  for (let v = 0; v < size; v++) {
    let cheapest = Number.POSITIVE_INFINITY;
    for (let position = start[v]; position < start[v + 1]; position++) cheapest = Math.min(cheapest, cost[incident[position]]);
    cheapestCost[v] = cheapest;
    potential[v] = cheapest === Number.POSITIVE_INFINITY ? 0 : Math.floor(cheapest / 2);
  }
  const order = Array.from({ length: size }, (_, v) => v).sort((x, y) => cheapestCost[x] - cheapestCost[y] || x - y);
  const other = (i: number, v: number): number => (tail[i] === v ? head[i] : tail[i]);
  const tight = (i: number): boolean => cost[i] - potential[tail[i]] - potential[head[i]] === 0;
  const matchedEdge = new Int32Array(size).fill(-1);
  for (const v of order) {
    if (matchedEdge[v] >= 0 || start[v] === start[v + 1]) continue;
    let raise = Number.POSITIVE_INFINITY;
    for (let position = start[v]; position < start[v + 1]; position++) {
      const i = incident[position];
      raise = Math.min(raise, cost[i] - potential[v] - potential[other(i, v)]);
    }
    potential[v] += raise;
    for (let position = start[v]; position < start[v + 1]; position++) {
      const i = incident[position];
      const u = other(i, v);
      if (matchedEdge[u] < 0 && tight(i)) {
        matchedEdge[v] = i;
        matchedEdge[u] = i;
        break;
      }
    }
  }
  for (const v of order) {
    if (matchedEdge[v] >= 0) continue;
    search: for (let position = start[v]; position < start[v + 1]; position++) {
      const first = incident[position];
      if (!tight(first)) continue;
      const u = other(first, v);
      const middle = matchedEdge[u];
      if (middle < 0) continue;
      const x = other(middle, u);
      for (let next = start[x]; next < start[x + 1]; next++) {
        const last = incident[next];
        const y = other(last, x);
        if (y === v || matchedEdge[y] >= 0 || !tight(last)) continue;
        matchedEdge[v] = first;
        matchedEdge[u] = first;
        matchedEdge[x] = last;
        matchedEdge[y] = last;
        break search;
      }
    }
  }
  return { potential, matchedEdge };
}
