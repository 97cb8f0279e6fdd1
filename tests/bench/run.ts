/** `npm run bench`: every benchmark in turn, one line per figure. Timings are measured here, never asserted in tests. */
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";

const here = path.dirname(fileURLToPath(import.meta.url));
const benches: Array<[file: string, exportName: string]> = [
  ["stock-list.ts", "runStockListBench"],
  ["import.ts", "runImportBench"],
  ["substitution.ts", "runSubstitutionBench"],
  ["bistable.ts", "runBistableBench"],
  ["pairing.ts", "runPairingBench"],
  ["pairing-demo.ts", "runPairingDemoBench"],
  ["builds.ts", "runBuildsBench"],
];

console.log(`Tubeledger benchmarks — node ${process.version}, ${new Date().toISOString().slice(0, 10)}`);
for (const [file, exportName] of benches) {
  const full = path.join(here, file);
  if (!fs.existsSync(full)) continue;
  const module = (await import(pathToFileURL(full).href)) as Record<string, () => Promise<string[]>>;
  for (const line of await module[exportName]()) console.log(line);
}
console.log(`peak RSS of the whole bench process: ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MB`);
