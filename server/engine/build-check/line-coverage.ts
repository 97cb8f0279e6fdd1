/**
 * One line against the stock: which of its stages are already allocated, which the free stock
 * fills (own type first, then accepted substitutes), what is short, and the line's share of the
 * budgets per type.
 */
import type { TubeTypeSpec } from "../tube-types/index.ts";
import { heaterDrawOnSupply } from "./heater-draw.ts";
import { amplifyingSections, bistableStageLoad, rectifierLoad, singleStageLoad } from "./stage-load.ts";
import { LABEL_ORDER, type StockPool } from "./stock-pool.ts";
import type { AllocatedTube, AllocationSlot, BuildLinePlan, BuildSupplies, FlaggedTube, LineCheck, LineShare, PlannedTube, SlotRole, StageLoad, StockTube } from "./types.ts";

/** Guards the spares rounding against 10 % of 30 coming out as 3.0000000000000004. */
const SPARES_ROUNDING_TOLERANCE = 1e-9;

/**
 * Spares for a line: the percentage of its count, rounded up (a part-spare is a whole one);
 * 0 for a non-positive count or percentage.
 * @example spareCountFor(32, 10) // → 4
 */
export function spareCountFor(count: number, percent: number): number {
  if (!(count > 0) || !(percent > 0)) return 0;
  return Math.ceil((count * percent) / 100 - SPARES_ROUNDING_TOLERANCE);
}

/**
 * Tubes needed to carry `stages` stages of a line with a type of `sectionsPerTube` usable
 * sections (a dual triode holds one bistable stage or two single stages); rectifier lines count
 * tubes as they are. 0 for no stages.
 * @example tubesForStages("bistable", 5, 2) // → 5
 */
export function tubesForStages(kind: BuildLinePlan["kind"], stages: number, sectionsPerTube: number): number {
  if (stages <= 0) return 0;
  if (kind === "rectifier" || sectionsPerTube <= 0) return stages;
  const sections = stages * (kind === "bistable" ? 2 : 1);
  return Math.ceil(sections / sectionsPerTube);
}

interface Fill {
  designation: string;
  tubeIds: Set<number>;
  sides: Set<string>;
  broken: boolean;
}

export interface LineContext {
  pool: StockPool;
  specs: Map<string, TubeTypeSpec>;
  supplies: BuildSupplies;
  allocations: AllocatedTube[];
  flaggedByAllocation: Map<number, FlaggedTube>;
  loadCache: Map<string, StageLoad>;
}

export interface LineCoverage {
  check: Omit<LineCheck, "substitutes" | "substitutesNote">;
  /** Shortfall in stages and spares, for the substitute options. */
  remainingNeed: number;
}

function slotKey(role: SlotRole, number: number): string {
  return `${role}:${number}`;
}

/** A line's stage figures for one type, cached by type and circuit values (the solver is the slow part). */
export function loadFor(line: BuildLinePlan, spec: TubeTypeSpec, context: Pick<LineContext, "supplies" | "loadCache">): StageLoad {
  const key = `${spec.designation}|${line.kind}|${JSON.stringify(line.resistors ?? line.operating ?? line.loadMilliamps ?? null)}`;
  const cached = context.loadCache.get(key);
  if (cached) return cached;
  let load: StageLoad;
  if (line.kind === "bistable" && line.resistors) load = bistableStageLoad(spec, line.resistors, context.supplies);
  else if (line.kind === "single" && line.operating) load = singleStageLoad(line.operating);
  else load = rectifierLoad(line.loadMilliamps ?? null);
  context.loadCache.set(key, load);
  return load;
}

/**
 * Covers one line from its allocations and the free stock, taking what it plans from the pool.
 * Problems (unknown type, heater that cannot run on the supply) are reported, never thrown.
 */
export function coverLine(line: BuildLinePlan, context: LineContext): LineCoverage {
  const { pool, specs, supplies } = context;
  const problems: string[] = [];
  const notes: string[] = [];
  const ownSpec = specs.get(line.designation);
  const spareCount = spareCountFor(line.count, line.spares.percent);
  const supply = supplies.heater[line.heaterSupplyIndex];
  if (supply === undefined) problems.push(`${line.label}: heater supply ${line.heaterSupplyIndex + 1} does not exist`);

  // ── What is already allocated ──
  const fills = new Map<string, Fill>();
  const lineAllocations = context.allocations.filter((tube) => tube.lineKey === line.key);
  for (const tube of lineAllocations) {
    const flagged = context.flaggedByAllocation.get(tube.allocationId);
    for (const slot of tube.slots) {
      const key = slotKey(slot.role, slot.number);
      const fill = fills.get(key) ?? { designation: tube.designation, tubeIds: new Set<number>(), sides: new Set<string>(), broken: false };
      fill.tubeIds.add(flagged?.replacement ? flagged.replacement.tubeId : tube.id);
      fill.sides.add(slot.side);
      if (flagged && flagged.replacement === null) fill.broken = true;
      fills.set(key, fill);
    }
  }
  const complete = (fill: Fill) => !fill.broken && (line.kind !== "bistable" || (fill.sides.has("A") && fill.sides.has("B")));
  let allocatedStages = 0;
  let brokenStages = 0;
  let surplus = 0;
  for (const [key, fill] of fills) {
    const [role, numberText] = key.split(":");
    const number = Number(numberText);
    const limit = role === "stage" ? line.count : spareCount;
    if (number > limit) surplus++;
    else if (role === "stage" && complete(fill)) allocatedStages++;
    else if (role === "stage") brokenStages++;
  }
  if (surplus > 0) notes.push(`${surplus} allocated ${surplus === 1 ? "stage is" : "stages are"} beyond this line's count; release and reserve again to tidy up`);

  const missing = (role: SlotRole, limit: number) => {
    const numbers: number[] = [];
    for (let number = 1; number <= limit; number++) if (!fills.has(slotKey(role, number))) numbers.push(number);
    return numbers;
  };
  const missingStages = missing("stage", line.count);
  const missingSpares = missing("spare", spareCount);

  const goodAvailable = pool.freeCount(line.designation) + new Set(lineAllocations.filter((tube) => tube.designation === line.designation && tube.verdict === "good").map((tube) => tube.id)).size;
  const pairsFound = line.kind === "bistable" && ownSpec ? pool.openPairCount(line.designation, line.key) : null;

  // ── Fill the gaps: own type first, then the accepted substitutes in order ──
  const planned = new Map<number, PlannedTube>();
  const plannedFill = new Map<string, { designation: string; tubeIds: Set<number> }>();
  const heldTubes = new Set<number>(lineAllocations.map((tube) => tube.id));
  const queue: Array<{ role: SlotRole; number: number }> = [
    ...missingStages.map((number) => ({ role: "stage" as const, number })),
    ...missingSpares.map((number) => ({ role: "spare" as const, number })),
  ];
  const designations = [line.designation, ...(line.allowSubstitutes ? line.acceptedSubstitutes.filter((name) => name !== line.designation) : [])];
  const place = (tube: StockTube, slot: AllocationSlot) => {
    const entry = planned.get(tube.id) ?? { tubeId: tube.id, label: tube.label, designation: tube.designation, location: tube.location, lineKey: line.key, slots: [] };
    entry.slots.push(slot);
    planned.set(tube.id, entry);
    const key = slotKey(slot.role, slot.number);
    const fill = plannedFill.get(key) ?? { designation: tube.designation, tubeIds: new Set<number>() };
    fill.tubeIds.add(tube.id);
    plannedFill.set(key, fill);
    pool.take(tube.id, line.key);
    heldTubes.add(tube.id);
    if (slot.section > 0) pool.useSection(tube.id, slot.section);
  };
  for (const designation of designations) {
    if (queue.length === 0) break;
    const spec = specs.get(designation);
    if (!spec) {
      problems.push(`${line.label}: ${designation} is not in the library`);
      continue;
    }
    if (supply !== undefined) {
      const heater = heaterDrawOnSupply(spec.heater, supply.volts);
      if (!heater.ok) {
        if (designation === line.designation) problems.push(`${line.label}: ${designation} ${heater.reason} ("${supply.name}")`);
        else notes.push(`accepted substitute ${designation} skipped: its ${heater.reason}`);
        continue;
      }
    }
    const usable = amplifyingSections(spec);
    if (line.kind !== "rectifier" && usable.length === 0) {
      problems.push(`${line.label}: ${designation} has no triode or pentode section to build a stage with`);
      continue;
    }
    if (line.kind === "bistable") {
      while (queue.length > 0) {
        const pair = pool.nextPair(designation, line.key, heldTubes);
        if (pair === null) break;
        const slot = queue.shift()!;
        const tubeA = pool.tube(pair.a.tubeId)!;
        const tubeB = pool.tube(pair.b.tubeId)!;
        place(tubeA, { role: slot.role, number: slot.number, side: "A", section: pair.a.section });
        place(tubeB, { role: slot.role, number: slot.number, side: "B", section: pair.b.section });
      }
    } else if (line.kind === "single") {
      for (const tube of pool.rankedForSingles(designation)) {
        if (queue.length === 0) break;
        for (const section of usable) {
          const slot = queue.shift();
          if (slot === undefined) break;
          place(tube, { role: slot.role, number: slot.number, side: "", section });
        }
      }
    } else {
      const ranked = pool.free(designation).sort((left, right) => (right.percentOfReference ?? 0) - (left.percentOfReference ?? 0) || LABEL_ORDER.compare(left.label, right.label));
      for (const tube of ranked) {
        const slot = queue.shift();
        if (slot === undefined) break;
        place(tube, { role: slot.role, number: slot.number, side: "", section: 0 });
      }
    }
  }

  // ── Counts and shares ──
  const plannedStages = [...plannedFill.keys()].filter((key) => key.startsWith("stage:")).length;
  const plannedSpares = plannedFill.size - plannedStages;
  const coveredSpares = [...fills].filter(([key, fill]) => key.startsWith("spare:") && Number(key.split(":")[1]) <= spareCount && complete(fill)).length + plannedSpares;
  const coveredStages = allocatedStages + plannedStages;
  const shortfallStages = Math.max(0, line.count - coveredStages);
  const shortfallSpares = Math.max(0, spareCount - coveredSpares);
  if (brokenStages > 0) notes.push(`${brokenStages} allocated ${brokenStages === 1 ? "stage has" : "stages have"} a tube that no longer reads good and no replacement in stock`);

  const shareMap = new Map<string, { stages: number; spares: number; powered: Set<number> }>();
  const count = (designation: string, role: string, tubeIds: Set<number>) => {
    const share = shareMap.get(designation) ?? { stages: 0, spares: 0, powered: new Set<number>() };
    if (role === "stage") {
      share.stages++;
      for (const id of tubeIds) share.powered.add(id);
    } else share.spares++;
    shareMap.set(designation, share);
  };
  for (const [key, fill] of fills) {
    const [role, numberText] = key.split(":");
    if (Number(numberText) <= (role === "stage" ? line.count : spareCount) && complete(fill)) count(fill.designation, role, fill.tubeIds);
  }
  for (const [key, fill] of plannedFill) count(fill.designation, key.split(":")[0], fill.tubeIds);

  const shares: LineShare[] = [];
  const shareFor = (designation: string, spec: TubeTypeSpec, stages: number, spares: number, poweredTubes: number, toBuy: boolean): LineShare => {
    const heater = supply === undefined ? null : heaterDrawOnSupply(spec.heater, supply.volts);
    return {
      designation,
      substitute: designation !== line.designation,
      toBuy,
      stages,
      spares,
      poweredTubes,
      heater: heater && heater.ok ? { mode: heater.mode, volts: heater.volts, amps: heater.amps } : null,
      load: loadFor(line, spec, context),
    };
  };
  for (const [designation, share] of shareMap) {
    const spec = specs.get(designation);
    if (spec) shares.push(shareFor(designation, spec, share.stages, share.spares, share.powered.size, false));
  }
  if (shortfallStages > 0 && ownSpec) {
    shares.push(shareFor(line.designation, ownSpec, shortfallStages, 0, tubesForStages(line.kind, shortfallStages, amplifyingSections(ownSpec).length), true));
  }
  shares.sort((left, right) => Number(left.toBuy) - Number(right.toBuy) || Number(left.substitute) - Number(right.substitute));
  for (const share of shares) for (const warning of share.load.warnings) notes.push(`${share.designation}: ${warning}`);

  return {
    check: {
      key: line.key,
      label: line.label,
      kind: line.kind,
      designation: line.designation,
      count: line.count,
      spareCount,
      spares: line.spares,
      goodAvailable,
      pairsFound,
      coveredStages,
      coveredSpares,
      shortfallStages,
      shortfallSpares,
      allocatedStages,
      stagesAwaitingReplacement: brokenStages,
      usesSubstitutes: shares.some((share) => share.substitute && share.stages + share.spares > 0),
      shares,
      planned: [...planned.values()],
      problems,
      notes: [...new Set(notes)],
    },
    remainingNeed: shortfallStages + shortfallSpares,
  };
}

/** Exposed for the substitute options: how many stages a type could fill for a line right now. */
export function coverableStages(line: BuildLinePlan, spec: TubeTypeSpec, pool: StockPool): number {
  if (line.kind === "bistable") return pool.openPairCount(spec.designation, line.key);
  if (line.kind === "single") return pool.freeCount(spec.designation) * amplifyingSections(spec).length;
  return pool.freeCount(spec.designation);
}

