/**
 * A binary min-heap of (time, item, stamp) triples in growable typed arrays.
 *
 * The matching solver schedules future events (an edge becoming tight, a blossom dual
 * reaching zero) by the dual "clock" value at which they happen. Entries are never removed
 * early; the solver checks each popped entry against the current state and drops or
 * re-schedules it, which is cheaper than keeping positions for decrease-key.
 */
export class EventHeap {
  private times: Float64Array;
  private items: Int32Array;
  private stamps: Int32Array;
  private count = 0;

  /** Item and stamp of the entry most recently removed by `pop`. */
  poppedItem = -1;
  poppedStamp = 0;

  constructor(initialCapacity = 64) {
    const capacity = Math.max(4, initialCapacity);
    this.times = new Float64Array(capacity);
    this.items = new Int32Array(capacity);
    this.stamps = new Int32Array(capacity);
  }

  get size(): number {
    return this.count;
  }

  /** Earliest time in the heap, or +Infinity when empty. */
  peekTime(): number {
    return this.count > 0 ? this.times[0] : Number.POSITIVE_INFINITY;
  }

  push(time: number, item: number, stamp: number): void {
    if (this.count === this.times.length) this.grow();
    let position = this.count++;
    const times = this.times;
    const items = this.items;
    const stamps = this.stamps;
    while (position > 0) {
      const parent = (position - 1) >> 1;
      if (times[parent] <= time) break;
      times[position] = times[parent];
      items[position] = items[parent];
      stamps[position] = stamps[parent];
      position = parent;
    }
    times[position] = time;
    items[position] = item;
    stamps[position] = stamp;
  }

  /** Removes the earliest entry, leaves its item and stamp in `poppedItem` / `poppedStamp`, returns its time. */
  pop(): number {
    if (this.count === 0) throw new Error("EventHeap.pop on an empty heap");
    const times = this.times;
    const items = this.items;
    const stamps = this.stamps;
    const earliest = times[0];
    this.poppedItem = items[0];
    this.poppedStamp = stamps[0];
    const last = --this.count;
    if (last > 0) {
      const time = times[last];
      const item = items[last];
      const stamp = stamps[last];
      let position = 0;
      for (;;) {
        let child = 2 * position + 1;
        if (child >= last) break;
        if (child + 1 < last && times[child + 1] < times[child]) child += 1;
        if (times[child] >= time) break;
        times[position] = times[child];
        items[position] = items[child];
        stamps[position] = stamps[child];
        position = child;
      }
      times[position] = time;
      items[position] = item;
      stamps[position] = stamp;
    }
    return earliest;
  }

  clear(): void {
    this.count = 0;
  }

  private grow(): void {
    const capacity = this.times.length * 2;
    const times = new Float64Array(capacity);
    const items = new Int32Array(capacity);
    const stamps = new Int32Array(capacity);
    times.set(this.times);
    items.set(this.items);
    stamps.set(this.stamps);
    this.times = times;
    this.items = items;
    this.stamps = stamps;
  }
}
