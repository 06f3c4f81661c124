/**
 * A stand-in for the browser's EventSource (jsdom has none) that a spec drives by
 * hand; every one made is remembered, so a spec can also check that none was.
 */
export class FakeEventSource extends EventTarget {
  static made: FakeEventSource[] = [];
  static get last(): FakeEventSource | null {
    return FakeEventSource.made.at(-1) ?? null;
  }
  closed = false;
  constructor(readonly url: string) {
    super();
    FakeEventSource.made.push(this);
  }
  emit(type: string, data?: unknown): void {
    this.dispatchEvent(new MessageEvent(type, { data: data === undefined ? '' : JSON.stringify(data) }));
  }
  close(): void {
    this.closed = true;
  }
}
