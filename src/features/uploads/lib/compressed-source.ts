/**
 * The compressed bytes of a capture as a source for the tus client: they grow while the worker
 * compresses, and the client may ask for any range again (after a dropped link it continues from
 * the server's last byte). A request for bytes not made yet waits for them; one that already has
 * EAGER bytes goes out with what there is, so sending keeps pace with compressing.
 */
const EAGER = 512 * 1024;

export class CompressedSource {
  private pieces: { at: number; blob: Blob }[] = [];
  private length = 0;
  private finished = false;
  private failure: Error | null = null;
  private waiters: (() => void)[] = [];

  /** compressed bytes so far */
  get bytes(): number {
    return this.length;
  }

  get done(): boolean {
    return this.finished;
  }

  /** Unknown until the compression ends (the tus client then declares the length). */
  get size(): number | null {
    return this.finished ? this.length : null;
  }

  add(blob: Blob): void {
    this.pieces.push({ at: this.length, blob });
    this.length += blob.size;
    this.wake();
  }

  finish(): void {
    this.finished = true;
    this.wake();
  }

  fail(err: Error): void {
    this.failure = err;
    this.wake();
  }

  private wake(): void {
    const w = this.waiters;
    this.waiters = [];
    w.forEach((f) => f());
  }

  /** The bytes [start, end) as far as they exist; `done` when they reach the end of the file. */
  async slice(start: number, end: number): Promise<{ value: Blob | null; done: boolean }> {
    while (!this.failure && !this.finished && this.length < end && this.length - start < EAGER) {
      await new Promise<void>((r) => this.waiters.push(r));
    }
    if (this.failure) throw this.failure;
    const to = Math.min(end, this.length);
    const done = this.finished && to >= this.length;
    if (to <= start) return { value: done ? null : new Blob([]), done };
    const parts: Blob[] = [];
    for (const p of this.pieces) {
      const pEnd = p.at + p.blob.size;
      if (pEnd <= start || p.at >= to) continue;
      parts.push(p.blob.slice(Math.max(0, start - p.at), Math.min(p.blob.size, to - p.at)));
    }
    return { value: new Blob(parts), done };
  }

  close(): void {
    /* the bytes stay: a later start continues from them */
  }
}
