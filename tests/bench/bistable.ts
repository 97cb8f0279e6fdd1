/**
 * Bistable solver timings: one analysis (median over many runs) and a 1,000-trial yield.
 * Run alone with `node --import tsx tests/bench/bistable.ts`, or through tests/bench/run.ts.
 * Timings are measured here, never asserted in tests.
 */
import { pathToFileURL } from "node:url";
import { analyzeBistable, analyzeYield, suggestResistors, type BistableCircuit } from "../../server/engine/bistable/index.ts";
import { tubeElementFromModel, tubeModelLibrary } from "../../server/engine/models/index.ts";

const ANALYSIS_GOAL_MILLISECONDS = 0.5;
const YIELD_GOAL_MILLISECONDS = 1000;
const WARM_UP_RUNS = 200;
const ANALYSIS_TIMED_RUNS = 500;
const YIELD_TIMED_RUNS = 3;
const YIELD_TRIALS = 1000;

function median(values: number[]): number {
  const sorted = [...values].sort((first, second) => first - second);
  const middle = Math.floor(sorted.length / 2);
  return sorted.length % 2 === 1 ? sorted[middle] : (sorted[middle - 1] + sorted[middle]) / 2;
}

function timeRuns(runs: number, work: () => void): number {
  const samples: number[] = [];
  for (let run = 0; run < runs; run++) {
    const start = performance.now();
    work();
    samples.push(performance.now() - start);
  }
  return median(samples);
}

function benchCircuits(): Record<string, BistableCircuit> {
  const twelveAU7 = tubeElementFromModel(tubeModelLibrary["12AU7"]);
  const el34 = tubeElementFromModel(tubeModelLibrary.EL34);
  const side = { tube: twelveAU7, plateLoadOhms: 27e3, couplingOhms: 220e3, gridReturnOhms: 220e3 };
  const fixedBias: BistableCircuit = { bPlusVolts: 250, negativeRailVolts: -150, sideA: side, sideB: side };
  return {
    "12AU7 pair, fixed bias": fixedBias,
    "12AU7 pair, common cathode": { ...fixedBias, cathode: { kind: "common", ohms: 2000 } },
    "EL34 against 12AU7, common cathode": {
      ...fixedBias,
      sideA: { ...side, tube: el34, screen: { kind: "resistor", supplyVolts: 250, ohms: 47e3 } },
      cathode: { kind: "common", ohms: 2000 },
    },
  };
}

/** Runs the benchmark and returns the lines it reports. */
export async function runBistableBench(): Promise<string[]> {
  const lines: string[] = [];
  const circuits = benchCircuits();
  for (const [name, circuit] of Object.entries(circuits)) {
    for (let run = 0; run < WARM_UP_RUNS; run++) analyzeBistable(circuit);
    const milliseconds = timeRuns(ANALYSIS_TIMED_RUNS, () => analyzeBistable(circuit));
    lines.push(
      `bistable analysis median ${milliseconds.toFixed(3)} ms (goal ≤ ${ANALYSIS_GOAL_MILLISECONDS} ms) [${name}, ${ANALYSIS_TIMED_RUNS} runs]`,
    );
  }

  const yieldCircuit = circuits["12AU7 pair, fixed bias"];
  const yieldOptions = {
    resistorTolerancePercent: 5,
    supplyDriftPercent: 5,
    tubeSpreadPercent: 20,
    wornScale: 0.7,
    trials: YIELD_TRIALS,
    seed: 2024,
    thresholds: { minSwingVolts: 100, minCutoffMarginVolts: 5 },
  };
  // maxCornerFactors 0 keeps the corners to the reduced set, so the figure is the Monte Carlo itself.
  const monteCarloOnly = timeRuns(YIELD_TIMED_RUNS, () => analyzeYield(yieldCircuit, { ...yieldOptions, maxCornerFactors: 0 }));
  lines.push(
    `bistable yield ${YIELD_TRIALS} trials median ${monteCarloOnly.toFixed(0)} ms (goal ≤ ${YIELD_GOAL_MILLISECONDS} ms) [+23 reduced corners, ${YIELD_TIMED_RUNS} runs]`,
  );
  const withCorners = timeRuns(YIELD_TIMED_RUNS, () => analyzeYield(yieldCircuit, yieldOptions));
  lines.push(`bistable yield ${YIELD_TRIALS} trials + 1024 full-factorial corners median ${withCorners.toFixed(0)} ms [${YIELD_TIMED_RUNS} runs]`);

  const searchMilliseconds = timeRuns(YIELD_TIMED_RUNS, () =>
    suggestResistors(
      { sideA: { tube: tubeElementFromModel(tubeModelLibrary["12AU7"]) } },
      { bPlusVolts: 250, negativeRailVolts: -150 },
      { highLevelVolts: 220, lowLevelVolts: 50 },
      "E12",
    ),
  );
  lines.push(`bistable E12 resistor search median ${searchMilliseconds.toFixed(0)} ms [12AU7 pair, ${YIELD_TIMED_RUNS} runs]`);
  return lines;
}

const executedDirectly = process.argv[1] !== undefined && import.meta.url === pathToFileURL(process.argv[1]).href;
if (executedDirectly) {
  runBistableBench().then(
    (lines) => {
      for (const line of lines) console.log(line);
    },
    (error: unknown) => {
      console.error(error);
      process.exitCode = 1;
    },
  );
}
