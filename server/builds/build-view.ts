/**
 * Display strings for the build pages: the check report (with the budget chart's geometry),
 * the editor's rows, the pick list and its CSV. Templates only print what this prepares.
 */
import type { BuildBudgets, BuildCheckResult, LineCheck, StageLoadBasis } from "../engine/build-check/index.ts";
import { DEFAULT_BALANCE_PERCENT, DEFAULT_SPARES_PERCENT, DEFAULT_SPARES_SOURCE } from "../engine/build-check/index.ts";
import type { BuildFormRows, LineRow, SupplyRow } from "../schemas/build-schemas.ts";
import { slotText, type BuildStore, type StoredBuild } from "./build-store.ts";
import type { TypeCatalog } from "../types/type-catalog.ts";

/** Shown on the check report and the pick list. */
export const BUILD_CAUTION =
  "Tube circuits run at lethal voltages, and filter capacitors hold their charge after power-off. " +
  "The resistor values, operating points and any substitute here are planning figures: check them against the manufacturers' data before applying power, " +
  "and defer to local codes and qualified practice.";

const VERDICT_TEXT: Record<BuildCheckResult["verdict"], string> = {
  ready: "Ready — the stock covers every line",
  "ready-with-substitutes": "Ready with substitutes — covered with the substitutes accepted",
  short: "Short — see why below",
};

const BASIS_TEXT: Record<StageLoadBasis, string> = {
  "koren-solve": "solved (Koren model)",
  "typical-point": "typical plate current",
  "plate-load-bound": "upper bound from the plate loads",
  "given-values": "values given",
  none: "none drawn",
};

const KIND_TEXT: Record<LineCheck["kind"], string> = { bistable: "bistable stages", single: "single stages", rectifier: "rectifiers / regulators" };

/** Trims a number to at most `digits` decimals without trailing zeros. */
export function trimmed(value: number, digits = 2): string {
  return Number(value.toFixed(digits)).toString();
}

function ohmsText(ohms: number | null): string {
  if (ohms === null) return "—";
  if (ohms >= 1e6) return `${trimmed(ohms / 1e6, 3)} MΩ`;
  if (ohms >= 1e3) return `${trimmed(ohms / 1e3, 3)} kΩ`;
  return `${trimmed(ohms, 1)} Ω`;
}

/** What one line asks for, in words: "32 bistable stages of 5963 — RL 27 kΩ, R1 220 kΩ, R2 220 kΩ, grounded cathodes". */
export function lineDescription(line: StoredBuild["lines"][number]): string {
  const head = `${line.count} ${KIND_TEXT[line.kind]} of ${line.designation}`;
  if (line.kind === "bistable") {
    return `${head} — RL ${ohmsText(line.plateLoadOhms)}, R1 ${ohmsText(line.couplingOhms)}, R2 ${ohmsText(line.gridReturnOhms)}, ${line.cathodeOhms !== null ? `common cathode ${ohmsText(line.cathodeOhms)}` : "grounded cathodes"}`;
  }
  if (line.kind === "single") return `${head} — ${trimmed(line.plateVolts ?? 0, 1)} V, ${trimmed(line.plateMilliamps ?? 0, 2)} mA plate${line.screenMilliamps !== null ? `, ${trimmed(line.screenMilliamps, 2)} mA screen` : ""} per section`;
  return `${head}${line.loadMilliamps ? ` — ${trimmed(line.loadMilliamps, 1)} mA each from B+` : ""}`;
}

// ── Budget chart ────────────────────────────────────────────────────────────────────────

export interface ChartBar {
  /** "Heater "6.3 V bus" 6.3 V — 9.6 / 12 A", above its bar. */
  title: string;
  titleY: number;
  barY: number;
  availableWidth: number;
  usedWidth: number;
  /** The part of `used` beyond what is available, drawn in the warning colour. */
  overX: number;
  overWidth: number;
  limitX: number;
  over: boolean;
  className: string;
}

export interface BudgetChart {
  width: number;
  height: number;
  barX: number;
  barHeight: number;
  bars: ChartBar[];
  description: string;
}

const CHART_WIDTH = 720;
const CHART_MARGIN = 12;
const BAR_HEIGHT = 18;
const ROW_HEIGHT = 50;
const BAR_AREA = CHART_WIDTH - 2 * CHART_MARGIN;

/**
 * One row per budget (each heater supply in amps, the heater watts, B+ and the negative rail
 * in mA), its title above the bar: the track is what is available, the fill what is used, each
 * row scaled to itself — available = 80 % of the track, so an overdraw up to 25 % still shows
 * its length.
 */
export function budgetChart(budgets: BuildBudgets): BudgetChart {
  const rows: Array<{ label: string; used: number; available: number; unit: string; digits: number }> = [
    ...budgets.heaterSupplies.map((supply) => ({ label: `Heater "${supply.name}" ${trimmed(supply.volts)} V`, used: supply.ampsUsed, available: supply.ampsAvailable, unit: "A", digits: 3 })),
    { label: "Heater power, all supplies", used: budgets.heaterWatts.used, available: budgets.heaterWatts.available, unit: "W", digits: 1 },
    { label: `B+ ${trimmed(budgets.bPlus.volts)} V`, used: budgets.bPlus.milliampsUsed, available: budgets.bPlus.milliampsAvailable, unit: "mA", digits: 1 },
    ...(budgets.negativeRail ? [{ label: `Negative rail ${trimmed(budgets.negativeRail.volts)} V`, used: budgets.negativeRail.milliampsUsed, available: budgets.negativeRail.milliampsAvailable, unit: "mA", digits: 1 }] : []),
  ];
  const availableWidth = BAR_AREA * 0.8;
  const bars = rows.map((row, index): ChartBar => {
    const scale = row.available > 0 ? availableWidth / row.available : 0;
    const usedWidth = Math.min(BAR_AREA, row.used * scale);
    const over = row.used > row.available;
    const top = 8 + index * ROW_HEIGHT;
    return {
      title: `${row.label} — ${trimmed(row.used, row.digits)} of ${trimmed(row.available, row.digits)} ${row.unit}${over ? ", over" : ""}`,
      titleY: top + 14,
      barY: top + 22,
      availableWidth,
      usedWidth,
      overX: CHART_MARGIN + availableWidth,
      overWidth: over ? Math.max(0, usedWidth - availableWidth) : 0,
      limitX: CHART_MARGIN + availableWidth,
      over,
      className: over ? "budget-over" : row.used > 0.9 * row.available ? "budget-tight" : "budget-ok",
    };
  });
  return {
    width: CHART_WIDTH,
    height: 12 + rows.length * ROW_HEIGHT,
    barX: CHART_MARGIN,
    barHeight: BAR_HEIGHT,
    bars,
    description: bars.map((bar) => bar.title).join("; "),
  };
}

// ── The check report ────────────────────────────────────────────────────────────────────

export function checkReportView(build: StoredBuild, result: BuildCheckResult, store: BuildStore, catalog: TypeCatalog) {
  const lineById = new Map(build.lines.map((line) => [String(line.id), line]));
  const lines = result.lines.map((line) => {
    const stored = lineById.get(line.key)!;
    const unit = line.kind === "rectifier" ? "tubes" : "stages";
    return {
      ...line,
      lineId: stored.id,
      description: lineDescription(stored),
      unit,
      sparesText:
        line.spareCount === 0
          ? `none wanted (${trimmed(line.spares.percent)} % — ${line.spares.source})`
          : `${line.coveredSpares} of ${line.spareCount} covered (${trimmed(line.spares.percent)} % of the count, rounded up — ${line.spares.source})`,
      pairsText: line.pairsFound === null ? "—" : String(line.pairsFound),
      coveredText: `${line.coveredStages} of ${line.count}${line.allocatedStages > 0 ? ` (${line.allocatedStages} allocated)` : ""}`,
      shortClass: line.shortfallStages > 0 ? "short" : line.shortfallSpares > 0 ? "tight" : "covered",
      shares: line.shares.map((share, index) => ({
        ...share,
        role: share.toBuy ? "to buy" : share.substitute ? "substitute" : "own type",
        heaterText: share.heater === null ? "cannot run on this supply" : share.heater.mode === "none" ? "no heater" : `${trimmed(share.heater.amps, 3)} A at ${trimmed(share.heater.volts)} V${share.heater.mode === "half" ? " (halves in parallel)" : ""}`,
        bPlusText: `${trimmed(share.load.bPlusMilliamps, 2)} mA`,
        railText: share.load.negativeRailMilliamps > 0 ? `${trimmed(share.load.negativeRailMilliamps, 2)} mA` : "—",
        plateText: `${trimmed(share.load.plateWatts, 2)} W`,
        basisText: BASIS_TEXT[share.load.basis],
        // The same type's note once is enough (own stages and the ones to buy share it).
        noteText: line.shares.slice(0, index).some((earlier) => earlier.designation === share.designation) ? "" : share.load.note,
      })),
      substitutes: line.substitutes.map((option) => ({
        ...option,
        closeText:
          line.shortfallStages + line.shortfallSpares === 0
            ? option.accepted ? "accepted, in use" : "not needed"
            : option.wouldClose ? "closes the gap" : option.stagesCoverable > 0 ? `covers ${option.stagesCoverable} of the ${line.shortfallStages + line.shortfallSpares} missing` : "none usable",
      })),
    };
  });
  const allocations = store.allocationRows(build.id).map((row) => {
    const line = build.lines.find((candidate) => candidate.id === row.lineId);
    const lineLabel = line ? `Line ${build.lines.indexOf(line) + 1}` : "Line ?";
    return {
      ...row,
      designation: catalog.get(row.typeId)?.designation ?? "?",
      lineLabel,
      slotsText: slotText(row.slots),
      suggestedPosition: `${lineLabel} ${slotText(row.slots)}`,
    };
  });
  allocations.sort((left, right) => left.lineId - right.lineId || left.label.localeCompare(right.label, "en", { numeric: true }));
  const plannedByLine = new Map<string, number>();
  for (const tube of result.reservationPlan) plannedByLine.set(tube.lineKey, (plannedByLine.get(tube.lineKey) ?? 0) + 1);
  return {
    verdict: result.verdict,
    verdictText: VERDICT_TEXT[result.verdict],
    verdictReasons: result.verdictReasons,
    lines,
    chart: budgetChart(result.budgets),
    budgets: {
      heater: result.budgets.heaterSupplies.map((supply) => ({
        ...supply,
        text: `${trimmed(supply.ampsUsed, 3)} A of ${trimmed(supply.ampsAvailable, 3)} A (${trimmed(supply.wattsUsed, 1)} W of ${trimmed(supply.wattsAvailable, 1)} W)`,
        contributions: supply.contributions.map((part) => `${part.lineLabel}: ${part.tubes} × ${part.designation} × ${trimmed(part.ampsEach, 3)} A${part.mode === "half" ? " (halves in parallel)" : ""}`),
      })),
      heaterWattsText: `${trimmed(result.budgets.heaterWatts.used, 1)} W of ${trimmed(result.budgets.heaterWatts.available, 1)} W`,
      bPlusText: `${trimmed(result.budgets.bPlus.milliampsUsed, 1)} mA of ${trimmed(result.budgets.bPlus.milliampsAvailable, 1)} mA at ${trimmed(result.budgets.bPlus.volts)} V`,
      bPlusParts: result.budgets.bPlus.contributions.map((part) => `${part.lineLabel}: ${part.stages} × ${part.designation} × ${trimmed(part.milliampsEach, 2)} mA (${BASIS_TEXT[part.basis]})`),
      railText: result.budgets.negativeRail
        ? `${trimmed(result.budgets.negativeRail.milliampsUsed, 1)} mA of ${trimmed(result.budgets.negativeRail.milliampsAvailable, 1)} mA at ${trimmed(result.budgets.negativeRail.volts)} V`
        : "no negative rail: grid returns go to ground",
      railParts: result.budgets.negativeRail?.contributions.map((part) => `${part.lineLabel}: ${part.stages} × ${part.designation} × ${trimmed(part.milliampsEach, 2)} mA`) ?? [],
      plateText: `${trimmed(result.budgets.plateDissipationWatts, 1)} W`,
    },
    flagged: result.flagged.map((tube) => ({ ...tube, slotsText: slotText(tube.slots) })),
    buyList: result.buyList,
    plannedCount: result.reservationPlan.length,
    plannedText: [...plannedByLine].map(([key, count]) => `${lines.find((line) => line.key === key)?.label ?? "?"}: ${count}`).join(", "),
    canReserve: result.reservationPlan.length > 0 && result.lines.every((line) => line.shortfallStages === 0 && line.problems.length === 0),
    allocations,
    reservedCount: allocations.filter((row) => row.status === "reserved").length,
    installedCount: allocations.filter((row) => row.status === "installed").length,
    balanceText: `${trimmed(result.balanceRule.maxDifferencePercent)} % on transconductance (${result.balanceRule.source})`,
    assumptions: result.assumptions,
    supplies: {
      heater: build.heaterSupplies.map((supply, index) => `${index + 1}. "${supply.name}" ${trimmed(supply.volts)} V, ${trimmed(supply.amps, 3)} A`),
      bPlus: `${trimmed(build.bPlusVolts)} V, ${trimmed(build.bPlusMilliamps, 1)} mA`,
      rail: build.negativeRailVolts !== null ? `${trimmed(build.negativeRailVolts)} V, ${trimmed(build.negativeRailMilliamps ?? 0, 1)} mA` : "none (grid returns to ground)",
    },
  };
}

// ── Pick list ───────────────────────────────────────────────────────────────────────────

export interface PickRow {
  location: string;
  label: string;
  type: string;
  line: string;
  slots: string;
  verdict: string;
}

/** Reserved tubes of a build, sorted by storage location then label, for fetching them from the shelves. */
export function pickList(build: StoredBuild, store: BuildStore, catalog: TypeCatalog): PickRow[] {
  const natural = (left: string, right: string) => left.localeCompare(right, "en", { numeric: true, sensitivity: "base" });
  return store
    .allocationRows(build.id)
    .filter((row) => row.status === "reserved")
    .map((row) => {
      const line = build.lines.find((candidate) => candidate.id === row.lineId);
      return {
        location: row.location || "(no location)",
        label: row.label,
        type: catalog.get(row.typeId)?.designation ?? "?",
        line: line ? `Line ${build.lines.indexOf(line) + 1}` : "?",
        slots: slotText(row.slots),
        verdict: row.verdict,
      };
    })
    .sort((left, right) => natural(left.location, right.location) || natural(left.label, right.label));
}

function csvCell(value: string): string {
  // Spreadsheets run cells starting with = + - @ as formulas; a leading quote keeps them text.
  const safe = /^[=+\-@\t\r]/.test(value) ? `'${value}` : value;
  return /[",\n\r]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

export function pickListCsv(rows: PickRow[]): string {
  const header = ["location", "label", "type", "line", "slots", "verdict"];
  return [header.join(","), ...rows.map((row) => [row.location, row.label, row.type, row.line, row.slots, row.verdict].map(csvCell).join(","))].join("\r\n") + "\r\n";
}

// ── Editor ──────────────────────────────────────────────────────────────────────────────

export function defaultSupplyRow(): SupplyRow {
  return { name: "6.3 V heaters", volts: "6.3", amps: "" };
}

export function defaultLineRow(): LineRow {
  return { kind: "bistable", type: "", count: "", heaterSupply: "1", sparesPercent: String(DEFAULT_SPARES_PERCENT), sparesSource: DEFAULT_SPARES_SOURCE };
}

/** A new build: one heater supply, one line. */
export function newBuildRows(): BuildFormRows {
  return { top: { balancePercent: String(DEFAULT_BALANCE_PERCENT) }, supplies: [defaultSupplyRow()], lines: [defaultLineRow()] };
}

function numberText(value: number | null | undefined): string {
  return value === null || value === undefined ? "" : String(value);
}

/** Ohms as the editor takes them back: 27000 → "27k", 1500000 → "1.5M", 680 → "680". */
function ohmsField(value: number | null): string {
  if (value === null) return "";
  if (value >= 1e6) return `${trimmed(value / 1e6, 4)}M`;
  if (value >= 1e3) return `${trimmed(value / 1e3, 4)}k`;
  return trimmed(value, 3);
}

/** A stored build as the editor's rows. */
export function rowsOfBuild(build: StoredBuild): BuildFormRows {
  return {
    top: {
      name: build.name,
      notes: build.notes,
      balancePercent: numberText(build.balancePercent),
      "bPlus.volts": numberText(build.bPlusVolts),
      "bPlus.milliamps": numberText(build.bPlusMilliamps),
      "negativeRail.volts": numberText(build.negativeRailVolts),
      "negativeRail.milliamps": numberText(build.negativeRailMilliamps),
    },
    supplies: build.heaterSupplies.map((supply) => ({ name: supply.name, volts: String(supply.volts), amps: String(supply.amps) })),
    lines: build.lines.map((line) => ({
      id: String(line.id),
      kind: line.kind,
      type: line.designation,
      count: String(line.count),
      heaterSupply: String(line.heaterSupply),
      sparesPercent: numberText(line.sparesPercent),
      sparesSource: line.sparesSource,
      allowSubstitutes: line.allowSubstitutes ? "on" : "",
      acceptedSubstitutes: line.acceptedSubstitutes.join(", "),
      plateLoadOhms: ohmsField(line.plateLoadOhms),
      couplingOhms: ohmsField(line.couplingOhms),
      gridReturnOhms: ohmsField(line.gridReturnOhms),
      cathodeOhms: ohmsField(line.cathodeOhms),
      plateVolts: numberText(line.plateVolts),
      plateMilliamps: numberText(line.plateMilliamps),
      screenMilliamps: numberText(line.screenMilliamps),
      loadMilliamps: numberText(line.loadMilliamps),
    })),
  };
}

/** Applies an editor action (add/remove a line or supply) to the rows; null when the action is unknown. */
export function applyEditorAction(rows: BuildFormRows, action: string): BuildFormRows | null {
  if (action === "add-line") return { ...rows, lines: [...rows.lines, { ...defaultLineRow(), heaterSupply: rows.lines.at(-1)?.heaterSupply ?? "1" }] };
  if (action === "add-supply") return { ...rows, supplies: [...rows.supplies, { name: "", volts: "", amps: "" }] };
  const removeLine = /^remove-line-(\d{1,3})$/.exec(action);
  if (removeLine) return { ...rows, lines: rows.lines.filter((_, index) => index !== Number(removeLine[1])) };
  const removeSupply = /^remove-supply-(\d{1,3})$/.exec(action);
  if (removeSupply) return { ...rows, supplies: rows.supplies.filter((_, index) => index !== Number(removeSupply[1])) };
  return null;
}

/** Everything the editor template prints, per row: values, the supply choices, which fields the kind shows. */
export function editorView(rows: BuildFormRows) {
  return {
    top: rows.top,
    supplies: rows.supplies.map((row, index) => ({ index, number: index + 1, row, removable: rows.supplies.length > 1 })),
    lines: rows.lines.map((row, index) => ({
      index,
      number: index + 1,
      row,
      kind: row.kind === "single" || row.kind === "rectifier" ? row.kind : "bistable",
      supplyChoices: rows.supplies.map((supply, supplyIndex) => ({
        value: String(supplyIndex + 1),
        text: `${supplyIndex + 1}. ${supply.name || "unnamed"}${supply.volts ? ` (${supply.volts} V)` : ""}`,
        selected: (row.heaterSupply ?? "1") === String(supplyIndex + 1),
      })),
      allowChecked: row.allowSubstitutes === "on" || row.allowSubstitutes === "true",
      removable: rows.lines.length > 1,
    })),
  };
}
