/**
 * A loopback TCP proxy standing for the shop's uplink: bytes from the client to the server pass at
 * a set rate (one token bucket shared by every connection, like one Wi-Fi uplink), are counted,
 * and the link can be cut (every connection dropped, new ones refused) and restored. Bytes from the
 * server to the client pass unthrottled (a download is not what is measured). Used by the upload
 * tests, the browser test and the bench.
 */
import net from "node:net";

export interface LinkProxyOptions {
  /** uplink rate in bytes per second; undefined = as fast as loopback */
  rateBytesPerS?: number;
}

export class LinkProxy {
  /** client→server bytes forwarded so far */
  forwarded = 0;
  port = 0;
  private server: net.Server;
  private sockets = new Set<net.Socket>();
  private down = false;
  private nextFree = 0;
  private cutAt: { bytes: number; resolve: () => void } | null = null;

  constructor(
    private targetPort: number,
    private opts: LinkProxyOptions = {},
  ) {
    // half-open: a client that has sent everything still gets its bytes forwarded at the link's rate
    this.server = net.createServer({ allowHalfOpen: true }, (client) => this.accept(client));
  }

  /** Listens on 127.0.0.1 (a random port unless given). */
  async listen(port = 0): Promise<this> {
    await new Promise<void>((resolve) => this.server.listen(port, "127.0.0.1", resolve));
    this.port = (this.server.address() as net.AddressInfo).port;
    return this;
  }

  get url(): string {
    return `http://127.0.0.1:${this.port}`;
  }

  setTarget(port: number): void {
    this.targetPort = port;
  }

  setRate(rateBytesPerS: number | undefined): void {
    this.opts.rateBytesPerS = rateBytesPerS;
  }

  /** Drops every connection and refuses new ones until restore(). */
  cut(): void {
    this.down = true;
    for (const s of this.sockets) s.destroy();
    this.sockets.clear();
  }

  restore(): void {
    this.down = false;
  }

  get isDown(): boolean {
    return this.down;
  }

  /** Cuts the link once `bytes` client→server bytes have been forwarded (exactly there). */
  cutAfter(bytes: number): Promise<void> {
    return new Promise((resolve) => {
      this.cutAt = { bytes, resolve };
    });
  }

  async close(): Promise<void> {
    this.cut();
    await new Promise<void>((resolve) => this.server.close(() => resolve()));
  }

  private accept(client: net.Socket): void {
    if (this.down) {
      client.destroy();
      return;
    }
    const upstream = net.connect({ port: this.targetPort, host: "127.0.0.1", allowHalfOpen: true });
    this.sockets.add(client);
    this.sockets.add(upstream);
    const drop = () => {
      client.destroy();
      upstream.destroy();
      this.sockets.delete(client);
      this.sockets.delete(upstream);
    };
    client.on("error", drop);
    upstream.on("error", drop);
    client.on("close", drop);
    upstream.on("close", drop);
    upstream.on("end", () => client.end());
    upstream.on("data", (d) => {
      if (!client.write(d)) {
        upstream.pause();
        client.once("drain", () => upstream.resume());
      }
    });
    let queue: Promise<void> = Promise.resolve();
    client.on("data", (d: Buffer) => {
      client.pause();
      queue = queue.then(async () => {
        await this.forward(d, upstream);
        if (!client.destroyed) client.resume();
      });
    });
    client.on("end", () => {
      queue = queue.then(() => {
        if (!upstream.destroyed) upstream.end();
      });
    });
  }

  private async forward(data: Buffer, upstream: net.Socket): Promise<void> {
    const piece = 16 * 1024;
    for (let i = 0; i < data.length && !upstream.destroyed && !this.down; i += piece) {
      let chunk = data.subarray(i, Math.min(data.length, i + piece));
      const rate = this.opts.rateBytesPerS;
      if (rate) {
        // a token bucket 50 ms deep: a timer that fires late is made up for, not lost
        const now = performance.now();
        const start = Math.max(now - 50, this.nextFree);
        this.nextFree = start + (chunk.length / rate) * 1000;
        const wait = this.nextFree - now;
        if (wait > 1) await new Promise((r) => setTimeout(r, wait));
        if (upstream.destroyed || this.down) return;
      }
      const cut = this.cutAt;
      if (cut && this.forwarded + chunk.length >= cut.bytes) {
        chunk = chunk.subarray(0, Math.max(0, cut.bytes - this.forwarded));
        this.forwarded += chunk.length;
        this.cutAt = null;
        upstream.write(chunk, () => {
          this.cut();
          cut.resolve();
        });
        return;
      }
      this.forwarded += chunk.length;
      upstream.write(chunk);
    }
  }
}
