/**
 * A consistent copy of the live SQLite file through SQLite's online backup API: it copies page
 * by page and restarts when a writer changes a page already copied, so the copy is one
 * committed state even while the server keeps writing (WAL mode allows the second reader).
 */
import fs from "node:fs";
import path from "node:path";
import Database from "better-sqlite3";

/** data/backups/tubeledger-20260501-142233.db under `baseDir`, in local time. */
export function defaultBackupPath(now: Date, baseDir = process.cwd()): string {
  const pad = (value: number) => String(value).padStart(2, "0");
  const stamp = `${now.getFullYear()}${pad(now.getMonth() + 1)}${pad(now.getDate())}-${pad(now.getHours())}${pad(now.getMinutes())}${pad(now.getSeconds())}`;
  return path.resolve(baseDir, "data", "backups", `tubeledger-${stamp}.db`);
}

export type OnlineCopyResult =
  | { ok: true; destination: string; bytes: number; pages: number }
  | { ok: false; reason: string };

/**
 * Copies `sourceFile` to `destinationFile` (folders created as needed), switches the copy to a
 * rollback journal and checks it with PRAGMA quick_check. Refuses when the source is missing, when the destination exists
 * (a copy never overwrites), or when both name the same file.
 */
export async function copyDatabaseOnline(sourceFile: string, destinationFile: string): Promise<OnlineCopyResult> {
  const source = path.resolve(sourceFile);
  const destination = path.resolve(destinationFile);
  if (!fs.existsSync(source)) return { ok: false, reason: `no database at ${source} — check DATABASE_URL (now ${process.env.DATABASE_URL ?? "unset, so file:./data/tubeledger.db"})` };
  if (source === destination) return { ok: false, reason: "the destination is the database itself; name another file" };
  if (fs.existsSync(destination)) return { ok: false, reason: `${destination} already exists; a backup never overwrites a file` };
  fs.mkdirSync(path.dirname(destination), { recursive: true });

  const db = new Database(source, { fileMustExist: true, timeout: 15_000 });
  let pages: number;
  try {
    pages = (await db.backup(destination)).totalPages;
  } catch (error) {
    fs.rmSync(destination, { force: true });
    return { ok: false, reason: `the copy failed: ${(error as Error).message}` };
  } finally {
    db.close();
  }

  // The copy keeps the source's WAL mode; switching it to a rollback journal makes it one
  // self-contained file, with no -wal or -shm beside it.
  const copy = new Database(destination, { fileMustExist: true });
  try {
    copy.pragma("journal_mode = DELETE");
    const check = copy.pragma("quick_check", { simple: true });
    if (check !== "ok") return { ok: false, reason: `the copy at ${destination} failed its integrity check: ${String(check)}` };
  } finally {
    copy.close();
  }
  return { ok: true, destination, bytes: fs.statSync(destination).size, pages };
}

/** 1536000 → "1.5 MB". */
export function formatBytes(bytes: number): string {
  if (bytes < 1024) return `${bytes} B`;
  if (bytes < 1024 * 1024) return `${(bytes / 1024).toFixed(1)} kB`;
  return `${(bytes / 1024 / 1024).toFixed(1)} MB`;
}
