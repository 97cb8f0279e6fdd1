/**
 * Reads an uploaded file into a table of text cells: checks that it is text, finds the
 * delimiter from the header line, and keeps each data row's line number in the file so every
 * problem can be pointed at the row a spreadsheet shows (the header is row 1).
 */
import { parse } from "csv-parse/sync";

export type CsvDelimiter = "," | ";" | "\t";

export interface CsvTable {
  /** Column names as written in the header row (blank ones named "column N", repeats numbered). */
  headers: string[];
  /** Data rows; cells are trimmed text, missing trailing cells are "". */
  rows: string[][];
  /** Line in the file where each data row starts (1-based; the header is usually line 1). */
  lineNumbers: number[];
  delimiter: CsvDelimiter;
}

export type CsvReadResult = { ok: true; table: CsvTable } | { ok: false; reason: string };

export const DELIMITER_NAMES: Readonly<Record<CsvDelimiter, string>> = { ",": "comma", ";": "semicolon", "\t": "tab" };

/**
 * Turns the uploaded bytes into text. UTF-8 is tried first (a BOM is dropped); bytes that are not
 * valid UTF-8 are read as Windows-1252, which older Windows exports use. Binary content is refused.
 */
export function decodeUpload(bytes: Uint8Array): { ok: true; text: string } | { ok: false; reason: string } {
  if (bytes.length === 0) return { ok: false, reason: "The file is empty." };
  const head = bytes.subarray(0, 8192);
  // Spreadsheet workbooks (xlsx, ods) are zip archives; old xls files are OLE compound documents.
  if ((head[0] === 0x50 && head[1] === 0x4b) || (head[0] === 0xd0 && head[1] === 0xcf)) {
    return { ok: false, reason: "This is a spreadsheet workbook, not a CSV file. Save it as CSV (comma, semicolon or tab separated) and upload that." };
  }
  if (head.includes(0)) return { ok: false, reason: "This is not a CSV text file (it contains binary data)." };
  try {
    return { ok: true, text: new TextDecoder("utf-8", { fatal: true, ignoreBOM: false }).decode(bytes) };
  } catch {
    return { ok: true, text: new TextDecoder("windows-1252").decode(bytes) };
  }
}

/** The first line that is not blank, with any BOM removed. */
function firstLine(text: string): string {
  const start = text.charCodeAt(0) === 0xfeff ? 1 : 0;
  for (const line of text.slice(start, start + 65536).split(/\r\n|\n|\r/)) {
    if (line.trim() !== "") return line;
  }
  return "";
}

/**
 * Picks the delimiter that splits the header line into the most cells (quoted text ignored).
 * Decimal commas never occur in a header, so the header is a safer guide than the data rows.
 *
 * @example detectDelimiter("Label;Type;Gm µmho\n12AU7-1;12AU7;2,2") // ";"
 */
export function detectDelimiter(text: string): CsvDelimiter {
  const counts: Record<CsvDelimiter, number> = { ",": 0, ";": 0, "\t": 0 };
  let quoted = false;
  for (const char of firstLine(text)) {
    if (char === '"') quoted = !quoted;
    else if (!quoted && (char === "," || char === ";" || char === "\t")) counts[char] += 1;
  }
  const best = (Object.keys(counts) as CsvDelimiter[]).reduce((a, b) => (counts[b] > counts[a] ? b : a), ",");
  return counts[best] > 0 ? best : ",";
}

const NUMBER_LIKE = /^[-+]?\d+([.,]\d+)?$/;

function uniqueHeaders(cells: string[]): string[] {
  const seen = new Map<string, number>();
  return cells.map((cell, index) => {
    const name = cell === "" ? `column ${index + 1}` : cell;
    const count = (seen.get(name) ?? 0) + 1;
    seen.set(name, count);
    return count === 1 ? name : `${name} (${count})`;
  });
}

/**
 * Parses CSV text: the first non-blank row is the header, every later row is data. Rows whose
 * cells are all blank are skipped. Returns `{ ok: false, reason }` for malformed CSV (with the
 * line), a missing header row (the first row looks like numbers) or no data rows. Never throws.
 *
 * @example readCsvText("Label,Gm\nA1,2200\n") // { ok: true, table: { headers: ["Label", "Gm"], rows: [["A1", "2200"]], lineNumbers: [2], delimiter: "," } }
 */
export function readCsvText(text: string): CsvReadResult {
  if (text.replace(/^\uFEFF/, "").trim() === "") return { ok: false, reason: "The file is empty." };
  const delimiter = detectDelimiter(text);
  let records: string[][];
  try {
    // Blank lines come through as records (and are skipped below) so that record order gives line numbers.
    records = parse(text, { delimiter, bom: true, relax_column_count: true, trim: true });
  } catch (error) {
    const detail = error as { message?: string; lines?: number };
    const where = typeof detail.lines === "number" ? ` near line ${detail.lines}` : "";
    return { ok: false, reason: `The file is not valid CSV${where}: ${String(detail.message ?? error).replace(/^[^:]*:\s*/, "")}.` };
  }
  const rows: string[][] = [];
  const lineNumbers: number[] = [];
  let header: { cells: string[]; line: number } | null = null;
  let line = 1;
  for (const record of records) {
    const startLine = line;
    line += 1;
    // A quoted cell may hold line breaks: the next record starts that many lines further down.
    for (const cell of record) if (cell.includes("\n")) line += cell.split("\n").length - 1;
    if (record.length === 1 ? record[0] === "" : record.every((cell) => cell === "")) continue;
    if (!header) {
      header = { cells: record, line: startLine };
      continue;
    }
    rows.push(record);
    lineNumbers.push(startLine);
  }
  if (!header) return { ok: false, reason: "The file is empty." };
  const numeric = header.cells.filter((cell) => NUMBER_LIKE.test(cell));
  if (numeric.length) {
    return { ok: false, reason: `The first row looks like data (${numeric.slice(0, 3).map((c) => `'${c}'`).join(", ")}), not column names. Add a header row naming the columns.` };
  }
  if (rows.length === 0) return { ok: false, reason: "The file has a header row but no data rows." };
  return { ok: true, table: { headers: uniqueHeaders(header.cells), rows, lineNumbers, delimiter } };
}
