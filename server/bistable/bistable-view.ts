/**
 * Display data for the bistable page: state cards, levels, yield summary, resistor suggestions
 * and the transfer-curve chart geometry (scales and ticks from d3-scale). Templates only draw.
 */
import { scaleLinear } from "d3-scale";
import type { BistableAnalysis, BistableState, SideOperatingPoint, WorstFigures, YieldResult } from "../engine/bistable/index.ts";
import { formatQuantity } from "../engine/units/index.ts";
import type { BistableAnswer, ResistorAnswer } from "./bistable-service.ts";
import { transferCurves } from "../engine/bistable/index.ts";

// ── Numbers ───────────────────────────────────────────────────────────────────────────────

const minus = (text: string) => text.replace(/^-/, "−");
/** Below these a node or a current reads as nothing at all (display only). */
const ZERO_VOLTS = 5e-4;
const CUT_OFF_MILLIAMPS = 1e-3;
const NEGLIGIBLE_WATTS = 1e-3;
const isMissing = (value: number | null | undefined): value is null | undefined => value === null || value === undefined || !Number.isFinite(value);

/** Volts with four significant digits and no prefix, so a column of node voltages lines up: 0.9463 V, −52.11 V. */
export const voltsText = (value: number | null | undefined) =>
  isMissing(value) ? "—" : Math.abs(value) < ZERO_VOLTS ? "0 V" : `${minus(String(Number(value.toPrecision(4))))} V`;
/** Currents: mA or µA; below 1 µA (a cut-off tube) says so instead of printing picoamps. */
export const milliampsText = (value: number | null | undefined) => {
  if (isMissing(value)) return "—";
  if (value === 0) return "0";
  if (Math.abs(value) < CUT_OFF_MILLIAMPS) return "< 1 µA";
  return minus(formatQuantity(value, "milliamps", 3));
};
export const ohmsText = (value: number | null | undefined) => formatQuantity(value, "ohms", 3);
const wattsText = (value: number | null | undefined) =>
  isMissing(value) ? "—" : Math.abs(value) < NEGLIGIBLE_WATTS ? "< 1 mW" : formatQuantity(value, "watts", 3);
const percentText = (fraction: number) => `${(fraction * 100).toFixed(fraction === 1 || fraction === 0 ? 0 : 1)} %`;
const gainText = (value: number | null | undefined) => (value === null || value === undefined || !Number.isFinite(value) ? "—" : minus(value.toPrecision(3)));

// ── States and levels ─────────────────────────────────────────────────────────────────────

export interface StateRow {
  label: string;
  a: string;
  b: string;
  /** "over" marks a plate over its dissipation rating. */
  flagA?: "over" | "on" | "off";
  flagB?: "over" | "on" | "off";
}

export interface StateCard {
  title: string;
  kind: "stable" | "unstable";
  summary: string;
  rows: StateRow[];
}

function stateTitle(state: BistableState, index: number, total: number): string {
  if (state.stable && state.onSide) return `Side ${state.onSide} on — stable`;
  if (state.stable) return total === 1 ? "The only state — stable" : `State ${index + 1} — stable`;
  return "Unstable — the switching point";
}

function stateSummary(state: BistableState): string {
  if (state.onSide && state.highLevelVolts !== null && state.lowLevelVolts !== null) {
    const off = state.onSide === "A" ? "B" : "A";
    const margin = state.cutoffMarginVolts === null ? "" : `; side ${off} ${state.cutoffMarginVolts >= 0 ? "is cut off with" : "is NOT cut off:"} ${voltsText(state.cutoffMarginVolts)} margin`;
    return `High level ${voltsText(state.highLevelVolts)} at side ${off}'s plate, low level ${voltsText(state.lowLevelVolts)} at side ${state.onSide}'s; swing ${voltsText(state.swingVolts)}${margin}.`;
  }
  if (state.stable) {
    return `Both sides conduct and the pair rests here: the loop's return ratio is ${gainText(state.returnRatio)}, below 1, so a disturbance dies away and no bit can be held.`;
  }
  return `Both sides conduct; the loop's return ratio here is ${gainText(state.returnRatio)} (above 1: any disturbance runs away to a stable state).`;
}

function dissipationText(point: SideOperatingPoint): string {
  return point.maxPlateWatts === null ? wattsText(point.plateWatts) : `${wattsText(point.plateWatts)} of ${wattsText(point.maxPlateWatts)}`;
}

function stateCard(state: BistableState, index: number, total: number, withScreen: boolean): StateCard {
  const { sideA, sideB } = state;
  const role = (side: "A" | "B"): "on" | "off" | undefined => (state.onSide === null ? undefined : state.onSide === side ? "on" : "off");
  const rows: StateRow[] = [
    { label: "Conducts", a: role("A") ?? "both", b: role("B") ?? "both", flagA: role("A"), flagB: role("B") },
    { label: "Plate", a: voltsText(sideA.plateVolts), b: voltsText(sideB.plateVolts) },
    { label: "Grid", a: voltsText(sideA.gridVolts), b: voltsText(sideB.gridVolts) },
    { label: "Cathode", a: voltsText(sideA.cathodeVolts), b: voltsText(sideB.cathodeVolts) },
    { label: "Grid to cathode", a: voltsText(sideA.gridVolts - sideA.cathodeVolts), b: voltsText(sideB.gridVolts - sideB.cathodeVolts) },
  ];
  if (withScreen) rows.push({ label: "Screen", a: voltsText(sideA.screenVolts), b: voltsText(sideB.screenVolts) });
  rows.push({ label: "Plate current", a: milliampsText(sideA.plateMilliamps), b: milliampsText(sideB.plateMilliamps) });
  if (withScreen) rows.push({ label: "Screen current", a: milliampsText(sideA.screenMilliamps), b: milliampsText(sideB.screenMilliamps) });
  rows.push(
    { label: "Grid current", a: milliampsText(sideA.gridMilliamps), b: milliampsText(sideB.gridMilliamps) },
    {
      label: "Plate dissipation",
      a: dissipationText(sideA),
      b: dissipationText(sideB),
      ...(sideA.overDissipation ? { flagA: "over" as const } : {}),
      ...(sideB.overDissipation ? { flagB: "over" as const } : {}),
    },
  );
  return { title: stateTitle(state, index, total), kind: state.stable ? "stable" : "unstable", summary: stateSummary(state), rows };
}

export interface FactLine {
  term: string;
  value: string;
  hint?: string;
}

function levelLines(analysis: BistableAnalysis): FactLine[] {
  const lines: FactLine[] = [];
  const levels = analysis.levels;
  if (levels) {
    lines.push(
      { term: "Logic high (off plate)", value: voltsText(levels.highLevelVolts), hint: "the lower of the two states" },
      { term: "Logic low (on plate)", value: voltsText(levels.lowLevelVolts), hint: "the higher of the two states" },
      { term: "Swing", value: voltsText(levels.swingVolts) },
      { term: "Cut-off margin of the off side", value: voltsText(levels.cutoffMarginVolts), hint: analysis.cutoffDefinition },
      { term: "Grid current of the on side", value: milliampsText(levels.onGridMilliamps), hint: "its grid clamps a little above its cathode" },
    );
  }
  const unstable = analysis.states.some((state) => !state.stable);
  lines.push({
    term: unstable ? "Loop gain at the unstable point" : "Loop gain",
    value: gainText(analysis.loopGain),
    hint: "product of the two stage gains; a latching pair needs more than 1",
  });
  if (analysis.stageGains) {
    lines.push({ term: "Stage gains", value: `A→B ${gainText(analysis.stageGains.aToB)}, B→A ${gainText(analysis.stageGains.bToA)}`, hint: "each stage inverts" });
  }
  return lines;
}

// ── Yield ─────────────────────────────────────────────────────────────────────────────────

export interface YieldView {
  nominal: string;
  nominalPass: boolean;
  corners: string;
  cornerWorst: string;
  failingCorners: Array<{ corner: string; failures: string }>;
  monteCarlo: string;
  monteCarloWorst: string;
  factors: string;
  monteCarloPass: boolean;
  cornersPass: boolean;
}

function worstText(worst: WorstFigures): string {
  const parts = [
    `smallest swing ${voltsText(worst.swingVolts)}`,
    `smallest cut-off margin ${voltsText(worst.cutoffMarginVolts)}`,
    `lowest high level ${voltsText(worst.highLevelVolts)}`,
    `highest low level ${voltsText(worst.lowLevelVolts)}`,
  ];
  if (worst.notBistableCount > 0) parts.push(`${worst.notBistableCount} not bistable`);
  return parts.join(", ");
}

/** The engine names factors by field; the page says them as a builder would. */
const readableFactors = (text: string) =>
  text.replace(/plateLoadOhms/g, "plate load").replace(/couplingOhms/g, "coupling R1").replace(/gridReturnOhms/g, "grid return R2");

function yieldView(result: YieldResult): YieldView {
  const { corners, monteCarlo, nominal } = result;
  return {
    nominal: nominal.pass ? "The nominal circuit meets the thresholds." : `The nominal circuit fails: ${nominal.failures.join("; ")}.`,
    nominalPass: nominal.pass,
    corners: `${corners.passed} of ${corners.evaluated} tolerance corners pass (${percentText(corners.passFraction)}; ${corners.method === "full-factorial" ? "every corner" : "a reduced set of corners"}).`,
    cornersPass: corners.passed === corners.evaluated,
    cornerWorst: worstText(corners.worst),
    failingCorners: corners.failing.map((entry) => ({ corner: readableFactors(entry.corner) || "nominal", failures: entry.failures.join("; ") })),
    monteCarlo:
      monteCarlo.trials === 0
        ? "No random trials were asked for."
        : `${monteCarlo.passed} of ${monteCarlo.trials} random builds pass (${percentText(monteCarlo.passFraction)}, seed ${monteCarlo.seed}).`,
    monteCarloPass: monteCarlo.passed === monteCarlo.trials,
    monteCarloWorst: monteCarlo.trials === 0 ? "" : worstText(monteCarlo.worst),
    factors: readableFactors(result.factors.join(", ")),
  };
}

// ── Transfer-curve chart ──────────────────────────────────────────────────────────────────

export interface TransferChart {
  width: number;
  height: number;
  plot: { left: number; right: number; top: number; bottom: number };
  clipId: string;
  xTicks: Array<{ x: number; label: string }>;
  yTicks: Array<{ y: number; label: string }>;
  xLabel: string;
  yLabel: string;
  curveA: string;
  curveB: string;
  points: Array<{ x: number; y: number; stable: boolean; label: string; diamond: string }>;
  hasUnstable: boolean;
  unsolvedNote: string | null;
}

const CHART_SIZE = 400;
const CHART_MARGIN = { left: 58, right: 14, top: 14, bottom: 46 };
/** Extra room around the equilibria, as a share of their spread, and at least this many volts. */
const CHART_PAD_FRACTION = 0.3;
const CHART_PAD_MIN_VOLTS = 6;
/** With a single state, at least this share of B+ minus the rail on each side of it. */
const CHART_LONE_STATE_FRACTION = 0.1;

function pointLabel(state: BistableState): string {
  const kind = state.stable ? (state.onSide ? `side ${state.onSide} on (stable)` : "stable") : "unstable";
  return `${kind}: grid A ${voltsText(state.sideA.gridVolts)}, grid B ${voltsText(state.sideB.gridVolts)}`;
}

/** Geometry of the two transfer curves with the equilibria marked; null when there is no state to centre on. */
export function buildTransferChart(answer: BistableAnswer): TransferChart | null {
  const { analysis, circuit } = answer;
  if (analysis.states.length === 0) return null;
  const grids = analysis.states.flatMap((state) => [state.sideA.gridVolts, state.sideB.gridVolts]);
  const low = Math.min(...grids);
  const high = Math.max(...grids);
  // A lone state gets a wider window, so the reader sees the curves do not cross again nearby.
  const supplySpan = circuit.bPlusVolts - circuit.negativeRailVolts;
  const pad = Math.max(CHART_PAD_MIN_VOLTS, CHART_PAD_FRACTION * (high - low), analysis.states.length === 1 ? CHART_LONE_STATE_FRACTION * supplySpan : 0);
  const domain = scaleLinear().domain([low - pad, high + pad]).nice().domain() as [number, number];
  const curves = transferCurves(circuit, domain[0], domain[1]);
  const plot = { left: CHART_MARGIN.left, right: CHART_MARGIN.left + CHART_SIZE, top: CHART_MARGIN.top, bottom: CHART_MARGIN.top + CHART_SIZE };
  const x = scaleLinear().domain(domain).range([plot.left, plot.right]);
  const y = scaleLinear().domain(domain).range([plot.bottom, plot.top]);
  const path = (polylines: Array<Array<{ gridAVolts: number; gridBVolts: number }>>) =>
    polylines
      .filter((line) => line.length > 1)
      .map((line) => line.map((point, index) => `${index ? "L" : "M"}${x(point.gridAVolts).toFixed(1)},${y(point.gridBVolts).toFixed(1)}`).join(""))
      .join(" ");
  const points = analysis.states.map((state) => {
    const cx = x(state.sideA.gridVolts);
    const cy = y(state.sideB.gridVolts);
    const size = 7;
    return {
      x: cx,
      y: cy,
      stable: state.stable,
      label: pointLabel(state),
      diamond: `M${cx.toFixed(1)},${(cy - size).toFixed(1)}L${(cx + size).toFixed(1)},${cy.toFixed(1)}L${cx.toFixed(1)},${(cy + size).toFixed(1)}L${(cx - size).toFixed(1)},${cy.toFixed(1)}Z`,
    };
  });
  return {
    width: plot.right + CHART_MARGIN.right,
    height: plot.bottom + CHART_MARGIN.bottom,
    plot,
    clipId: "transfer-plot-area",
    xTicks: x.ticks(7).map((tick) => ({ x: x(tick), label: voltsText(tick).replace(" V", "") })),
    yTicks: y.ticks(7).map((tick) => ({ y: y(tick), label: voltsText(tick).replace(" V", "") })),
    xLabel: "side A grid, volts to ground",
    yLabel: "side B grid, volts to ground",
    curveA: path(curves.curveA.polylines),
    curveB: path(curves.curveB.polylines),
    points,
    hasUnstable: points.some((point) => !point.stable),
    unsolvedNote: curves.unsolvedPoints > 0 ? `${curves.unsolvedPoints} points of the curves could not be solved and are left out.` : null,
  };
}

// ── The whole result ──────────────────────────────────────────────────────────────────────

export interface BistableResultView {
  bistable: boolean;
  verdictWord: string;
  headline: string;
  reasons: string[];
  warnings: string[];
  solverFailure: string | null;
  notes: string[];
  models: string[];
  states: StateCard[];
  levels: FactLine[];
  chart: TransferChart | null;
  yield: YieldView | null;
}

export function bistableResultView(answer: BistableAnswer, options: { chart?: boolean } = {}): BistableResultView {
  const { analysis } = answer;
  const stable = analysis.states.filter((state) => state.stable).length;
  const unstable = analysis.states.length - stable;
  const withScreen = answer.circuit.sideA.tube.hasScreen || answer.circuit.sideB.tube.hasScreen;
  const models = (["A", "B"] as const).map((side) => {
    const info = answer.sides[side];
    const scale = info.scaledAt ? `, current scaled to ${(info.currentScale * 100).toFixed(0)} % from the measured gm` : "";
    return `Side ${side}: ${info.type} (Koren model${scale})`;
  });
  return {
    bistable: analysis.bistable,
    verdictWord: analysis.bistable ? "Bistable" : "Not bistable",
    headline: analysis.bistable
      ? `${stable} stable states and ${unstable} unstable switching point${unstable === 1 ? "" : "s"}.`
      : `${analysis.states.length} equilibri${analysis.states.length === 1 ? "um" : "a"} found, ${stable} stable; the reasons:`,
    reasons: analysis.reasons,
    warnings: analysis.warnings,
    solverFailure: analysis.solverFailure ?? null,
    notes: answer.notes,
    models,
    states: analysis.states.map((state, index) => stateCard(state, index, analysis.states.length, withScreen)),
    levels: levelLines(analysis),
    chart: options.chart === false ? null : buildTransferChart(answer),
    yield: answer.yield ? yieldView(answer.yield) : null,
  };
}

// ── Resistor suggestions ──────────────────────────────────────────────────────────────────

export interface SuggestionRow {
  rank: number;
  plateLoad: string;
  coupling: string;
  gridReturn: string;
  levels: string;
  swing: string;
  margin: string;
  worstMargin: string;
  loopGain: string;
  levelError: string;
  href: string;
}

export interface SuggestionsView {
  ok: boolean;
  worstCaseText: string;
  reason: string | null;
  series: string;
  analysesRun: number;
  rows: SuggestionRow[];
  notes: string[];
}

/**
 * The suggestions as table rows; each links to the full analysis with its values filled in,
 * keeping the rest of the typed circuit (`baseQuery`).
 */
export function suggestionsView(answer: ResistorAnswer, baseQuery: Record<string, string>): SuggestionsView {
  const { result } = answer;
  const rows = result.ok
    ? result.suggestions.map((suggestion, index) => {
        const levels = suggestion.analysis.levels;
        const query = new URLSearchParams({ ...baseQuery });
        for (const side of ["a", "b"]) {
          query.set(`${side}PlateLoad`, ohmsText(suggestion.plateLoadOhms).replace(" ", "").replace("Ω", ""));
          query.set(`${side}Coupling`, ohmsText(suggestion.couplingOhms).replace(" ", "").replace("Ω", ""));
          query.set(`${side}GridReturn`, ohmsText(suggestion.gridReturnOhms).replace(" ", "").replace("Ω", ""));
        }
        return {
          rank: index + 1,
          plateLoad: ohmsText(suggestion.plateLoadOhms),
          coupling: ohmsText(suggestion.couplingOhms),
          gridReturn: ohmsText(suggestion.gridReturnOhms),
          levels: levels ? `${voltsText(levels.highLevelVolts)} / ${voltsText(levels.lowLevelVolts)}` : "—",
          swing: levels ? voltsText(levels.swingVolts) : "—",
          margin: levels ? voltsText(levels.cutoffMarginVolts) : "—",
          worstMargin: voltsText(suggestion.worstCase.cutoffMarginVolts),
          loopGain: gainText(suggestion.analysis.loopGain),
          levelError: voltsText(suggestion.levelErrorVolts),
          href: `/bistable?${query.toString()}`,
        };
      })
    : [];
  const spread = answer.worstCase;
  return {
    ok: result.ok,
    worstCaseText: `the least cut-off margin over resistors ±${spread.resistorTolerancePercent} %, supplies ±${spread.supplyDriftPercent} % and tubes ±${spread.tubeSpreadPercent} %`,
    reason: result.ok ? null : result.reason,
    series: answer.series,
    analysesRun: result.analysesRun,
    rows,
    notes: answer.notes,
  };
}
