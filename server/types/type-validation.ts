/**
 * Checks a user-added tube type exactly as the reference library is checked: the zod schema
 * (tube-type-schema.ts), the names already known, and the library consistency rules
 * (load-library.ts `checkLibraryConsistency`) run over the known types plus the new one.
 * Errors are keyed by the spec's field paths ("pins.3.pin", "heater", "sections.0.typical").
 */
import type { TubeTypeSpec } from "../engine/tube-types/index.ts";
import { checkLibraryConsistency } from "../library/load-library.ts";
import type { FieldErrors } from "../schemas/form-parsing.ts";
import { tubeTypeSpecSchema } from "../schemas/tube-type-schema.ts";

export type NewTypeCheck = { ok: true; spec: TubeTypeSpec } | { ok: false; errors: FieldErrors; status: number };

export interface KnownTypes {
  /** Every type now known (reference and user-added). */
  specs: readonly TubeTypeSpec[];
  /** Resolves a designation or alias to the designation that owns it. */
  ownerOf(name: string): string | undefined;
}

function addError(errors: FieldErrors, path: string, message: string): void {
  errors[path] = errors[path] ? `${errors[path]}; ${message}` : message;
}

/**
 * Which field of the spec a library consistency message is about, as a spec path.
 *
 * Example: `consistencyPath("section 2 (triode) lacks k")` → "pins";
 * `consistencyPath("section 1 typical point 0 has 400 V on the plate, above the maximum 300 V")` → "sections.0.typical";
 * `consistencyPath("section 1 (regulator) needs glow data: …")` → "sections.0.glow".
 */
export function consistencyPath(message: string): string {
  const typical = /^section ([0-9]+) typical point/.exec(message);
  if (typical) return `sections.${Number(typical[1]) - 1}.typical`;
  const glow = /^section ([0-9]+) (?:\(regulator\) needs glow data|regulates up to)/.exec(message);
  if (glow) return `sections.${Number(glow[1]) - 1}.glow`;
  const label = /^section ([0-9]+) needs a label/.exec(message);
  if (label) return `sections.${Number(label[1]) - 1}.label`;
  if (/^designation /.test(message)) return "designation";
  if (/\balias/.test(message)) return "aliases";
  if (/variantOf/.test(message)) return "variantOf";
  if (/^section [0-9]+ \(|has no pin of its own|^pin |base is missing|is not a pin of|\((?:h|f|k)\) pin|no pin is hct|heater or filament pins|uses f and fct|uses h and hct|separate cathode/.test(message)) return "pins";
  if (/^heater half/.test(message)) return "heater.centreTap";
  if (/heater|cold-cathode|0 V, 0 A/.test(message)) return "heater";
  if (/^class /.test(message)) return "class";
  if (/source/.test(message)) return "sources";
  return "_form";
}

/**
 * The message when `designation` is already a known name, else null.
 *
 * Example: `designationClash("ecc82", ownerOf)` → "ECC82 is already a name of 12AU7".
 */
export function designationClash(designation: string, ownerOf: KnownTypes["ownerOf"]): string | null {
  const name = designation.trim().toUpperCase();
  if (name === "") return null;
  const owner = ownerOf(name);
  if (owner === undefined) return null;
  return owner.toUpperCase() === name ? `${name} is already in the library` : `${name} is already a name of ${owner}`;
}

/**
 * Validates `input` as a new user-added type. Status 422 for a malformed or inconsistent type,
 * 409 when its designation or an alias is already a known name (with any other problem found in
 * the same answer). Never throws.
 *
 * Example: a copy of 12AU7's spec → `{ ok: false, status: 409, errors: { designation: "12AU7 is already in the library" } }`.
 */
export function checkNewType(input: unknown, known: KnownTypes): NewTypeCheck {
  const parsed = tubeTypeSpecSchema.safeParse(input);
  if (!parsed.success) {
    const errors: FieldErrors = {};
    for (const issue of parsed.error.issues) {
      const path = issue.path.length ? issue.path.join(".") : "_form";
      if (!errors[path]) errors[path] = issue.message;
    }
    // A taken name is worth saying in the same answer.
    const designation = (input as { designation?: unknown } | null)?.designation;
    const clash = typeof designation === "string" ? designationClash(designation, known.ownerOf) : null;
    if (clash !== null && !errors.designation) errors.designation = clash;
    return { ok: false, errors, status: 422 };
  }
  const spec: TubeTypeSpec = { ...parsed.data, userAdded: true };

  const clashes: FieldErrors = {};
  const clash = designationClash(spec.designation, known.ownerOf);
  if (clash !== null) addError(clashes, "designation", clash);
  for (const alias of spec.aliases) {
    const aliasOwner = known.ownerOf(alias);
    if (aliasOwner !== undefined) addError(clashes, "aliases", `alias ${alias} is already a name of ${aliasOwner}`);
  }
  const errors: FieldErrors = { ...clashes };
  const prefix = `${spec.designation}: `;
  // A clash makes the checker see two types of one name; those messages repeat the clash.
  const problems = checkLibraryConsistency([...known.specs.filter((other) => other.designation.toUpperCase() !== spec.designation.toUpperCase()), spec]).filter((line) =>
    line.toUpperCase().startsWith(prefix.toUpperCase()),
  );
  for (const line of problems) {
    const message = line.slice(prefix.length);
    const path = consistencyPath(message);
    if (path === "aliases" && clashes.aliases !== undefined) continue;
    addError(errors, path, message);
  }
  if (Object.keys(errors).length > 0) return { ok: false, errors, status: Object.keys(clashes).length > 0 ? 409 : 422 };
  return { ok: true, spec };
}
