/** Display data for the shelf overview: each type's verdict counts as a stacked bar. */

type TypeSummary = { type: string; total: number; counts: Record<string, number> };

/** Segments of a stacked bar: x offset and width in percent of the type's active tubes. */
export function stackedShares(counts: Record<string, number>, total: number) {
  let x = 0;
  return (["good", "worn", "failed", "not-comparable"] as const).map((verdict) => {
    const width = total ? ((counts[verdict] ?? 0) / total) * 100 : 0;
    const segment = { verdict, x: x.toFixed(2), width: width.toFixed(2) };
    x += width;
    return segment;
  });
}

export function shelfCards(summary: TypeSummary[]) {
  return summary.map((entry) => ({ ...entry, shares: stackedShares(entry.counts, entry.total) }));
}
