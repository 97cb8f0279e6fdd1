/** The whole check: flags and replacements, each line in order, substitutes, budgets, verdict. */
import type { SubstituteRanking } from "../substitution/index.ts";
import type { TubeTypeSpec } from "../tube-types/index.ts";
import { buildBudgets } from "./budgets.ts";
import { coverLine, type LineContext } from "./line-coverage.ts";
import { flagAndReplace } from "./replacements.ts";
import { StockPool } from "./stock-pool.ts";
import { DEFAULT_MAX_SUBSTITUTE_OPTIONS, substituteOptions, type SubstituteContext } from "./substitute-options.ts";
import type { BuildCheckInput, BuildCheckResult, LineCheck, StageLoad } from "./types.ts";
import { decideVerdict } from "./verdict.ts";

function validate(input: BuildCheckInput): void {
  const rule = input.balanceRule.maxDifferencePercent;
  if (!(Number.isFinite(rule) && rule > 0 && rule < 100)) throw new RangeError(`balanceRule.maxDifferencePercent must be in (0, 100), got ${rule}`);
  const keys = new Set<string>();
  for (const line of input.lines) {
    if (keys.has(line.key)) throw new RangeError(`two lines share the key ${line.key}`);
    keys.add(line.key);
    if (!Number.isInteger(line.count) || line.count < 1) throw new RangeError(`${line.label}: count must be a positive whole number, got ${line.count}`);
    if (!(line.spares.percent >= 0 && Number.isFinite(line.spares.percent))) throw new RangeError(`${line.label}: spares percent must be a non-negative number`);
    if (line.kind === "bistable" && !line.resistors) throw new RangeError(`${line.label}: a bistable line needs its resistor values`);
    if (line.kind === "single" && !line.operating) throw new RangeError(`${line.label}: a single-stage line needs its operating values`);
  }
}

export function checkBuildImpl(input: BuildCheckInput): BuildCheckResult {
  validate(input);
  const ruleFraction = input.balanceRule.maxDifferencePercent / 100;
  const specs = new Map<string, TubeTypeSpec>(input.library.map((spec) => [spec.designation, spec]));
  const pool = new StockPool(input.freeStock, ruleFraction);
  // Replacements first: a flagged stage is repaired before new stages take the closest tubes.
  const flagged = flagAndReplace(input.allocations, input.lines, pool, ruleFraction);
  const context: SubstituteContext = {
    pool,
    specs,
    supplies: input.supplies,
    allocations: input.allocations,
    flaggedByAllocation: new Map(flagged.map((tube) => [tube.allocationId, tube])),
    loadCache: new Map<string, StageLoad>(),
    library: input.library,
    rankingCache: new Map<string, SubstituteRanking | string>(),
  };
  const lineContext: LineContext = context;
  const lines: LineCheck[] = input.lines.map((line) => {
    const { check, remainingNeed } = coverLine(line, lineContext);
    const { options, note } =
      input.substituteOptions === false ? { options: [], note: "" } : substituteOptions(line, remainingNeed, context, input.maxSubstituteOptions ?? DEFAULT_MAX_SUBSTITUTE_OPTIONS);
    return { ...check, substitutes: options, substitutesNote: note };
  });
  const budgets = buildBudgets(lines, input.lines, input.supplies);
  const { verdict, reasons, buyList } = decideVerdict(lines, budgets, flagged, specs);
  const rulePercent = Number(input.balanceRule.maxDifferencePercent.toFixed(3));
  return {
    verdict,
    verdictReasons: reasons,
    lines,
    budgets,
    flagged,
    buyList,
    reservationPlan: lines.flatMap((line) => line.planned),
    balanceRule: input.balanceRule,
    assumptions: [
      `A bistable stage is two sections — both halves of one tube or one section each of two tubes — whose newest balance values differ by at most ${rulePercent} % (|a − b| / mean; ${input.balanceRule.source}). The balance value is the transconductance of the newest reading, or its emission when it has no transconductance; readings taken at different test conditions are never compared.`,
      "Pairs come from the pairing engine, found once per type over the free stock; a line takes pairs on tubes it already holds first, then one-envelope pairs, then pairs across two tubes, best balanced first.",
      "A single stage is one section: a dual triode serves two single stages. Rectifier and regulator lines count whole tubes.",
      "Heater current counts the tubes that carry stages on the line's heater supply (centre-tapped heaters at the half voltage with the halves in parallel); spares are not powered. Watts are the supply's volts × the current drawn.",
      "B+ for bistable stages: the solver's stable state drawing the most current when a Koren parameter set exists for the type, else the type's typical plate current, else an upper bound from the plate loads — each line says which.",
      "Substitutes are ranked as direct fits in the same socket wiring on the line's heater supply (no rewiring, no adapters); only accepted substitutes count toward coverage.",
    ],
  };
}
