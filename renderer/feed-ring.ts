/** The last LINE_FEED_LIMIT lines of a station, oldest first (the Line feed stays bounded). */
import type { FeedRow } from './wire';

export const LINE_FEED_LIMIT = 5000;

export class FeedRing {
  private rows: FeedRow[] = [];
  /** Count of lines ever added, so a view can tell which rows it has not drawn yet. */
  total = 0;

  add(rows: readonly FeedRow[]): void {
    for (const row of rows) this.rows.push(row);
    this.total += rows.length;
    // Trim in chunks: one splice per ~10 % overflow instead of a shift per line.
    if (this.rows.length > LINE_FEED_LIMIT * 1.1)
      this.rows = this.rows.slice(this.rows.length - LINE_FEED_LIMIT);
  }

  all(): readonly FeedRow[] {
    return this.rows.length > LINE_FEED_LIMIT
      ? this.rows.slice(this.rows.length - LINE_FEED_LIMIT)
      : this.rows;
  }

  clear(): void {
    this.rows = [];
  }
}
