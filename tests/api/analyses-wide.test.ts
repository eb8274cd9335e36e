/**
 * POST /api/analyses/digits on amounts of any size (issue 15): counts, MAD and chi-square equal
 * an independent computation (tests/unit/digits/wide-reference.ts: BigInt digits, log10
 * proportions, jstat's chi-square), as JSON and as an uploaded file.
 */
import { digitProfileSchema } from '../../shared/digits';
import { signIn, type SignedIn } from '../helpers/auth';
import { createTestContext, type TestContext } from '../helpers/test-app';
import { expectAgreement, powersOfTwo, scientificValues } from '../unit/digits/wide-reference';

describe('POST /api/analyses/digits: amounts of any size', () => {
  let ctx: TestContext;
  let examiner: SignedIn;
  beforeAll(async () => {
    ctx = await createTestContext();
    examiner = await signIn(ctx, 'examiner');
  });
  afterAll(async () => {
    await ctx.close();
  });

  it('JSON: integers to 302 digits and 10^300 equal BigInt digits and jstat', async () => {
    const amounts = [...powersOfTwo(1000), { value: 10n ** 300n, text: `1${'0'.repeat(300)}` }];
    const res = await examiner.agent
      .post('/api/analyses/digits')
      .set('X-CSRF-Token', examiner.csrf)
      .send({ amounts: amounts.map((a) => a.text) });
    expect(res.status).toBe(200);
    expectAgreement(digitProfileSchema.parse(res.body), amounts);
  });

  it('file: a CSV column in scientific notation equals the independent computation', async () => {
    const amounts = scientificValues(800);
    const csv = `value\n${amounts.map((a) => a.text).join('\n')}\n`;
    const res = await examiner.agent.post('/api/analyses/digits').set('X-CSRF-Token', examiner.csrf).attach('file', Buffer.from(csv), 'sci.csv');
    expect(res.status).toBe(200);
    expectAgreement(digitProfileSchema.parse(res.body), amounts);
  });

  it('only text that is not an amount is refused, named with its line', async () => {
    const res = await examiner.agent
      .post('/api/analyses/digits')
      .set('X-CSRF-Token', examiner.csrf)
      .attach('file', Buffer.from('1e300\n17592186044416\nn/a\n'), 'big.txt');
    expect(res.status).toBe(422);
    expect(res.body.error).toMatch(/line 3 \("n\/a"\) is not a valid amount/);
  });
});
