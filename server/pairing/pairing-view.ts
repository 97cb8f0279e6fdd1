/**
 * Display data for the pairing page: the chosen pairs (or sets), leftovers with reasons, the
 * sort-and-pair comparison, the reserve button's payload and the gm histogram geometry
 * (scales and ticks from d3-scale). Templates only draw.
 */
import { scaleLinear } from "d3-scale";
import type { LeftoverReasonCode, PairingCandidate } from "../engine/pairing/index.ts";
import type { PairingAnswer, SectionReading } from "./pairing-service.ts";

/** Rows beyond these are summarised, so a stock of thousands still renders quickly. */
const MAX_PAIR_ROWS = 1000;
const MAX_LEFTOVER_ROWS = 300;

const percent = (fraction: number) => `${(fraction * 100).toFixed(1)} %`;
const gmText = (value: number | null) => (value === null ? "—" : `${Math.round(value)}`);
const iaText = (value: number | null) => (value === null ? "—" : `${Number(value.toPrecision(4))}`);

const REASON_WORDS: Record<LeftoverReasonCode, string> = {
  "invalid-values": "reading missing",
  "pairing-not-allowed": "pairing not allowed",
  "no-partner-within-rule": "no partner within the rule",
  "partner-only-in-same-envelope": "only its own envelope fits",
  "partner-only-in-other-envelopes": "only other envelopes fit",
  "partners-taken": "partners taken",
  "beyond-max-pairs": "beyond the stages wanted",
  "not-paired-by-sort": "not paired",
  "no-set-within-rule": "no set within the rule",
};

export interface SectionCell {
  label: string;
  section: number;
  href: string;
  type: string;
  gm: string;
  ia: string;
}

export interface PairRow {
  rank: number;
  a: SectionCell;
  b: SectionCell;
  differences: string[];
  imbalance: string;
  sameEnvelope: boolean;
  explanation: string;
}

export interface GroupRow {
  rank: number;
  members: SectionCell[];
  spread: string;
  explanation: string;
}

export interface LeftoverRow {
  cell: SectionCell;
  reasonWord: string;
  reason: string;
}

export interface HistogramChart {
  width: number;
  height: number;
  plot: { left: number; right: number; top: number; bottom: number };
  bars: Array<{ x: number; width: number; pairedY: number; pairedHeight: number; otherY: number; otherHeight: number; title: string }>;
  xTicks: Array<{ x: number; label: string }>;
  yTicks: Array<{ y: number; label: string }>;
  rug: Array<{ x1: number; x2: number; y: number; title: string }>;
  rugTop: number;
  rugLegend: string;
  xLabel: string;
  empty: boolean;
}

export interface PairingView {
  heading: string;
  summary: string[];
  setSize: number;
  valueNames: string[];
  counts: { exact: number; greedy: number | null; kept: number; imbalanceText: string | null; comparison: string | null };
  pairs: PairRow[];
  pairsHidden: number;
  groups: GroupRow[];
  leftovers: LeftoverRow[];
  leftoversHidden: number;
  leftoverTally: Array<{ word: string; count: number }>;
  reserve: { tubeIds: string; tubeCount: number; labels: string } | null;
  chart: HistogramChart;
}

function cellOf(reading: SectionReading | undefined, candidate: PairingCandidate): SectionCell {
  if (!reading) return { label: candidate.tubeId, section: candidate.section, href: "#", type: "", gm: "—", ia: "—" };
  return {
    label: reading.label,
    section: reading.section,
    href: `/tubes/${reading.tubeId}`,
    type: reading.type,
    gm: gmText(reading.transconductanceMicroSiemens),
    ia: iaText(reading.plateMilliamps),
  };
}

const HISTOGRAM = { width: 720, height: 250, margin: { left: 44, right: 16, top: 12, bottom: 58 } };
const HISTOGRAM_BINS = 28;

/** Histogram of gm over the candidate sections, paired ones stacked first; each chosen pair (or set) a rug line spanning its gm. */
function buildHistogram(answer: PairingAnswer): HistogramChart {
  const plot = {
    left: HISTOGRAM.margin.left,
    right: HISTOGRAM.width - HISTOGRAM.margin.right,
    top: HISTOGRAM.margin.top,
    bottom: HISTOGRAM.height - HISTOGRAM.margin.bottom,
  };
  const values = answer.sections.map((reading) => reading.transconductanceMicroSiemens).filter((value): value is number => value !== null && value > 0);
  const empty = values.length === 0;
  const chosen = new Set<string>();
  const spans: Array<{ low: number; high: number; title: string }> = [];
  for (const pair of answer.exact?.pairs ?? []) {
    chosen.add(pair.a.id).add(pair.b.id);
    spans.push({ low: Math.min(pair.a.values[0], pair.b.values[0]), high: Math.max(pair.a.values[0], pair.b.values[0]), title: `${pair.a.id} with ${pair.b.id}` });
  }
  for (const group of answer.grouping?.groups ?? []) {
    for (const member of group.members) chosen.add(member.id);
    const gms = group.members.map((member) => member.values[0]);
    spans.push({ low: Math.min(...gms), high: Math.max(...gms), title: group.members.map((member) => member.id).join(", ") });
  }
  const low = empty ? 0 : Math.min(...values);
  const high = empty ? 1 : Math.max(...values);
  const x = scaleLinear()
    .domain(low === high ? [low * 0.95, high * 1.05 + 1] : [low, high])
    .range([plot.left, plot.right])
    .nice(HISTOGRAM_BINS);
  const thresholds = x.ticks(HISTOGRAM_BINS);
  const [domainLow, domainHigh] = x.domain();
  const edges = [domainLow, ...thresholds.filter((t) => t > domainLow && t < domainHigh), domainHigh];
  const counts = edges.slice(1).map(() => ({ paired: 0, other: 0 }));
  for (const reading of answer.sections) {
    const gm = reading.transconductanceMicroSiemens;
    if (gm === null || !(gm > 0)) continue;
    let bin = edges.findIndex((edge, index) => index > 0 && gm < edge) - 1;
    if (bin < 0) bin = counts.length - 1;
    const id = `${reading.label}/${reading.section}`;
    if (chosen.has(id)) counts[bin].paired++;
    else counts[bin].other++;
  }
  const tallest = Math.max(1, ...counts.map((count) => count.paired + count.other));
  const rugRows = 4;
  const rugTop = plot.bottom + 22;
  const y = scaleLinear().domain([0, tallest]).range([plot.bottom, plot.top]).nice();
  const bars = counts.map((count, index) => {
    const left = x(edges[index]);
    const right = x(edges[index + 1]);
    const pairedTop = y(count.paired);
    const allTop = y(count.paired + count.other);
    return {
      x: left + 0.5,
      width: Math.max(0, right - left - 1),
      pairedY: pairedTop,
      pairedHeight: plot.bottom - pairedTop,
      otherY: allTop,
      otherHeight: pairedTop - allTop,
      title: `${Math.round(edges[index])}–${Math.round(edges[index + 1])} µS: ${count.paired} chosen, ${count.other} not`,
    };
  });
  return {
    width: HISTOGRAM.width,
    height: HISTOGRAM.height,
    plot,
    bars,
    xTicks: x.ticks(8).map((tick) => ({ x: x(tick), label: `${tick}` })),
    yTicks: y.ticks(Math.min(5, tallest)).filter((tick) => Number.isInteger(tick)).map((tick) => ({ y: y(tick), label: `${tick}` })),
    rug: spans.slice(0, MAX_PAIR_ROWS).map((span, index) => ({ x1: x(span.low), x2: Math.max(x(span.high), x(span.low) + 1.5), y: rugTop + (index % rugRows) * 4, title: span.title })),
    rugTop,
    rugLegend: answer.grouping ? "one chosen set's gm span" : "one chosen pair's gm span",
    xLabel: "gm of each section, µS (newest reading)",
    empty,
  };
}

export function pairingView(answer: PairingAnswer): PairingView {
  const { question, exact, greedy, grouping, byCandidateId } = answer;
  const valueNames = answer.valueLabels.map((label) => label.name);
  const ruleText = [`gm within ${question.rule.transconductancePercent} %`, ...(question.rule.plateCurrentPercent !== undefined ? [`plate current within ${question.rule.plateCurrentPercent} %`] : [])].join(" and ");
  const typeText = answer.types.length === 1 ? answer.types[0] : `${answer.types[0]} (with ${answer.types.slice(1).join(", ")})`;
  const summary = [
    `${answer.tubeCount} good ${typeText} tube${answer.tubeCount === 1 ? "" : "s"} in stock give ${answer.sections.length} section${answer.sections.length === 1 ? "" : "s"} with readings${answer.notGoodInStock > 0 ? `; ${answer.notGoodInStock} more in stock are not good and are left out` : ""}.`,
    question.setSize === 2 ? `Rule: ${ruleText}, between the two halves of a pair.` : `Rule: ${ruleText}, between every two members of a set of ${question.setSize}.`,
    question.setSize === 2
      ? `Envelopes: ${question.allowSameEnvelope ? "a tube's own two sections may pair" : "a tube's own sections may not pair"}; ${question.allowAcrossEnvelopes ? "sections of different tubes may pair" : "sections of different tubes may not pair"}.`
      : "Sets are chosen by a sound heuristic: every two members meet the rule, but the count is not proven the largest; the envelope options do not apply to sets.",
  ];
  const pairRows: PairRow[] = (exact?.pairs ?? []).slice(0, MAX_PAIR_ROWS).map((pair, index) => ({
    rank: index + 1,
    a: cellOf(byCandidateId.get(pair.a.id), pair.a),
    b: cellOf(byCandidateId.get(pair.b.id), pair.b),
    differences: pair.perValueDifference.map(percent),
    imbalance: percent(pair.imbalance),
    sameEnvelope: pair.sameEnvelope,
    explanation: pair.explanation,
  }));
  const groupRows: GroupRow[] = (grouping?.groups ?? []).slice(0, MAX_PAIR_ROWS).map((group, index) => ({
    rank: index + 1,
    members: group.members.map((member) => cellOf(byCandidateId.get(member.id), member)),
    spread: group.perValueSpread.map(percent).join(" / "),
    explanation: group.explanation,
  }));
  const allLeftovers = exact?.leftovers ?? grouping?.leftovers ?? [];
  const tally = new Map<string, number>();
  for (const leftover of allLeftovers) {
    const word = REASON_WORDS[leftover.reasonCode] ?? leftover.reasonCode;
    tally.set(word, (tally.get(word) ?? 0) + 1);
  }
  const leftovers = allLeftovers.slice(0, MAX_LEFTOVER_ROWS).map((leftover) => ({
    cell: cellOf(byCandidateId.get(leftover.candidate.id), leftover.candidate),
    reasonWord: REASON_WORDS[leftover.reasonCode] ?? leftover.reasonCode,
    reason: leftover.reason,
  }));
  const exactCount = exact ? exact.stats.pairsFound : (grouping?.stats.groups ?? 0);
  const kept = exact ? exact.pairs.length : (grouping?.groups.length ?? 0);
  const greedyCount = greedy ? greedy.stats.pairsFound : null;
  const labelById = new Map(answer.sections.map((reading) => [reading.tubeId, reading.label]));
  const labelsChosen = answer.chosenTubeIds.map((id) => labelById.get(id) ?? `#${id}`);
  return {
    heading: question.setSize === 2 ? `${kept} balanced pair${kept === 1 ? "" : "s"} of ${typeText}` : `${kept} matched set${kept === 1 ? "" : "s"} of ${question.setSize} ${typeText} sections`,
    summary,
    setSize: question.setSize,
    valueNames,
    counts: {
      exact: exactCount,
      greedy: greedyCount,
      kept,
      imbalanceText:
        exact && greedy
          ? `Summed imbalance: optimal ${percent(exact.stats.totalImbalance)} over ${exact.stats.pairs} pair${exact.stats.pairs === 1 ? "" : "s"}, sorted ${percent(greedy.stats.totalImbalance)} over ${greedy.stats.pairs}.`
          : null,
      comparison:
        greedyCount === null
          ? null
          : greedyCount < exactCount
            ? `The optimal pairing finds ${exactCount - greedyCount} more pair${exactCount - greedyCount === 1 ? "" : "s"} than sorting by gm and pairing neighbours.`
            : "Sorting by gm and pairing neighbours finds as many pairs here; the optimal pairing may still balance them better.",
    },
    pairs: pairRows,
    pairsHidden: Math.max(0, (exact?.pairs.length ?? grouping?.groups.length ?? 0) - MAX_PAIR_ROWS),
    groups: groupRows,
    leftovers,
    leftoversHidden: Math.max(0, allLeftovers.length - MAX_LEFTOVER_ROWS),
    leftoverTally: [...tally.entries()].map(([word, count]) => ({ word, count })),
    reserve: answer.chosenTubeIds.length > 0 ? { tubeIds: answer.chosenTubeIds.join(","), tubeCount: answer.chosenTubeIds.length, labels: labelsChosen.join(", ") } : null,
    chart: buildHistogram(answer),
  };
}

export interface ReservedView {
  ok: boolean;
  message: string;
  rows: Array<{ id: number; label: string; type: string; state: string; href: string }>;
}

export function reservedView(rows: Array<{ id: number; label: string; type: string; state: string }>): ReservedView {
  return {
    ok: true,
    message: `Reserved ${rows.length} tube${rows.length === 1 ? "" : "s"}; each change is in the tube's history.`,
    rows: rows.map((row) => ({ ...row, href: `/tubes/${row.id}` })),
  };
}
