/**
 * Seeded random instances for the pairing tests and benchmark. Every stock here is invented;
 * only the 12AU7 reference point is published (see below).
 */
import type { PairingCandidate } from "../../../server/engine/pairing/index.ts";

/** mulberry32: a small, well-known 32-bit seeded generator; uniform in [0, 1). */
export function createSeededRandom(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Standard normal deviate by the Box–Muller transform. */
export function normalDeviate(random: () => number): number {
  const u = 1 - random();
  const v = random();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
}

/** RCA RC-30 receiving tube manual, 12AU7 class A1 at 250 V plate, −8.5 V grid: 10.5 mA, 2200 µmho. */
export const TWELVE_AU7_REFERENCE = { transconductanceMicroSiemens: 2200, plateMilliamps: 10.5 };

/**
 * An invented used stock of dual triodes: each tube has a wear factor shared by its two
 * sections (clamped normal, mean 0.9, spread 0.12), and each section scatters around it
 * (gm ±5 %, Ia ±7 %, log-normal). Values: [gm µS, Ia mA].
 */
export function inventDualTriodeStock(tubeCount: number, seed: number): PairingCandidate[] {
  const random = createSeededRandom(seed);
  const candidates: PairingCandidate[] = [];
  for (let tube = 0; tube < tubeCount; tube++) {
    const wear = Math.min(1.2, Math.max(0.45, 0.9 + 0.12 * normalDeviate(random)));
    for (let section = 1; section <= 2; section++) {
      const gm = TWELVE_AU7_REFERENCE.transconductanceMicroSiemens * wear * Math.exp(0.05 * normalDeviate(random));
      const ia = TWELVE_AU7_REFERENCE.plateMilliamps * Math.pow(wear, 0.8) * Math.exp(0.07 * normalDeviate(random));
      candidates.push({
        id: `T${tube + 1}.${section}`,
        tubeId: `T${tube + 1}`,
        section,
        values: [Math.round(gm), Math.round(ia * 100) / 100],
      });
    }
  }
  return candidates;
}

/**
 * Small random instance: `sectionCount` sections in tubes of one or two sections, readings
 * drawn from a narrow band so that a 3–6 % rule leaves a graph with some structure.
 */
export function inventSmallInstance(sectionCount: number, valueCount: number, random: () => number): PairingCandidate[] {
  const candidates: PairingCandidate[] = [];
  let tube = 0;
  while (candidates.length < sectionCount) {
    tube++;
    const sections = candidates.length + 2 <= sectionCount && random() < 0.5 ? 2 : 1;
    for (let section = 1; section <= sections; section++) {
      const values: number[] = [];
      for (let v = 0; v < valueCount; v++) values.push(Math.round(1000 * (1 + 0.12 * random())) / 10);
      candidates.push({ id: `S${candidates.length + 1}`, tubeId: `T${tube}`, section, values });
    }
  }
  return candidates;
}
