/** Record ids are UUIDs; anything else in a URL cannot name a record (answer 404 without a query). */
const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** True when the text is a UUID. */
export function isUuid(s: string): boolean {
  return UUID.test(s);
}
