/** The build's verdict, its reasons in plain words, and the buy list. */
import type { TubeTypeSpec } from "../tube-types/index.ts";
import { tubesForStages } from "./line-coverage.ts";
import { amplifyingSections } from "./stage-load.ts";
import type { BuildBudgets, BuildVerdict, BuyItem, FlaggedTube, LineCheck } from "./types.ts";

function plural(count: number, one: string, many: string): string {
  return `${count} ${count === 1 ? one : many}`;
}

function amount(value: number, digits: number): string {
  return Number(value.toFixed(digits)).toString();
}

function unitOf(line: LineCheck): [string, string] {
  return line.kind === "rectifier" ? ["tube", "tubes"] : ["stage", "stages"];
}

function slotText(flagged: FlaggedTube): string {
  return flagged.slots.map((slot) => `${slot.role} ${slot.number}${slot.side ? ` ${slot.side}` : ""}`).join(", ");
}

/**
 * Verdict: "short" when a line lacks stages, a line has a problem (unknown type, heater that
 * cannot run on its supply) or a budget is exceeded; else "ready-with-substitutes" when any
 * stage is filled by a substitute type; else "ready". Spares short and flagged tubes with a
 * replacement are reported without changing the verdict. The buy list has one row per reason:
 * stages short, spares short, flagged tubes without a replacement.
 */
export function decideVerdict(lines: LineCheck[], budgets: BuildBudgets, flagged: FlaggedTube[], specs: Map<string, TubeTypeSpec>): { verdict: BuildVerdict; reasons: string[]; buyList: BuyItem[] } {
  const reasons: string[] = [];
  const buyList: BuyItem[] = [];
  let short = false;
  for (const line of lines) {
    const [one, many] = unitOf(line);
    const spec = specs.get(line.designation);
    const sections = spec ? amplifyingSections(spec).length : 0;
    for (const problem of line.problems) {
      short = true;
      reasons.push(problem);
    }
    if (line.shortfallStages > 0) {
      short = true;
      const closer = line.substitutes.find((option) => option.wouldClose && !option.accepted);
      reasons.push(
        `${line.label} (${line.count} × ${line.designation} ${line.kind}): ${plural(line.shortfallStages, one, many)} short` +
          (closer ? ` — accepting ${closer.designation} (${closer.goodAvailable} good free) would close it` : ""),
      );
      const toBuy = line.shortfallStages - line.stagesAwaitingReplacement;
      if (toBuy > 0) {
        buyList.push({
          designation: line.designation,
          quantity: tubesForStages(line.kind, toBuy, sections),
          why: `${line.label}: ${plural(toBuy, one, many)} short` + (line.kind === "bistable" ? (sections >= 2 ? "; one tube per stage when its two sections balance — test and pair on arrival" : "; two tubes per stage — test and pair on arrival") : ""),
        });
      }
    }
    if (line.shortfallSpares > 0) {
      reasons.push(`${line.label}: ${plural(line.shortfallSpares, "spare", "spares")} short of ${line.spareCount} (${line.spares.percent} %, ${line.spares.source})`);
      buyList.push({ designation: line.designation, quantity: tubesForStages(line.kind, line.shortfallSpares, sections), why: `${line.label}: ${plural(line.shortfallSpares, "spare", "spares")} short` });
    }
    for (const share of line.shares) {
      if (share.substitute && share.stages + share.spares > 0) {
        reasons.push(`${line.label} uses ${share.designation} (accepted substitute) for ${plural(share.stages, "stage", "stages")}${share.spares > 0 ? ` and ${plural(share.spares, "spare", "spares")}` : ""}`);
      }
    }
  }
  for (const supply of budgets.heaterSupplies) {
    if (supply.over) {
      short = true;
      reasons.push(`heater supply "${supply.name}" (${supply.volts} V): ${amount(supply.ampsUsed, 3)} A drawn, ${amount(supply.ampsAvailable, 3)} A available`);
    }
  }
  if (budgets.bPlus.over) {
    short = true;
    reasons.push(`B+ (${budgets.bPlus.volts} V): ${amount(budgets.bPlus.milliampsUsed, 1)} mA drawn, ${amount(budgets.bPlus.milliampsAvailable, 1)} mA available`);
  }
  if (budgets.negativeRail?.over) {
    short = true;
    reasons.push(`negative rail (${budgets.negativeRail.volts} V): ${amount(budgets.negativeRail.milliampsUsed, 1)} mA drawn, ${amount(budgets.negativeRail.milliampsAvailable, 1)} mA available`);
  }
  for (const tube of flagged) {
    if (tube.replacement) {
      reasons.push(`${tube.label} (${tube.lineLabel}, ${slotText(tube)}) ${tube.reason} — replacement proposed: ${tube.replacement.label}`);
    } else {
      reasons.push(`${tube.label} (${tube.lineLabel}, ${slotText(tube)}) ${tube.reason} and no good ${tube.designation} is free to replace it`);
      buyList.push({ designation: tube.designation, quantity: 1, why: `replaces ${tube.label} (${tube.reason}) in ${tube.lineLabel}, ${slotText(tube)}` });
    }
  }
  const usesSubstitutes = lines.some((line) => line.usesSubstitutes);
  const verdict: BuildVerdict = short ? "short" : usesSubstitutes ? "ready-with-substitutes" : "ready";
  return { verdict, reasons, buyList };
}
