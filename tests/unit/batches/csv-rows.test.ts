import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import fc from 'fast-check';
import { csvRows, type RawRow } from '../../../server/batches/intake/sources';

let dir: string;
beforeAll(() => (dir = fs.mkdtempSync(path.join(os.tmpdir(), 'plumbline-csv-rows-'))));
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

let n = 0;
async function read(bytes: Buffer, opts: { chunkBytes?: number; plain?: boolean }): Promise<{ rows: RawRow[]; error: unknown }> {
  const file = path.join(dir, `f${n++}.csv`);
  fs.writeFileSync(file, bytes);
  const rows: RawRow[] = [];
  try {
    for await (const b of csvRows({ originalName: 'x.csv', path: file, size: bytes.length }, opts)) rows.push(...b);
    return { rows, error: null };
  } catch (e) {
    return { rows, error: e instanceof Error ? { message: e.message, issue: (e as { issue?: unknown }).issue } : e };
  }
}

/** The plain splitter (then csv-parse after it where it stops) must read exactly as csv-parse alone. */
async function same(bytes: Buffer, chunkBytes: number): Promise<void> {
  const reference = await read(bytes, { plain: false, chunkBytes });
  const fast = await read(bytes, { chunkBytes });
  expect({ input: bytes.toString('utf8'), ...fast }).toEqual({ input: bytes.toString('utf8'), ...reference });
}

const piece = fc.constantFrom(
  'a',
  'R-1',
  ' ',
  ',',
  ',,',
  '\n',
  '\r\n',
  '\r',
  '"',
  '""',
  '"x,y"',
  'é',
  '€',
  '\t',
  '\uFEFF',
  '12.50',
  'inc.wages',
  '  b  ',
  '\u00A0',
);

describe('CSV rows: the plain splitter reads as csv-parse does', () => {
  it('on random text, chunk sizes and line endings', async () => {
    await fc.assert(
      fc.asyncProperty(fc.array(piece, { maxLength: 40 }), fc.boolean(), fc.integer({ min: 1, max: 9 }), async (parts, bom, chunk) => {
        const text = (bom ? '\uFEFF' : '') + parts.join('');
        await same(Buffer.from(text, 'utf8'), chunk);
      }),
      { numRuns: 400 },
    );
  }, 60_000);

  it('on edge cases', async () => {
    const cases = [
      '',
      '\n',
      '\r\n',
      '\r',
      'a',
      'a\r',
      'a\n',
      'a,b\r\nc\nd\r\n',
      'a,b\nc\r\nd',
      '\r\na',
      'a\rb\nc',
      ',',
      'a,\n',
      '\uFEFF\uFEFFa,b',
      ' a , b \n',
      'a\n\n\nb\n',
      'h1,h2\r\n1,2\r\n\r\n3,"4\r\n5"\r\n6,7\r\n',
      'a,b\n"open\n',
      'a,b\nx"y,z\n',
      'a,"b"c\n',
    ];
    for (const c of cases) for (const chunk of [1, 2, 3, 1 << 20]) await same(Buffer.from(c, 'utf8'), chunk);
  });

  it('reports a file that is not UTF-8 on the same line', async () => {
    // (How many rows csv-parse hands on before the decoding error depends on its buffering; the error is what counts.)
    const bytes = Buffer.concat([Buffer.from('a,b\nc,d\ne,f'), Buffer.from([0xe9]), Buffer.from('g\n')]);
    for (const chunk of [1, 4, 1 << 20]) {
      const reference = await read(bytes, { plain: false, chunkBytes: chunk });
      const fast = await read(bytes, { chunkBytes: chunk });
      expect(fast.error).toEqual(reference.error);
      expect(fast.error).toMatchObject({ issue: { message: expect.stringMatching(/not UTF-8 text/) } });
    }
    expect((await read(bytes, {})).error).toMatchObject({ issue: { row: 3, message: expect.stringMatching(/not UTF-8 text .* line 3\)/) } });
  });
});
