/** The last LINE_FEED_LIMIT lines of a station, oldest first (the Line feed stays bounded). */
import type { FeedRow } from './wire';

export const LINE_FEED_LIMIT = 5000;

export class FeedRing {
  private rows: FeedRow[] = [];
  /** Count of lines ever added, so a view can tell which rows it has not drawn yet. */
  total = 0;

  add(rows: readonly FeedRow[]): void {
    for (const row of rows) {
      if (this.isRepeat(row)) continue;
      this.rows.push(row);
      this.total++;
    }
    // Trim in chunks: one splice per ~10 % overflow instead of a shift per line.
    if (this.rows.length > LINE_FEED_LIMIT * 1.1)
      this.rows = this.rows.slice(this.rows.length - LINE_FEED_LIMIT);
  }

  /**
   * A line the ring already holds: the history reply and the live pushes overlap by a few lines
   * at start and after a reconnect. Lines arrive in receive order, so only the newest rows
   * (those at or after this line's receive time) can hold the same line again.
   */
  private isRepeat(row: FeedRow): boolean {
    for (let i = this.rows.length - 1; i >= 0 && this.rows[i].rxS >= row.rxS; i--) {
      const r = this.rows[i];
      if (r.rxS === row.rxS && r.text === row.text && r.kind === row.kind) return true;
    }
    return false;
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
