/**
 * Downloads in API tests: supertest buffers only text bodies by itself, so a PDF, XLSX or
 * ZIP answer is collected here into a Buffer.
 */
import type request from 'supertest';

/** A supertest parser that collects the answer's bytes into a Buffer (`.buffer(true).parse(bufferBody)`). */
export function bufferBody(res: request.Response, cb: (err: Error | null, body: Buffer) => void): void {
  const chunks: Buffer[] = [];
  res.on('data', (c: Buffer) => chunks.push(c));
  res.on('end', () => cb(null, Buffer.concat(chunks)));
}

/** The request with its answer's body as a Buffer. */
export function binary(req: request.Test): request.Test {
  return req.buffer(true).parse(bufferBody);
}
