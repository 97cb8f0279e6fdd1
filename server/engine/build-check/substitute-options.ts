/**
 * Substitutes for a short line: the substitute ranker's candidates for the line's socket (a
 * direct fit in the same wiring, on the line's heater supply, at the line's operating values),
 * with how many good ones are free, how many stages they could fill, and for bistable lines the
 * solver's word on the line's resistor values with that type.
 */
import { rankSubstitutes, type CircuitOperatingValues, type StockCount, type SubstituteRanking } from "../substitution/index.ts";
import type { TubeTypeSpec } from "../tube-types/index.ts";
import { coverableStages, loadFor, type LineContext } from "./line-coverage.ts";
import { amplifyingSections } from "./stage-load.ts";
import type { BuildLinePlan, SubstituteOption } from "./types.ts";

export const DEFAULT_MAX_SUBSTITUTE_OPTIONS = 6;

export interface SubstituteContext extends LineContext {
  library: TubeTypeSpec[];
  rankingCache: Map<string, SubstituteRanking | string>;
}

function operatingFor(line: BuildLinePlan, spec: TubeTypeSpec, context: SubstituteContext): CircuitOperatingValues[] | undefined {
  const sections = amplifyingSections(spec);
  if (line.kind === "single" && line.operating) {
    const values = line.operating;
    return sections.map((section) => ({ section, plateVolts: values.plateVolts, plateMilliamps: values.plateMilliamps, ...(values.screenMilliamps !== null ? { screenMilliamps: values.screenMilliamps } : {}) }));
  }
  if (line.kind === "bistable") {
    const on = loadFor(line, spec, context).onSide;
    if (on !== null) return sections.map((section) => ({ section, plateVolts: on.plateVolts, plateMilliamps: on.plateMilliamps, ...(line.resistors ? { plateLoadOhms: line.resistors.plateLoadOhms } : {}) }));
  }
  return undefined;
}

function solverWord(line: BuildLinePlan, spec: TubeTypeSpec, context: SubstituteContext): string {
  if (line.kind !== "bistable") return "";
  const load = loadFor(line, spec, context);
  if (load.basis !== "koren-solve") return `not solved: no Koren triode parameter set for ${spec.designation}`;
  if (load.bistable) return `latches with these resistor values (${load.note})`;
  return `does not latch with these resistor values: ${load.warnings[0] ?? "see the solver"}`;
}

/**
 * Options for a line still short by `remainingNeed` stages (and spares): the ranker's direct-fit
 * candidates with good tubes free (and any accepted one), at most `limit` taken in the ranker's
 * order, then listed closing-the-gap first, latching (solver) next, ranker score, most free.
 * Returns the options and a note (why none are listed, or how many more were left out).
 */
export function substituteOptions(line: BuildLinePlan, remainingNeed: number, context: SubstituteContext, limit: number): { options: SubstituteOption[]; note: string } {
  const own = context.specs.get(line.designation);
  if (!own) return { options: [], note: "" };
  if (remainingNeed <= 0 && line.acceptedSubstitutes.length === 0) return { options: [], note: "" };
  if (!line.allowSubstitutes) return { options: [], note: remainingNeed > 0 ? "substitutes are not allowed on this line" : "" };
  const supply = context.supplies.heater[line.heaterSupplyIndex];
  if (supply === undefined) return { options: [], note: "no heater supply to rank substitutes on" };

  const operating = operatingFor(line, own, context);
  const cacheKey = `${line.kind}|${line.designation}|${supply.volts}|${JSON.stringify(operating ?? null)}`;
  let ranking = context.rankingCache.get(cacheKey);
  if (ranking === undefined) {
    const stock: StockCount[] = context.library.map((spec) => ({ designation: spec.designation, good: context.pool.freeCount(spec.designation) }));
    try {
      ranking = rankSubstitutes({ socketType: own, heaterSupply: { kind: "parallel", volts: supply.volts }, ...(operating ? { operating } : {}), allowRewire: false, allowAdapter: false }, context.library, stock);
    } catch (error) {
      if (!(error instanceof RangeError)) throw error;
      ranking = `the substitute ranker refused the socket: ${error.message}`;
    }
    context.rankingCache.set(cacheKey, ranking);
  }
  if (typeof ranking === "string") return { options: [], note: ranking };

  const options: Array<SubstituteOption & { score: number }> = [];
  let withoutStock = 0;
  let hiddenWithStock = 0;
  for (const candidate of ranking.candidates) {
    if (candidate.relation === "same-type" || candidate.designation === line.designation) continue;
    const spec = context.specs.get(candidate.designation);
    if (!spec) continue;
    const accepted = line.acceptedSubstitutes.includes(candidate.designation);
    const goodAvailable = context.pool.freeCount(candidate.designation);
    if (goodAvailable === 0 && !accepted) {
      withoutStock++;
      continue;
    }
    if (options.length >= limit && !accepted) {
      hiddenWithStock++;
      continue;
    }
    const stagesCoverable = coverableStages(line, spec, context.pool);
    options.push({
      designation: candidate.designation,
      relation: candidate.relation,
      accepted,
      goodAvailable,
      stagesCoverable,
      wouldClose: remainingNeed > 0 && stagesCoverable >= remainingNeed,
      solverCheck: solverWord(line, spec, context),
      pinFit: candidate.pins.fit,
      heaterFit: candidate.heater.fit,
      explanation: candidate.explanation.slice(0, 4),
      score: candidate.score,
    });
  }
  // Options that close the gap first, then those the solver says latch, then the ranker's order;
  // among equals, the one with more good tubes free.
  const latchRank = (option: SubstituteOption) => (option.solverCheck.startsWith("latches") ? 0 : option.solverCheck.startsWith("does not latch") ? 2 : 1);
  options.sort(
    (left, right) => Number(right.wouldClose) - Number(left.wouldClose) || latchRank(left) - latchRank(right) || right.score - left.score || right.goodAvailable - left.goodAvailable,
  );
  const notes: string[] = [];
  if (options.length === 0) notes.push("no direct-fit substitute has good tubes free");
  if (hiddenWithStock > 0) notes.push(`${hiddenWithStock} more candidates with good tubes free not shown`);
  if (withoutStock > 0) notes.push(`${withoutStock} more direct-fit types have no good tube free`);
  return { options: options.map(({ score: _score, ...option }) => option), note: notes.join("; ") };
}
