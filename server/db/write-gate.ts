/**
 * Bulk writes (a CSV import's commit, a restore) hold one transaction on the raw connection for
 * seconds and yield to the event loop between chunks. Any other write that starts meanwhile
 * would either wait inside SQLite's busy handler — synchronously, freezing every request until
 * the bulk write ends — or, on the raw connection, join the bulk transaction and share its fate.
 * The gate lets those writes wait their turn asynchronously instead.
 */
import type Database from "better-sqlite3";

export class BulkWriteGate {
  /** Bulk writes asked for and not yet finished (running or queued). */
  private pending = 0;
  private tail: Promise<unknown> = Promise.resolve();

  /**
   * Runs `work` as the only bulk write: bulk writes queue behind each other, and `idle()` waits
   * from the moment one is asked for until the last has finished. Returns what `work` returns;
   * its error is passed on after the gate opens.
   */
  hold<T>(work: () => Promise<T>): Promise<T> {
    this.pending += 1;
    const run = this.tail.then(work).finally(() => {
      this.pending -= 1;
    });
    this.tail = run.catch(() => undefined);
    return run;
  }

  /** True while a bulk write runs or waits to run. */
  get busy(): boolean {
    return this.pending > 0;
  }

  /** Resolves once no bulk write is running or queued (at once when none is). */
  async idle(): Promise<void> {
    while (this.pending > 0) await this.tail;
  }
}

const gates = new WeakMap<Database.Database, BulkWriteGate>();

/** The gate of one raw connection (one database file per app): shared by every service that writes. */
export function bulkWriteGate(sqlite: Database.Database): BulkWriteGate {
  let gate = gates.get(sqlite);
  if (gate === undefined) {
    gate = new BulkWriteGate();
    gates.set(sqlite, gate);
  }
  return gate;
}
