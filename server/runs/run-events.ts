import { EventEmitter } from 'node:events';
import pg from 'pg';

/**
 * Fans out the database's `run_events` notifications (sent by workers on every
 * progress step and state change) to the API's server-sent-event streams, over
 * one LISTEN connection per API process. Reconnects when that connection drops.
 */
export class RunEvents {
  private readonly emitter = new EventEmitter();
  private client: pg.Client | null = null;
  private closed = false;

  constructor(private readonly databaseUrl: string) {
    this.emitter.setMaxListeners(0);
  }

  async start(): Promise<void> {
    const client = new pg.Client({ connectionString: this.databaseUrl });
    client.on('notification', (n) => {
      if (n.payload) this.emitter.emit(n.payload);
    });
    client.on('error', () => this.reconnect());
    client.on('end', () => this.reconnect());
    await client.connect();
    await client.query('LISTEN run_events');
    this.client = client;
  }

  private reconnect() {
    if (this.closed || !this.client) return;
    this.client = null;
    setTimeout(() => void this.start().catch(() => this.reconnectLater()), 1000);
  }

  private reconnectLater() {
    if (!this.closed) setTimeout(() => void this.start().catch(() => this.reconnectLater()), 5000);
  }

  /** Calls `listener` whenever the run changes; returns the unsubscribe function. */
  subscribe(runId: string, listener: () => void): () => void {
    this.emitter.on(runId, listener);
    return () => this.emitter.off(runId, listener);
  }

  async close(): Promise<void> {
    this.closed = true;
    const c = this.client;
    this.client = null;
    await c?.end().catch(() => {});
  }
}
