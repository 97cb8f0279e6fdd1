/**
 * Geometry for the small per-tube chart: percent of reference per section over sessions, with
 * the wear threshold drawn. Scales and ticks come from d3-scale; the template only draws.
 */
import { scaleLinear, scalePoint } from "d3-scale";

interface HistoryEntry {
  session: { id: number; date: string };
  evaluation: { sections: Array<{ section: number; percentOfReference: number | null }> };
}

export interface TubeChart {
  width: number;
  height: number;
  plot: { left: number; right: number; top: number; bottom: number };
  yTicks: Array<{ y: number; label: string }>;
  xTicks: Array<{ x: number; label: string }>;
  wearY: number;
  wearLabel: string;
  series: Array<{ section: number; path: string; points: Array<{ x: number; y: number; label: string }> }>;
  empty: boolean;
}

export function buildTubeChart(history: HistoryEntry[], sectionCount: number, thresholds: { wornBelowPercent: number }): TubeChart {
  const width = 560;
  const height = 220;
  const plot = { left: 44, right: width - 12, top: 12, bottom: height - 30 };
  const wear = thresholds.wornBelowPercent;
  const values = history.flatMap((h) => h.evaluation.sections.map((s) => s.percentOfReference)).filter((v): v is number => v !== null);
  const top = Math.max(120, ...values.map((v) => Math.ceil(v / 10) * 10));
  const y = scaleLinear().domain([0, top]).range([plot.bottom, plot.top]).nice();
  const keys = history.map((h) => `${h.session.date} #${h.session.id}`);
  const x = scalePoint<string>().domain(keys).range([plot.left + 20, plot.right - 20]).padding(0.3);
  const series = Array.from({ length: sectionCount }, (_, i) => i + 1).map((section) => {
    const points = history.flatMap((h, index) => {
      const value = h.evaluation.sections.find((s) => s.section === section)?.percentOfReference;
      return value === null || value === undefined ? [] : [{ x: x(keys[index]) ?? plot.left, y: y(value), label: `${h.session.date}: ${value.toFixed(0)} %` }];
    });
    const path = points.map((p, i) => `${i ? "L" : "M"}${p.x.toFixed(1)},${p.y.toFixed(1)}`).join(" ");
    return { section, path, points };
  });
  return {
    width, height, plot,
    yTicks: y.ticks(5).map((t) => ({ y: y(t), label: `${t} %` })),
    xTicks: history.map((h, index) => ({ x: x(keys[index]) ?? plot.left, label: h.session.date })),
    wearY: y(wear),
    wearLabel: `wear threshold ${wear} %`,
    series,
    empty: values.length === 0,
  };
}
