/**
 * Short-lived in-memory entries keyed by a random id: uploads waiting for their mapping and
 * commit jobs being watched. Bounded in age and number so forgotten uploads cannot pile up.
 */
import { randomBytes } from "node:crypto";

export class BoundedStore<T> {
  private readonly entries = new Map<string, { value: T; createdAt: number }>();

  constructor(
    private readonly maxEntries: number,
    private readonly maxAgeMilliseconds: number,
    private readonly now: () => number = Date.now,
  ) {}

  /** Stores `value` under a new unguessable id, dropping expired entries and then the oldest ones. */
  add(value: T): string {
    this.prune();
    while (this.entries.size >= this.maxEntries) {
      const oldest = this.entries.keys().next().value as string;
      this.entries.delete(oldest);
    }
    const id = randomBytes(12).toString("hex");
    this.entries.set(id, { value, createdAt: this.now() });
    return id;
  }

  get(id: string): T | undefined {
    this.prune();
    return this.entries.get(id)?.value;
  }

  delete(id: string): void {
    this.entries.delete(id);
  }

  get size(): number {
    this.prune();
    return this.entries.size;
  }

  private prune(): void {
    const limit = this.now() - this.maxAgeMilliseconds;
    for (const [id, entry] of this.entries) if (entry.createdAt < limit) this.entries.delete(id);
  }
}
