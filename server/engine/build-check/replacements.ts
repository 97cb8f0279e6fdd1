/**
 * Allocated tubes that no longer read good (or were retired), and a proposed replacement for
 * each: a good free tube of the same type, closest in balance value to its pair partner.
 */
import type { StockPool } from "./stock-pool.ts";
import type { AllocatedTube, AllocationSlot, BuildLinePlan, FlaggedTube, Replacement, SectionBalanceReading, StockTube } from "./types.ts";

const FLAGGED_VERDICTS = new Set(["worn", "failed"]);
const ALLOCATED_STATES = new Set(["reserved", "installed"]);

/**
 * Why an allocated tube needs attention — worn, failed, retired, or moved out of its allocated
 * state by hand — or null when it does not. Never throws.
 * @example flagReason({ ...tube, verdict: "worn", state: "reserved" }) // → "now reads worn"
 */
export function flagReason(tube: AllocatedTube): string | null {
  if (tube.state === "retired") return "retired since it was allocated";
  if (FLAGGED_VERDICTS.has(tube.verdict)) return `now reads ${tube.verdict}`;
  if (!ALLOCATED_STATES.has(tube.state)) return `its state was changed to ${tube.state} by hand`;
  return null;
}

/**
 * |a − b| / mean(a, b), the pairing engine's measure; NaN when both are 0 (callers pass positive readings).
 * @example relativeDifferenceOf(2180, 2140) // → 0.01852 (40 / 2160)
 */
export function relativeDifferenceOf(a: number, b: number): number {
  return Math.abs(a - b) / ((a + b) / 2);
}

function readingOf(tube: StockTube, section: number): SectionBalanceReading | undefined {
  return tube.sections.find((reading) => reading.section === section);
}

interface SlotTarget {
  slot: AllocationSlot;
  /** The partner's reading (another tube), or the replacement's own other section (same envelope), or nothing to match. */
  partner: { kind: "other-tube"; reading: SectionBalanceReading } | { kind: "own-section"; section: number } | { kind: "none" };
}

function targetsFor(flagged: AllocatedTube, lineAllocations: AllocatedTube[]): SlotTarget[] {
  return flagged.slots.map((slot) => {
    if (slot.side === "") return { slot, partner: { kind: "none" } };
    const otherSide = slot.side === "A" ? "B" : "A";
    for (const tube of lineAllocations) {
      const partnerSlot = tube.slots.find((candidate) => candidate.role === slot.role && candidate.number === slot.number && candidate.side === otherSide);
      if (!partnerSlot) continue;
      if (tube.id === flagged.id) return { slot, partner: { kind: "own-section", section: partnerSlot.section } };
      const reading = readingOf(tube, partnerSlot.section);
      return { slot, partner: reading && reading.balanceValue !== null ? { kind: "other-tube", reading } : { kind: "none" } };
    }
    return { slot, partner: { kind: "none" } };
  });
}

/** Every way to give each slot its own section of the candidate (slots on section 0 — whole tubes — stay on 0). */
function sectionMappings(slots: AllocationSlot[], sections: number[]): number[][] {
  const results: number[][] = [];
  const walk = (index: number, chosen: number[]) => {
    if (index === slots.length) {
      results.push([...chosen]);
      return;
    }
    if (slots[index].section === 0) return walk(index + 1, [...chosen, 0]);
    for (const section of sections) if (!chosen.includes(section)) walk(index + 1, [...chosen, section]);
  };
  walk(0, []);
  return results;
}

interface Scored {
  cost: number;
  worst: number;
  parts: string[];
  slots: AllocationSlot[];
}

/**
 * The candidate's best section mapping against the targets: Σ relative differences (Infinity when
 * a target cannot be compared on the same basis), the worst single difference, and the slots the
 * candidate would take.
 */
function scoreCandidate(candidate: StockTube, targets: SlotTarget[]): Scored {
  const sections = candidate.sections.map((reading) => reading.section);
  let best: Scored = { cost: Number.POSITIVE_INFINITY, worst: Number.POSITIVE_INFINITY, parts: [], slots: targets.map((target) => target.slot) };
  for (const mapping of sectionMappings(targets.map((target) => target.slot), sections)) {
    const sectionFor = (oldSection: number) => mapping[targets.findIndex((target) => target.slot.section === oldSection)] ?? oldSection;
    let cost = 0;
    let worst = 0;
    const parts: string[] = [];
    for (const [index, { slot, partner }] of targets.entries()) {
      if (partner.kind === "none") continue;
      const mine = readingOf(candidate, mapping[index]);
      const other = partner.kind === "other-tube" ? partner.reading : readingOf(candidate, sectionFor(partner.section));
      if (!mine || mine.balanceValue === null || !other || other.balanceValue === null || other.balanceBasis !== mine.balanceBasis) {
        cost = Number.POSITIVE_INFINITY;
        break;
      }
      const difference = relativeDifferenceOf(mine.balanceValue, other.balanceValue);
      // A one-envelope pair is counted once, from its side A.
      if (partner.kind === "own-section" && slot.side === "B") continue;
      cost += difference;
      worst = Math.max(worst, difference);
      parts.push(
        partner.kind === "other-tube"
          ? `section ${mapping[index]} ${Math.round(mine.balanceValue)} against partner ${Math.round(other.balanceValue)} (${(100 * difference).toFixed(1)} %)`
          : `its sections ${Math.round(mine.balanceValue)} and ${Math.round(other.balanceValue)} (${(100 * difference).toFixed(1)} %)`,
      );
    }
    if (cost < best.cost) best = { cost, worst, parts, slots: targets.map((target, index) => ({ ...target.slot, section: mapping[index] })) };
  }
  return best;
}

function proposeFor(flagged: AllocatedTube, lineAllocations: AllocatedTube[], pool: StockPool, ruleFraction: number): Replacement | null {
  const candidates = pool.free(flagged.designation);
  if (candidates.length === 0) return null;
  const targets = targetsFor(flagged, lineAllocations);
  const matched = targets.some((target) => target.partner.kind !== "none");
  const strongestFirst = [...candidates].sort((left, right) => (right.percentOfReference ?? 0) - (left.percentOfReference ?? 0));
  const rulePercent = `${Number((100 * ruleFraction).toFixed(2))} %`;
  if (!matched) {
    const strongest = strongestFirst[0];
    const note = `the strongest good ${flagged.designation} free${strongest.percentOfReference !== null ? ` (${Math.round(strongest.percentOfReference)} % of reference)` : ""}`;
    return { tubeId: strongest.id, label: strongest.label, location: strongest.location, note, withinRule: true, slots: flagged.slots };
  }
  let best: (Scored & { tube: StockTube }) | null = null;
  for (const tube of strongestFirst) {
    const scored = scoreCandidate(tube, targets);
    if (best === null || scored.cost < best.cost) best = { tube, ...scored };
  }
  if (best === null || !Number.isFinite(best.cost)) {
    // Nothing comparable on the same basis: offer the strongest tube and say why.
    const strongest = strongestFirst[0];
    return { tubeId: strongest.id, label: strongest.label, location: strongest.location, note: "no free tube has a reading comparable with its partner's; the strongest good one is offered — test the pair together", withinRule: false, slots: flagged.slots };
  }
  const withinRule = best.worst <= ruleFraction;
  const note = `${best.parts.join("; ")} — ${withinRule ? `within the ${rulePercent} rule` : `outside the ${rulePercent} rule; the closest free`}`;
  return { tubeId: best.tube.id, label: best.tube.label, location: best.tube.location, note, withinRule, slots: best.slots };
}

/**
 * Flags every allocated tube that is worn, failed, retired or moved out of its allocated state,
 * and proposes a replacement for each from the pool (taking it, so two flags never get one tube).
 * For a bistable slot the replacement is the free tube of the same type with a section closest to
 * the partner's newest balance value (same basis only; the replacement's slots name the section
 * chosen); when both sides were the tube's own sections, the free tube whose two sections balance
 * best. Other slots get the strongest good tube (highest percent of reference).
 */
export function flagAndReplace(allocations: AllocatedTube[], lines: BuildLinePlan[], pool: StockPool, ruleFraction: number): FlaggedTube[] {
  const labels = new Map(lines.map((line) => [line.key, line.label]));
  const flagged: FlaggedTube[] = [];
  for (const tube of allocations) {
    const reason = flagReason(tube);
    if (reason === null) continue;
    const lineAllocations = allocations.filter((other) => other.lineKey === tube.lineKey);
    const replacement = proposeFor(tube, lineAllocations, pool, ruleFraction);
    if (replacement) pool.take(replacement.tubeId, `replacement:${tube.allocationId}`);
    flagged.push({
      allocationId: tube.allocationId,
      tubeId: tube.id,
      label: tube.label,
      designation: tube.designation,
      lineKey: tube.lineKey,
      lineLabel: labels.get(tube.lineKey) ?? "a removed line",
      verdict: tube.verdict,
      state: tube.state,
      slots: tube.slots,
      reason,
      replacement,
    });
  }
  return flagged;
}
