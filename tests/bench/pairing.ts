/**
 * Pairing benchmark: an invented stock of 10,000 dual-triode sections with two readings each
 * (gm µS, Ia mA), a 3 % rule on both, exact pairing against sort-and-pair.
 *
 *   node --import tsx tests/bench/pairing.ts
 *
 * Goals (product design): exact pairing of 10,000 sections within 2 s and 500 MB.
 * The first call in a process includes compiling the engine; the second is the steady state.
 * Peak RSS is the kernel's high-water mark for the process (the solve is synchronous, so a
 * timer could not sample inside it); the heap figure is V8's heap size right after the solve.
 */
import { pathToFileURL } from "node:url";
import v8 from "node:v8";
import { greedySortAndPair, pairSections } from "../../server/engine/pairing/index.ts";
import type { PairingOptions } from "../../server/engine/pairing/index.ts";
import { inventDualTriodeStock } from "../engine/pairing/invented-stock.ts";

const TUBES = 5000;
const STOCK_SEED = 20240601;
const TIME_GOAL_SECONDS = 2;
const MEMORY_GOAL_MEGABYTES = 500;

export async function runPairingBench(): Promise<string[]> {
  const stock = inventDualTriodeStock(TUBES, STOCK_SEED);
  const rule = { maxRelativeDifference: [0.03, 0.03] };
  const options: PairingOptions = {
    allowSameEnvelope: true,
    allowAcrossEnvelopes: true,
    valueLabels: [
      { name: "gm", unit: "µS" },
      { name: "Ia", unit: "mA" },
    ],
  };
  const megabytes = (bytes: number): string => (bytes / 1e6).toFixed(0);

  const firstStarted = performance.now();
  pairSections(stock, rule, options);
  const firstSeconds = (performance.now() - firstStarted) / 1000;

  const started = performance.now();
  const exact = pairSections(stock, rule, options);
  const seconds = (performance.now() - started) / 1000;
  const heapAfter = v8.getHeapStatistics().total_heap_size;
  const peakRss = process.resourceUsage().maxRSS * 1024;

  const greedyStarted = performance.now();
  const greedy = greedySortAndPair(stock, rule, options);
  const greedySeconds = (performance.now() - greedyStarted) / 1000;

  return [
    `pairing ${stock.length} sections: ${seconds.toFixed(2)} s (first call ${firstSeconds.toFixed(2)} s), peak rss ${megabytes(peakRss)} MB, heap ${megabytes(heapAfter)} MB (goals ≤ ${TIME_GOAL_SECONDS} s, ≤ ${MEMORY_GOAL_MEGABYTES} MB)`,
    `good pairs: exact ${exact.stats.pairs} vs greedy ${greedy.stats.pairs} (sort-and-pair ${greedySeconds.toFixed(2)} s)`,
    `total imbalance: exact ${exact.stats.totalImbalance.toFixed(2)} over ${exact.stats.pairs} pairs, greedy ${greedy.stats.totalImbalance.toFixed(2)} over ${greedy.stats.pairs} pairs`,
    `pairing graph: ${exact.stats.admissibleEdges} admissible pairs, ${exact.stats.components} components (largest ${exact.stats.largestComponent}), solver saw ${exact.stats.solverEdges}, ${exact.stats.solveRounds} solve round(s)`,
  ];
}

if (process.argv[1] !== undefined && import.meta.url === pathToFileURL(process.argv[1]).href) {
  for (const line of await runPairingBench()) console.log(line);
}
