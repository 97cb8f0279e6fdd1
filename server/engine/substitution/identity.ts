/** Same tube under another name, variants of one tube, and how many good ones are on the shelf. */
import type { TubeTypeSpec } from "../tube-types/index.ts";
import type { StockCount, SubstituteRelation } from "./types.ts";
import { normaliseDesignation } from "./format.ts";

/** A variantOf chain longer than this is treated as a loop in the data and the walk stops. */
export const MAX_VARIANT_CHAIN_STEPS = 64;

/**
 * Every normalised name a type answers to: its designation and its aliases.
 *
 * Example: 12AU7 with aliases ["ECC82"] → Set { "12AU7", "ECC82" }.
 */
export function namesOf(spec: TubeTypeSpec): Set<string> {
  return new Set([spec.designation, ...spec.aliases].map(normaliseDesignation));
}

/**
 * Index of types by normalised designation and alias; a designation wins over a clashing alias.
 *
 * Example: `buildNameIndex([spec12AU7]).get("ECC82")` → spec12AU7.
 */
export function buildNameIndex(types: readonly TubeTypeSpec[]): Map<string, TubeTypeSpec> {
  const index = new Map<string, TubeTypeSpec>();
  for (const spec of types) index.set(normaliseDesignation(spec.designation), spec);
  for (const spec of types) {
    for (const alias of spec.aliases) {
      const key = normaliseDesignation(alias);
      if (!index.has(key)) index.set(key, spec);
    }
  }
  return index;
}

interface VariantChain {
  /** The type itself, then each `variantOf` ancestor found in the index. */
  members: TubeTypeSpec[];
  /** False when the walk hit `MAX_VARIANT_CHAIN_STEPS` (a loop in the data). */
  complete: boolean;
}

function variantChain(spec: TubeTypeSpec, index: ReadonlyMap<string, TubeTypeSpec>): VariantChain {
  const members: TubeTypeSpec[] = [spec];
  const seen = new Set<string>([normaliseDesignation(spec.designation)]);
  let current = spec;
  for (let step = 0; step < MAX_VARIANT_CHAIN_STEPS; step += 1) {
    if (current.variantOf === undefined) return { members, complete: true };
    const parentKey = normaliseDesignation(current.variantOf);
    const parent = index.get(parentKey);
    if (parent === undefined || seen.has(normaliseDesignation(parent.designation))) return { members, complete: parent === undefined };
    seen.add(normaliseDesignation(parent.designation));
    members.push(parent);
    current = parent;
  }
  return { members, complete: false };
}

export interface RelationResult {
  relation: SubstituteRelation;
  description: string;
  warning?: string;
}

/**
 * "same-type" when the two share a designation or alias; "variant" when their variantOf chains
 * meet (one descends from the other, or both from a common type); else "substitute".
 *
 * Example: 5814A (variantOf 12AU7) against a 12AU7 socket → `{ relation: "variant", description: "variant: 5814A → 12AU7" }`.
 */
export function relationTo(socketType: TubeTypeSpec, candidate: TubeTypeSpec, index: ReadonlyMap<string, TubeTypeSpec>): RelationResult {
  const socketNames = namesOf(socketType);
  const shared = [...namesOf(candidate)].filter((name) => socketNames.has(name));
  if (shared.length > 0) {
    const sameDesignation = normaliseDesignation(candidate.designation) === normaliseDesignation(socketType.designation);
    return { relation: "same-type", description: sameDesignation ? `same type as the socket (${socketType.designation})` : `same type as ${socketType.designation} under another name (${shared.join(", ")})` };
  }
  const socketChain = variantChain(socketType, index);
  const candidateChain = variantChain(candidate, index);
  const warning =
    !socketChain.complete || !candidateChain.complete ? `the variantOf chain of ${!candidateChain.complete ? candidate.designation : socketType.designation} exceeds ${MAX_VARIANT_CHAIN_STEPS} steps or loops; variant check stopped there` : undefined;
  const socketMembers = socketChain.members.map((member) => normaliseDesignation(member.designation));
  for (let position = 0; position < candidateChain.members.length; position += 1) {
    const member = candidateChain.members[position];
    const meet = socketMembers.indexOf(normaliseDesignation(member.designation));
    if (meet === -1) continue;
    const up = candidateChain.members.slice(0, position + 1).map((entry) => entry.designation);
    const down = socketChain.members.slice(0, meet).map((entry) => entry.designation).reverse();
    return { relation: "variant", description: `variant: ${[...up, ...down].join(" → ")}`, ...(warning ? { warning } : {}) };
  }
  return { relation: "substitute", description: `substitute type, not a variant of ${socketType.designation}`, ...(warning ? { warning } : {}) };
}

/**
 * Good tubes on the shelf by normalised name (stock may be labelled with an alias).
 *
 * Example: `indexStock([{ designation: "ecc82", good: 3 }, { designation: "12AU7", good: 2 }]).get("ECC82")` → 3.
 */
export function indexStock(stock: readonly StockCount[]): Map<string, number> {
  const index = new Map<string, number>();
  for (const entry of stock) {
    const key = normaliseDesignation(entry.designation);
    index.set(key, (index.get(key) ?? 0) + Math.max(0, entry.good));
  }
  return index;
}

/**
 * Good tubes of `spec` in stock, counting every name it answers to once.
 *
 * Example: 12AU7 (alias ECC82) with stock { ECC82: 3, 12AU7: 2 } → 5.
 */
export function countGoodInStock(spec: TubeTypeSpec, stockIndex: ReadonlyMap<string, number>): number {
  let total = 0;
  for (const name of namesOf(spec)) total += stockIndex.get(name) ?? 0;
  return total;
}
