/** Timestamps written by raw SQL use the same text form the Prisma SQLite adapter writes. */
export function sqlTimestamp(date: Date = new Date()): string {
  return date.toISOString().replace("Z", "+00:00");
}
