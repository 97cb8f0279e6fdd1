/**
 * The invented demo stock, generated from a seed so it is the same on every machine.
 * Reference values are the library's; the spread around them is invented.
 */
interface DemoTube { label: string; type: string; maker: string; dateCode: string; location: string; state: string; notes: string }
interface DemoReading {
  label: string; section: number; gmMicroSiemens: number | null; plateMilliamps: number | null;
  emissionValue: number | null; emissionPassMark: number | null; emissionFullScale: number | null;
  gridMicroamps: number | null; shorts: string; heaterOpen: boolean; noise: string;
}
interface DemoSession {
  date: string; instrument: string; notes: string;
  conditions: { heaterVolts: number | null; plateVolts: number | null; screenVolts: number | null; gridVolts: number | null };
  readings: DemoReading[];
}

/** mulberry32: a small seeded generator, so the demo is reproducible. */
function seededRandom(seed: number) {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const makers = ["Northfield", "Kestrel Valve", "Arden", "Halloway", "Brightwater", "unbranded"];
const lots: Array<{ type: string; count: number; prefix: string }> = [
  { type: "12AU7", count: 120, prefix: "AU" },
  { type: "12AX7", count: 80, prefix: "AX" },
  { type: "12AT7", count: 40, prefix: "AT" },
  { type: "5963", count: 24, prefix: "CG" },
  { type: "6AU6", count: 40, prefix: "PU" },
  { type: "6SN7GT", count: 24, prefix: "SN" },
  { type: "EL84", count: 16, prefix: "PL" },
  { type: "5Y3GT", count: 12, prefix: "RY" },
];

export function buildDemoStock(seed: number) {
  const random = seededRandom(seed);
  const normal = () => Math.sqrt(-2 * Math.log(1 - random())) * Math.cos(2 * Math.PI * random());
  const pick = <T,>(items: T[]) => items[Math.floor(random() * items.length)];
  const tubes: DemoTube[] = [];
  for (const lot of lots) {
    for (let i = 1; i <= lot.count; i++) {
      const label = `DEMO-${lot.prefix}${String(i).padStart(3, "0")}`;
      const retired = random() < 0.03;
      tubes.push({
        label, type: lot.type, maker: pick(makers), dateCode: `${pick(["K", "L", "M", "N"])}${1 + Math.floor(random() * 9)}`,
        location: `Drawer ${pick(["A", "B", "C"])}${1 + Math.floor(random() * 4)}`, state: retired ? "retired" : random() < 0.08 ? "installed" : "stock",
        notes: retired ? "demo: cracked base" : "",
      });
    }
  }
  const byType = (type: string) => tubes.filter((t) => t.type === type);
  const gmReading = (label: string, section: number, reference: number, referenceMilliamps: number): DemoReading => {
    const fraction = Math.max(0.2, 0.93 + 0.13 * normal());
    const shorted = random() < 0.015;
    const gassy = random() < 0.02;
    return {
      label, section, gmMicroSiemens: Math.round(reference * fraction), // Plate current follows gm only loosely, as on a real tester, so matching on both values is a real choice.
      plateMilliamps: Math.round(referenceMilliamps * fraction * (1 + 0.04 * normal()) * 100) / 100,
      emissionValue: null, emissionPassMark: null, emissionFullScale: null,
      gridMicroamps: gassy ? 2.5 : Math.round(random() * 30) / 100, shorts: shorted ? "g1-k" : "", heaterOpen: false,
      noise: random() < 0.03 ? "microphonic when tapped" : "",
    };
  };
  const emissionReading = (label: string, section: number): DemoReading => ({
    label, section, gmMicroSiemens: null, plateMilliamps: null,
    emissionValue: Math.round(Math.min(100, Math.max(20, 72 + 14 * normal()))), emissionPassMark: 55, emissionFullScale: 100,
    gridMicroamps: null, shorts: "", heaterOpen: false, noise: "",
  });
  const sessions: DemoSession[] = [
    {
      date: "2026-09-14", instrument: "Bench tester A (demo)", notes: "12AU7 lot from the estate boxes",
      conditions: { heaterVolts: 12.6, plateVolts: 250, screenVolts: null, gridVolts: -8.5 },
      readings: byType("12AU7").flatMap((t) => [gmReading(t.label, 1, 2200, 10.5), gmReading(t.label, 2, 2200, 10.5)]),
    },
    {
      date: "2026-10-03", instrument: "Bench tester A (demo)", notes: "high-mu dual triodes",
      conditions: { heaterVolts: 12.6, plateVolts: 250, screenVolts: null, gridVolts: -2 },
      readings: [...byType("12AX7").flatMap((t) => [gmReading(t.label, 1, 1600, 1.2), gmReading(t.label, 2, 1600, 1.2)]),
        ...byType("12AT7").flatMap((t) => [gmReading(t.label, 1, 5500, 10), gmReading(t.label, 2, 5500, 10)])],
    },
    {
      date: "2026-11-20", instrument: "Bench tester B (demo)", notes: "low-voltage check; emission for types without a point here",
      conditions: { heaterVolts: 6.3, plateVolts: 100, screenVolts: 100, gridVolts: -1 },
      readings: [
        ...byType("6AU6").map((t) => gmReading(t.label, 1, 3900, 5)),
        // 12AU7 re-tested at 100 V / −1 V: no published point there, so these show "not comparable".
        ...byType("12AU7").slice(0, 20).flatMap((t) => [gmReading(t.label, 1, 2800, 9), gmReading(t.label, 2, 2800, 9)]),
        ...byType("6SN7GT").flatMap((t) => [emissionReading(t.label, 1), emissionReading(t.label, 2)]),
        ...byType("5963").flatMap((t) => [emissionReading(t.label, 1), emissionReading(t.label, 2)]),
        ...byType("5Y3GT").flatMap((t) => [emissionReading(t.label, 1), emissionReading(t.label, 2)]),
      ],
    },
  ];
  return { tubes, sessions };
}

/**
 * An invented build for the demo: a 24-stage shift register in 5963 bistable stages — more good
 * 5963 pairs than the demo stock holds, so its check shows a shortfall and offers the 12AU7 —
 * with lamp-driver pentodes and the rectifiers of its own supply. Every value here is invented.
 */
export const demoBuild = {
  name: "Demo: 24-stage shift register",
  notes: "Invented demo plan: one bistable stage per bit, 6AU6 lamp drivers, two 5Y3GT for its B+.",
  heaterSupplies: [
    { name: "6.3 V heater bus", volts: 6.3, amps: 12 },
    { name: "5 V rectifier winding", volts: 5, amps: 6 },
  ],
  bPlus: { volts: 250, milliamps: 600 },
  negativeRail: { volts: -150, milliamps: 60 },
  lines: [
    { kind: "bistable" as const, type: "5963", count: 24, heaterSupply: 1, allowSubstitutes: true, plateLoadOhms: 27_000, couplingOhms: 220_000, gridReturnOhms: 220_000 },
    { kind: "single" as const, type: "6AU6", count: 8, heaterSupply: 1, plateVolts: 250, plateMilliamps: 10.6, screenMilliamps: 4.3 },
    { kind: "rectifier" as const, type: "5Y3GT", count: 2, heaterSupply: 2, sparesPercent: 50, sparesSource: "demo: one spare rectifier per two" },
  ],
};
