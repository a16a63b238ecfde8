/// <reference lib="webworker" />
/**
 * Compresses a capture in the browser, off the page's thread: the file is read as a stream through
 * the platform's CompressionStream("gzip") (RFC 1952), and the compressed bytes are posted back in
 * pieces of at least PIECE bytes as they come out, so they can be sent while the rest is still
 * being compressed. One worker serves every file of the page (it is loaded while the page is
 * online, so a capture chosen offline is still compressed). In: { id, file }. Out, with the same
 * id: { type: "piece", data, read } (data transferred; `read` = plain bytes consumed so far),
 * { type: "done", read }, { type: "error", message }.
 */
export type CompressOut = { id: number } & (
  | { type: "piece"; data: ArrayBuffer; read: number }
  | { type: "done"; read: number }
  | { type: "error"; message: string }
);

const PIECE = 256 * 1024;

self.onmessage = async (e: MessageEvent<{ id: number; file: Blob }>) => {
  const id = e.data.id;
  const post = (m: CompressOut, transfer: Transferable[] = []) =>
    (self as unknown as DedicatedWorkerGlobalScope).postMessage(m, transfer);
  try {
    let read = 0;
    const counted = e.data.file.stream().pipeThrough(
      new TransformStream<Uint8Array, Uint8Array>({
        transform(chunk, ctl) {
          read += chunk.byteLength;
          ctl.enqueue(chunk);
        },
      }),
    );
    const gzip = new CompressionStream("gzip") as unknown as ReadableWritablePair<Uint8Array, Uint8Array>;
    const reader = counted.pipeThrough(gzip).getReader();
    let parts: Uint8Array[] = [];
    let length = 0;
    const flush = () => {
      if (!length) return;
      const out = new Uint8Array(length);
      let at = 0;
      for (const p of parts) {
        out.set(p, at);
        at += p.byteLength;
      }
      parts = [];
      length = 0;
      post({ id, type: "piece", data: out.buffer, read }, [out.buffer]);
    };
    for (;;) {
      const { value, done } = await reader.read();
      if (done) break;
      parts.push(value);
      length += value.byteLength;
      if (length >= PIECE) flush();
    }
    flush();
    post({ id, type: "done", read });
  } catch (err) {
    post({ id, type: "error", message: err instanceof Error ? err.message : String(err) });
  }
};
