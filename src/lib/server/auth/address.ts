// The client's address for rate limits. Behind a proxy adapter-node reads it from ADDRESS_HEADER;
// a request without that header shares one bucket rather than failing.
export function clientAddress(event: { getClientAddress(): string }): string {
  try {
    return event.getClientAddress() || 'unknown';
  } catch {
    return 'unknown';
  }
}
