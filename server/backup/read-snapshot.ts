/**
 * Reads for downloads run on their own read-only connection: a download streams for seconds,
 * and an open statement on the app's shared connection would block every other query on it
 * ("connection is busy"). WAL lets this reader see one consistent snapshot while the app
 * keeps writing.
 */
import Database from "better-sqlite3";

/** How many rows go into one chunk of a streamed download. */
export const ROWS_PER_CHUNK = 500;

/**
 * Opens a read-only connection on `databaseFile` when the generator is first pulled, runs
 * `read` inside one read transaction (so several statements see the same snapshot), yields
 * what it yields, and closes the connection when done, on error, or when the consumer stops.
 */
export function* readSnapshot<T>(databaseFile: string, read: (db: Database.Database) => Iterable<T>): Generator<T> {
  const db = new Database(databaseFile, { readonly: true, fileMustExist: true, timeout: 15_000 });
  try {
    db.exec("BEGIN");
    yield* read(db);
    db.exec("COMMIT");
  } finally {
    db.close();
  }
}

/** Groups an iterable into arrays of at most `size` items. */
export function* inChunks<T>(items: Iterable<T>, size = ROWS_PER_CHUNK): Generator<T[]> {
  let chunk: T[] = [];
  for (const item of items) {
    chunk.push(item);
    if (chunk.length >= size) {
      yield chunk;
      chunk = [];
    }
  }
  if (chunk.length) yield chunk;
}
