/**
 * Benchmark of the digit engine (not a test): `npm run bench:digits [-- N]`.
 *
 * Profiles N amounts (default 10 million) with every test, and times beside it a loop that
 * only parses the same amounts, for two inputs: JavaScript numbers (as from JSON or XLSX)
 * and decimal strings (as from CSV or a text file). Also times digit counting alone from a
 * cents array (the first, second, first-two and last-two counts), and the per-return fast
 * path (one reused DigitCounter, 30 amounts a return). One core: nothing here runs in
 * parallel. Each figure is the best of 3 runs, so start-up and JIT warm-up are left out.
 *
 * Parse-only for text is parseAmountColumn, whose reading loop profileAmounts runs a block at a time (ordinary
 * amounts on the cents fast path); the strict cents-only parseAmounts is shown beside it. A
 * last phase times amounts too large for cents (integers of 20 to 300 digits and scientific
 * notation), which are read from their digits (shared/digits/wide.ts).
 */

import { DigitCounter, formatCents, mulberry32, parseAmountColumn, parseAmounts, profileAmounts, profileCents, summarizeCounter } from '../shared/digits';

const N = Number(process.argv[2] ?? process.env.BENCH_N ?? 10_000_000);
if (!Number.isInteger(N) || N < 1) {
  process.stderr.write('bench-digits: N must be a positive whole number\n');
  process.exit(2);
}
const RUNS = 3;

/**
 * Best time of `runs` calls, in seconds: the process's own CPU time (user + system) when
 * BENCH_CLOCK=cpu, which a machine shared with other work inflates far less than wall time
 * (the best wall time is printed beside it); wall time otherwise.
 */
const CPU_CLOCK = process.env.BENCH_CLOCK === 'cpu';
const walls: number[] = [];
function best(runs: number, fn: () => unknown): number {
  let min = Infinity;
  let minWall = Infinity;
  for (let r = 0; r < runs; r++) {
    const c0 = process.cpuUsage();
    const t0 = process.hrtime.bigint();
    const out = fn();
    const t1 = process.hrtime.bigint();
    const c1 = process.cpuUsage(c0);
    if (out === undefined) throw new Error('benchmark body returned nothing');
    const wall = Number(t1 - t0) / 1e9;
    minWall = Math.min(minWall, wall);
    min = Math.min(min, CPU_CLOCK ? (c1.user + c1.system) / 1e6 : wall);
  }
  walls.push(minWall);
  return min;
}

function rate(count: number, seconds: number): string {
  return `${(count / seconds / 1e6).toFixed(1).padStart(6)} M/s`;
}

// Amounts: log-uniform over 0.01 .. 10^7 (Benford-like), 10 % negative, 1 % zero.
process.stdout.write(`generating ${N.toLocaleString('en-US')} amounts...\n`);
const rnd = mulberry32(20240601);
let numbers: number[] | null = new Array<number>(N);
for (let i = 0; i < N; i++) {
  const u = rnd();
  const c = u < 0.01 ? 0 : Math.round(Math.pow(10, 9 * rnd()));
  numbers[i] = (rnd() < 0.1 ? -c : c) / 100;
}
const cents = parseAmounts(numbers);

// Phase 1: numbers (the input of JSON and XLSX).
const counter = new DigitCounter();
const tCount = best(RUNS, () => {
  counter.reset();
  counter.addAll(cents);
  return counter;
});
const nums = numbers;
const tParseNum = best(RUNS, () => parseAmounts(nums));
const tProfileNum = best(RUNS, () => profileAmounts(nums));
const tProfileCents = best(RUNS, () => profileCents(cents));

// Per-return path: returns of 30 amounts through one reused counter.
const perReturn = 30;
const returns = Math.floor(Math.min(N, 3_000_000) / perReturn);
const tReturns = best(RUNS, () => {
  let flagged = 0;
  for (let r = 0; r < returns; r++) {
    counter.reset();
    counter.addAll(cents, r * perReturn, (r + 1) * perReturn);
    if (summarizeCounter(counter).verdict !== 'within_expected') flagged++;
  }
  return flagged;
});

// Phase 2: decimal strings (the input of CSV and text). The numbers are dropped first: ten
// million strings on the heap make every garbage collection dearer, and that cost belongs
// to this phase only.
const strings: string[] = new Array<string>(N);
for (let i = 0; i < N; i++) strings[i] = formatCents(cents[i]);
numbers = null;
const tParseStr = best(RUNS, () => parseAmountColumn(strings));
const tParseStrict = best(RUNS, () => parseAmounts(strings));
const tProfileStr = best(RUNS, () => profileAmounts(strings));
const tProfileCentsStr = best(RUNS, () => profileCents(cents));
strings.length = 0;

// Phase 3: amounts of any size (a tenth of N): big integers and scientific notation.
const W = Math.max(1, Math.floor(N / 10));
const wideTexts: string[] = new Array<string>(W);
for (let i = 0; i < W; i++) {
  const lead = String(Math.floor(10 ** (1 + 3 * rnd()))).padEnd(4, '7');
  const zeros = 20 + Math.floor(280 * rnd());
  wideTexts[i] = i % 2 === 0 ? `${lead}${'3'.repeat(zeros)}` : `${lead[0]}.${lead.slice(1)}E+${zeros}`;
}
const tParseWide = best(RUNS, () => parseAmountColumn(wideTexts));
const tProfileWide = best(RUNS, () => profileAmounts(wideTexts));

const pad = (s: string) => s.padEnd(64);
const lines = [
  '',
  `digit engine benchmark: ${N.toLocaleString('en-US')} amounts, one core, best of ${RUNS} (node ${process.version}), ${CPU_CLOCK ? 'CPU time of the process' : 'wall time'}`,
  '',
  `${pad('count digits from cents (first, second, first-two, last-two)')}${tCount.toFixed(3)} s  ${rate(N, tCount)}`,
  `${pad('full profile from cents (all tests, no parsing)')}${tProfileCents.toFixed(3)} s  ${rate(N, tProfileCents)}`,
  `${pad('numbers: parse only')}${tParseNum.toFixed(3)} s  ${rate(N, tParseNum)}`,
  `${pad('numbers: parse + full profile')}${tProfileNum.toFixed(3)} s  ${rate(N, tProfileNum)}   ratio ${(tProfileNum / tParseNum).toFixed(2)}x`,
  `${pad('strings: parse only (any size, cents fast path)')}${tParseStr.toFixed(3)} s  ${rate(N, tParseStr)}`,
  `${pad('strings: parse only (cents only, parseAmounts)')}${tParseStrict.toFixed(3)} s  ${rate(N, tParseStrict)}`,
  `${pad('strings: parse + full profile')}${tProfileStr.toFixed(3)} s  ${rate(N, tProfileStr)}   ratio ${(tProfileStr / tParseStr).toFixed(2)}x`,
  `${pad('  (full profile from cents with the strings on the heap)')}${tProfileCentsStr.toFixed(3)} s  ${rate(N, tProfileCentsStr)}`,
  `${pad(`wide text (${W.toLocaleString('en-US')} amounts of 20-300 digits): parse only`)}${tParseWide.toFixed(3)} s  ${rate(W, tParseWide)}`,
  `${pad('wide text: parse + full profile')}${tProfileWide.toFixed(3)} s  ${rate(W, tProfileWide)}   ratio ${(tProfileWide / tParseWide).toFixed(2)}x`,
  '',
  `per return (${perReturn} amounts, reused DigitCounter, summarizeCounter): ${returns.toLocaleString('en-US')} returns in ${tReturns.toFixed(3)} s, ${(returns / tReturns / 1e3).toFixed(0)} k returns/s`,
  '',
];
process.stdout.write(lines.join('\n'));
if (CPU_CLOCK) process.stdout.write(`best wall times, in order: ${walls.map((w) => w.toFixed(3)).join(', ')} s\n`);
