/**
 * Benchmark: median time to rank one socket over a library of 150+ tube types.
 * Goal: ≤ 20 ms. Uses the reference library in data/tube-types when it loads, and always a
 * synthetic library built from the test fixtures with a seeded generator.
 *
 * Run directly: node --import tsx tests/bench/substitution.ts
 */
import { existsSync, readdirSync } from "node:fs";
import { performance } from "node:perf_hooks";
import { fileURLToPath, pathToFileURL } from "node:url";
import { rankSubstitutes, type SocketDescription } from "../../server/engine/substitution/index.ts";
import type { PinAssignment, TubeTypeSpec } from "../../server/engine/tube-types/index.ts";
import { fixtureLibrary, tube12AU7 } from "../engine/substitution/fixtures.ts";

const SYNTHETIC_LIBRARY_SIZE = 160;
const WARM_UP_RUNS = 20;
const TIMED_RUNS = 200;
const GOAL_MILLISECONDS = 20;
const SEED = 20240611;

/** mulberry32: a small seeded generator, so every run times the same library. */
function mulberry32(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let value = state;
    value = Math.imul(value ^ (value >>> 15), value | 1);
    value ^= value + Math.imul(value ^ (value >>> 7), value | 61);
    return ((value ^ (value >>> 14)) >>> 0) / 4294967296;
  };
}

function shuffled<T>(items: readonly T[], random: () => number): T[] {
  const copy = [...items];
  for (let index = copy.length - 1; index > 0; index -= 1) {
    const other = Math.floor(random() * (index + 1));
    [copy[index], copy[other]] = [copy[other], copy[index]];
  }
  return copy;
}

/**
 * Invented types derived from the fixtures: scaled characteristics and ratings, other heater
 * currents, and (for a third of them) electrode pins shuffled so that rewire plans are searched.
 */
export function buildSyntheticLibrary(size: number, seed: number): TubeTypeSpec[] {
  const random = mulberry32(seed);
  const library: TubeTypeSpec[] = [];
  for (let index = 0; index < size; index += 1) {
    const template = fixtureLibrary[index % fixtureLibrary.length];
    const scale = 0.6 + random() * 0.8;
    let pins: PinAssignment[] = template.pins.map((pin) => ({ ...pin }));
    if (random() < 1 / 3) {
      const electrodeIndexes = pins.flatMap((pin, position) => (pin.section !== undefined ? [position] : []));
      const labels = shuffled(electrodeIndexes.map((position) => pins[position].pin), random);
      pins = pins.map((pin, position) => {
        const slot = electrodeIndexes.indexOf(position);
        return slot === -1 ? pin : { ...pin, pin: labels[slot] };
      });
    }
    const heaterScale = [1, 1, 1.2, 2][Math.floor(random() * 4)];
    library.push({
      ...template,
      designation: `SYN-${String(index).padStart(3, "0")}`,
      aliases: [],
      variantOf: undefined,
      pins,
      heater: {
        ...template.heater,
        amps: template.heater.amps * heaterScale,
        ...(template.heater.centreTap ? { centreTap: { half: { volts: template.heater.centreTap.half.volts, amps: template.heater.centreTap.half.amps * heaterScale } } } : {}),
      },
      maxRatings: Object.fromEntries(Object.entries(template.maxRatings).map(([key, value]) => [key, (value as number) * scale])),
      sections: template.sections.map((section) => ({
        ...section,
        typical: section.typical.map((point) => ({
          ...point,
          ...(point.transconductanceMicroSiemens !== undefined ? { transconductanceMicroSiemens: point.transconductanceMicroSiemens * scale } : {}),
          ...(point.mu !== undefined ? { mu: point.mu * (0.7 + random() * 0.6) } : {}),
        })),
      })),
    });
  }
  return library;
}

function medianMilliseconds(socket: SocketDescription, library: readonly TubeTypeSpec[]): number {
  const stock = library.slice(0, 20).map((spec, index) => ({ designation: spec.designation, good: index % 7 }));
  for (let run = 0; run < WARM_UP_RUNS; run += 1) rankSubstitutes(socket, library, stock);
  const times: number[] = [];
  for (let run = 0; run < TIMED_RUNS; run += 1) {
    const start = performance.now();
    rankSubstitutes(socket, library, stock);
    times.push(performance.now() - start);
  }
  times.sort((left, right) => left - right);
  return times[Math.floor(times.length / 2)];
}

async function loadReferenceLibrary(): Promise<{ types: TubeTypeSpec[]; loadMilliseconds: number } | { problem: string } | null> {
  const loaderPath = fileURLToPath(new URL("../../server/library/load-library.ts", import.meta.url));
  const directory = fileURLToPath(new URL("../../data/tube-types", import.meta.url));
  if (!existsSync(loaderPath) || !existsSync(directory) || !readdirSync(directory).some((name) => name.endsWith(".json"))) return null;
  try {
    const loader = (await import(pathToFileURL(loaderPath).href)) as { loadTubeLibrary: (dir: string) => { types: TubeTypeSpec[] } | Promise<{ types: TubeTypeSpec[] }> };
    // Reading and validating every file (zod schema plus the library-wide checks), as the server does at start.
    const start = performance.now();
    const library = await loader.loadTubeLibrary(directory);
    return { types: library.types, loadMilliseconds: performance.now() - start };
  } catch (error) {
    return { problem: (error as Error).message.split("\n")[0] };
  }
}

/** Runs the benchmark and returns the lines it reports. */
export async function runSubstitutionBench(): Promise<string[]> {
  const socket: SocketDescription = {
    socketType: tube12AU7,
    heaterSupply: { kind: "parallel", volts: 6.3 },
    allowRewire: true,
    allowAdapter: true,
  };
  const lines: string[] = [];
  const synthetic = buildSyntheticLibrary(SYNTHETIC_LIBRARY_SIZE, SEED);
  const syntheticMedian = medianMilliseconds(socket, synthetic);
  lines.push(`substitute ranking median ${syntheticMedian.toFixed(2)} ms over ${synthetic.length} types (goal ≤ ${GOAL_MILLISECONDS} ms) [synthetic library, ${TIMED_RUNS} runs]`);

  const reference = await loadReferenceLibrary();
  if (reference === null) lines.push("reference library: data/tube-types not present, skipped");
  else if ("problem" in reference) lines.push(`reference library: did not load (${reference.problem}), skipped`);
  else {
    lines.push(`library load ${reference.loadMilliseconds.toFixed(1)} ms (${reference.types.length} types from data/tube-types: read, zod schema, consistency checks)`);
    const referenceMedian = medianMilliseconds(socket, reference.types);
    lines.push(`substitute ranking median ${referenceMedian.toFixed(2)} ms over ${reference.types.length} types (goal ≤ ${GOAL_MILLISECONDS} ms) [data/tube-types, ${TIMED_RUNS} runs]`);
  }
  return lines;
}

const executedDirectly = process.argv[1] !== undefined && import.meta.url === pathToFileURL(process.argv[1]).href;
if (executedDirectly) {
  runSubstitutionBench().then(
    (lines) => {
      for (const line of lines) console.log(line);
    },
    (error: unknown) => {
      console.error(error);
      process.exitCode = 1;
    },
  );
}
