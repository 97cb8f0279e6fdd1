/**
 * The free stock while a check walks the lines: which tubes and sections are still open, the
 * balanced pairs of each type (found once per type by the pairing engine), and who took what.
 */
import { greedySortAndPair, pairSections, type PairingCandidate, type PairingResult } from "../pairing/index.ts";
import type { StockTube } from "./types.ts";

/**
 * Above this many sections of one type and basis, pairs come from the pairing engine's
 * sort-and-pair instead of its exact matching: with one value per section (all this rule uses)
 * sort-and-pair already finds the most pairs, and the exact solver's cost grows with the square
 * of a dense window (seconds at a few thousand sections).
 */
/** Labels in natural order (DEMO-2 before DEMO-10); one collator, not a locale lookup per comparison. */
export const LABEL_ORDER = new Intl.Collator("en", { numeric: true });

export const EXACT_PAIRING_MAX_SECTIONS = 600;

/** Sections per tube are few (at most 4 in the library); this packs tube and section into one number. */
const SECTION_KEY_FACTOR = 64;

export interface PoolSection {
  tubeId: number;
  section: number;
  value: number;
}

export interface PoolPair {
  a: PoolSection;
  b: PoolSection;
  /** |a − b| / mean(a, b), a fraction. */
  imbalance: number;
  sameEnvelope: boolean;
  basis: string;
}

interface TypePairs {
  sameEnvelope: PoolPair[];
  acrossEnvelopes: PoolPair[];
  byTube: Map<number, PoolPair[]>;
  sameCursor: number;
  acrossCursor: number;
}

export class StockPool {
  private readonly byDesignation = new Map<string, StockTube[]>();
  private readonly tubeById = new Map<number, StockTube>();
  /** Tube → key of the line (or "replacement") that took it. */
  private readonly owner = new Map<number, string>();
  /** tubeId × SECTION_KEY_FACTOR + section of every section a line has used. */
  private readonly usedSections = new Set<number>();
  private readonly freeCounts = new Map<string, number>();
  private readonly singlesOrder = new Map<string, StockTube[]>();
  private readonly pairsByDesignation = new Map<string, TypePairs>();

  constructor(
    tubes: StockTube[],
    private readonly ruleFraction: number,
  ) {
    for (const tube of tubes) {
      if (tube.verdict !== "good" || tube.state !== "stock" || this.tubeById.has(tube.id)) continue;
      this.tubeById.set(tube.id, tube);
      const list = this.byDesignation.get(tube.designation);
      if (list) list.push(tube);
      else this.byDesignation.set(tube.designation, [tube]);
    }
    for (const [designation, list] of this.byDesignation) {
      list.sort((left, right) => LABEL_ORDER.compare(left.label, right.label));
      this.freeCounts.set(designation, list.length);
    }
  }

  tube(id: number): StockTube | undefined {
    return this.tubeById.get(id);
  }

  /** Tubes of a type nobody has taken. */
  free(designation: string): StockTube[] {
    return (this.byDesignation.get(designation) ?? []).filter((tube) => !this.owner.has(tube.id));
  }

  freeCount(designation: string): number {
    return this.freeCounts.get(designation) ?? 0;
  }

  take(tubeId: number, ownerKey: string): void {
    const tube = this.tubeById.get(tubeId);
    if (!tube || this.owner.has(tubeId)) return;
    this.owner.set(tubeId, ownerKey);
    this.freeCounts.set(tube.designation, (this.freeCounts.get(tube.designation) ?? 1) - 1);
  }

  ownerOf(tubeId: number): string | undefined {
    return this.owner.get(tubeId);
  }

  useSection(tubeId: number, section: number): void {
    this.usedSections.add(tubeId * SECTION_KEY_FACTOR + section);
  }

  /** A pair is open to a line when neither section is used and each tube is free or already the line's. */
  pairOpenTo(pair: PoolPair, ownerKey: string): boolean {
    for (const end of [pair.a, pair.b]) {
      if (this.usedSections.has(end.tubeId * SECTION_KEY_FACTOR + end.section)) return false;
      const holder = this.owner.get(end.tubeId);
      if (holder !== undefined && holder !== ownerKey) return false;
    }
    return true;
  }

  newTubesFor(pair: PoolPair, ownerKey: string): number {
    const tubes = pair.sameEnvelope ? [pair.a.tubeId] : [pair.a.tubeId, pair.b.tubeId];
    return tubes.filter((id) => this.owner.get(id) !== ownerKey).length;
  }

  /** How many balanced pairs of a type a line could still take. */
  openPairCount(designation: string, ownerKey: string): number {
    const pairs = this.pairsOf(designation);
    let count = 0;
    for (const pair of pairs.sameEnvelope) if (this.pairOpenTo(pair, ownerKey)) count++;
    for (const pair of pairs.acrossEnvelopes) if (this.pairOpenTo(pair, ownerKey)) count++;
    return count;
  }

  /**
   * The next pair for a line: first one on tubes it already holds (no new tube), then the
   * best-balanced pair needing one new tube (same envelope, or one end already held), then the
   * best-balanced pair across two new tubes. Fewer envelopes per stage, fewer heaters to feed.
   */
  nextPair(designation: string, ownerKey: string, heldTubes: Iterable<number>): PoolPair | null {
    const pairs = this.pairsOf(designation);
    let bestHeldOne: PoolPair | null = null;
    for (const tubeId of heldTubes) {
      for (const pair of pairs.byTube.get(tubeId) ?? []) {
        if (!this.pairOpenTo(pair, ownerKey)) continue;
        const fresh = this.newTubesFor(pair, ownerKey);
        if (fresh === 0) return pair;
        if (fresh === 1 && (bestHeldOne === null || pair.imbalance < bestHeldOne.imbalance)) bestHeldOne = pair;
      }
    }
    while (pairs.sameCursor < pairs.sameEnvelope.length && !this.pairOpenTo(pairs.sameEnvelope[pairs.sameCursor], ownerKey)) pairs.sameCursor++;
    const nextSame = pairs.sameEnvelope[pairs.sameCursor] ?? null;
    const one = [bestHeldOne, nextSame].filter((pair): pair is PoolPair => pair !== null).sort((left, right) => left.imbalance - right.imbalance)[0];
    if (one !== undefined) return one;
    // A pair closed to one line stays closed to every later line (sections used, tubes taken),
    // so the cursors only move forward.
    while (pairs.acrossCursor < pairs.acrossEnvelopes.length && !this.pairOpenTo(pairs.acrossEnvelopes[pairs.acrossCursor], ownerKey)) pairs.acrossCursor++;
    return pairs.acrossEnvelopes[pairs.acrossCursor] ?? null;
  }

  /**
   * Free tubes ranked for single stages: unpaired first (best percent first), then those whose
   * best pair is worst balanced, so balanced pairs stay for bistable lines. The order is worked
   * out once per type; taken tubes are skipped as the walk goes.
   */
  *rankedForSingles(designation: string): Generator<StockTube> {
    let order = this.singlesOrder.get(designation);
    if (order === undefined) {
      const pairs = this.pairsOf(designation);
      const bestImbalance = new Map<number, number>();
      for (const [tubeId, list] of pairs.byTube) {
        let best = Number.POSITIVE_INFINITY;
        for (const pair of list) best = Math.min(best, pair.imbalance);
        bestImbalance.set(tubeId, best);
      }
      const best = (tube: StockTube) => bestImbalance.get(tube.id) ?? Number.POSITIVE_INFINITY;
      order = [...(this.byDesignation.get(designation) ?? [])].sort(
        (left, right) => best(right) - best(left) || (right.percentOfReference ?? 0) - (left.percentOfReference ?? 0) || LABEL_ORDER.compare(left.label, right.label),
      );
      this.singlesOrder.set(designation, order);
    }
    for (const tube of order) if (!this.owner.has(tube.id)) yield tube;
  }

  private pairsOf(designation: string): TypePairs {
    const cached = this.pairsByDesignation.get(designation);
    if (cached) return cached;
    const byBasis = new Map<string, PairingCandidate[]>();
    for (const tube of this.free(designation)) {
      for (const reading of tube.sections) {
        if (reading.balanceValue === null || !(reading.balanceValue > 0)) continue;
        const list = byBasis.get(reading.balanceBasis) ?? [];
        list.push({ id: `${tube.id}:${reading.section}`, tubeId: String(tube.id), section: reading.section, values: [reading.balanceValue] });
        byBasis.set(reading.balanceBasis, list);
      }
    }
    const all: PoolPair[] = [];
    for (const [basis, candidates] of byBasis) {
      const rule = { maxRelativeDifference: [this.ruleFraction] };
      const options = { allowSameEnvelope: true, allowAcrossEnvelopes: true };
      const result: PairingResult = candidates.length <= EXACT_PAIRING_MAX_SECTIONS ? pairSections(candidates, rule, options) : greedySortAndPair(candidates, rule, options);
      for (const pair of result.pairs) {
        all.push({
          a: { tubeId: Number(pair.a.tubeId), section: pair.a.section, value: pair.a.values[0] },
          b: { tubeId: Number(pair.b.tubeId), section: pair.b.section, value: pair.b.values[0] },
          imbalance: pair.imbalance,
          sameEnvelope: pair.sameEnvelope,
          basis,
        });
      }
    }
    const byImbalance = (left: PoolPair, right: PoolPair) => left.imbalance - right.imbalance || left.a.tubeId - right.a.tubeId || left.a.section - right.a.section;
    const byTube = new Map<number, PoolPair[]>();
    for (const pair of all) {
      for (const tubeId of new Set([pair.a.tubeId, pair.b.tubeId])) {
        const list = byTube.get(tubeId) ?? [];
        list.push(pair);
        byTube.set(tubeId, list);
      }
    }
    const entry: TypePairs = {
      sameEnvelope: all.filter((pair) => pair.sameEnvelope).sort(byImbalance),
      acrossEnvelopes: all.filter((pair) => !pair.sameEnvelope).sort(byImbalance),
      byTube,
      sameCursor: 0,
      acrossCursor: 0,
    };
    this.pairsByDesignation.set(designation, entry);
    return entry;
  }
}
