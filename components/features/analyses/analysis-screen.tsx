/**
 * "Digit analysis" (examiner, supervisor; issue 15): upload a text, CSV or XLSX file, choose
 * the amount column and optionally a column to split by, and read the four digit tests as
 * charts against the expected curve with their figures, the largest deviations with Z,
 * summation, repeated amounts, second order and round share. The file is read on the server
 * (its reading thread), so the page only shows the upload's progress and stays free.
 */
import * as DocumentPicker from 'expo-document-picker';
import { useState } from 'react';
import { ScrollView, View } from 'react-native';
import { CAUTIONS } from '../../../shared/cautions';
import {
  DIGIT_TEST_TITLES as TITLES,
  fixedOrDash as fixed,
  goodnessWords,
  groupsByZ,
  largestDeviations,
  pValueText as pv,
  percentOrDash as pct,
} from '../../../shared/digits/words';
import type { DigitTestName } from '../../../shared/digits/expected';
import type { DigitResultJson } from '../../../shared/digits/schema';
import { space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { Field } from '../../ui/field';
import { ProgressBar } from '../../ui/progress-bar';
import { Txt } from '../../ui/text';
import { DigitChart } from '../cases/digit-chart';
import { TestChart } from './test-chart';
import { uploadForAnalysis, type PickedAmountsFile } from './use-digit-analysis';

const VERDICT: Record<string, string> = {
  within_expected: 'within the expected range for this many amounts',
  elevated: 'above the expected range for this many amounts',
  high: 'well above the expected range for this many amounts',
  too_few: 'too few amounts to judge',
};

function TestBlock({ test, r }: { test: DigitTestName; r: DigitResultJson }) {
  const t = r[test];
  const s = r.sizeAwareByTest[test];
  const caption =
    t.conformity === 'too_few'
      ? `n = ${t.n.toLocaleString('en-GB')} · MAD ${fixed(t.mad, 4)}: ${VERDICT[s.verdict]} (expected ${fixed(s.expectedMad, 4)} ± ${fixed(s.sdMad, 4)}, z ${fixed(s.zScore, 2)})`
      : `n = ${t.n.toLocaleString('en-GB')} · MAD ${fixed(t.mad, 4)}: ${t.conformity} (published conformity range)`;
  // Only shown when the test has amounts (n > 0).
  const top = t.n > 0 ? largestDeviations(test, t).map((d) => `${d.label}: ${pct(d.observed)} vs ${pct(d.expected)} (Z ${d.z.toFixed(2)})`) : [];
  return (
    <Card style={{ gap: space.sm, flexBasis: 300, flexGrow: 1, minWidth: 0 }} testID={`analysis-${test}`}>
      {test === 'firstDigit' ? (
        <DigitChart counts={t.counts} title={TITLES[test]} caption={caption} />
      ) : (
        <TestChart test={test} title={TITLES[test]} caption={caption} counts={t.counts} expected={t.expected} />
      )}
      {t.n > 0 && (
        <>
          <Txt variant="small">{`Chi-square ${fixed(t.chiSquare, 2)}, df ${t.df}, p ${pv(t.pValue)}${t.chiSquareValid ? '' : ' (expected counts below 5)'}`}</Txt>
          <Txt variant="small">{`KS ${fixed(t.ks, 4)} (${goodnessWords(t.ksVerdict)}) · Kuiper ${fixed(t.kuiper, 4)} (${goodnessWords(t.kuiperVerdict)})`}</Txt>
          <Txt variant="small" tone="soft">{`Largest deviations: ${top.join(' · ')}`}</Txt>
        </>
      )}
    </Card>
  );
}

/** The digit analysis screen. */
export function AnalysisScreen() {
  const [file, setFile] = useState<PickedAmountsFile | null>(null);
  const [column, setColumn] = useState('');
  const [by, setBy] = useState('');
  const [progress, setProgress] = useState<number | null | undefined>(undefined);
  const [error, setError] = useState<string | null>(null);
  const [result, setResult] = useState<DigitResultJson | null>(null);
  const busy = progress !== undefined;

  async function pick() {
    const r = await DocumentPicker.getDocumentAsync({ multiple: false, copyToCacheDirectory: false });
    const a = r.assets?.[0];
    if (r.canceled || !a?.file) return;
    setFile({ name: a.name, size: a.size ?? a.file.size, file: a.file });
    setResult(null);
    setError(null);
  }

  async function run() {
    if (!file) return;
    setError(null);
    try {
      setResult(await uploadForAnalysis(file, column.trim() || null, by.trim() || null, setProgress));
    } catch (e) {
      setError(e instanceof Error ? e.message : String(e));
    } finally {
      setProgress(undefined);
    }
  }

  const r = result;
  return (
    <ScrollView contentContainerStyle={{ gap: space.lg, paddingBottom: space.xl }} testID="analysis-screen">
      <Txt variant="display" bold role="heading" aria-level={1}>
        Digit analysis
      </Txt>
      <Txt tone="soft">{CAUTIONS[0]} A departure selects figures for a look and proves nothing.</Txt>
      <Card style={{ gap: space.md }}>
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm, alignItems: 'center' }}>
          <Button kind="secondary" label={file ? 'Choose another file' : 'Choose a file'} onPress={() => void pick()} testID="analysis-pick" />
          <Txt testID="analysis-file-name">
            {file ? `${file.name} (${(file.size / 1024).toFixed(0)} KB)` : 'A text file (one amount a line), or a CSV or XLSX file.'}
          </Txt>
        </View>
        <Field label="Amount column (CSV or XLSX)" value={column} onChangeText={setColumn} placeholder="amount" testID="analysis-column-field" />
        <Field label="Split by (optional)" value={by} onChangeText={setBy} placeholder="account or month" testID="analysis-by-field" />
        <Button label="Analyse" disabled={!file} busy={busy} onPress={() => void run()} testID="analysis-run" />
        {busy && (
          <View style={{ gap: space.xs }}>
            <ProgressBar value={progress ?? null} label="Sending and reading the file" testID="analysis-progress" />
            <Txt variant="small" tone="soft">
              {progress === null ? 'Reading the amounts on the server…' : `Sending: ${Math.round((progress ?? 0) * 100)} %`}
            </Txt>
          </View>
        )}
        {error && (
          <Txt tone="alert" accessibilityRole="alert" testID="analysis-error">
            {error}
          </Txt>
        )}
      </Card>
      {r && (
        <View style={{ gap: space.lg }} testID="analysis-result">
          <Txt
            bold
          >{`${r.count.toLocaleString('en-GB')} amounts (${r.positives.count.toLocaleString('en-GB')} positive, ${r.negatives.count.toLocaleString('en-GB')} negative; ${r.excluded[0].count.toLocaleString('en-GB')} zero)`}</Txt>
          <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.lg }}>
            {(['firstDigit', 'secondDigit', 'firstTwo', 'lastTwo'] as const).map((t) => (
              <TestBlock key={t} test={t} r={r} />
            ))}
          </View>
          <Card style={{ gap: space.xs }}>
            <Txt bold>Other digit figures</Txt>
            <Txt variant="small">{`Summation (share of the total by first two digits; 1.1 % each expected): ${r.summation.largest.map((g) => `${g.digits} ${pct(g.share)}`).join(' · ') || '—'}; MAD ${fixed(r.summation.mad, 5)}`}</Txt>
            <Txt variant="small">{`Repeated amounts: ${r.duplicates.length ? r.duplicates.map((d) => `${d.amount} ×${d.count}`).join(' · ') : 'none'}`}</Txt>
            <Txt variant="small">{`Second order (differences of sorted amounts, n = ${r.secondOrder.n.toLocaleString('en-GB')}): MAD ${fixed(r.secondOrder.mad, 5)}`}</Txt>
            <Txt variant="small">{`Round amounts: ${r.roundShare.count.toLocaleString('en-GB')} of ${r.roundShare.n.toLocaleString('en-GB')} amounts of 1,000 or more end in 00 (${pct(r.roundShare.share)}; 1.0 % expected; P ${pv(r.roundShare.pValue)})`}</Txt>
          </Card>
          {r.split && (
            <Card style={{ gap: space.xs }} testID="analysis-split">
              <Txt bold>{`By ${r.split.column} (${r.split.groups.length} groups; first digit, highest size-aware z first)`}</Txt>
              {groupsByZ(r.split.groups)
                .slice(0, 50)
                .map((g) => (
                  <Txt
                    key={g.name}
                    variant="small"
                  >{`${g.name || '(blank)'}: ${g.count.toLocaleString('en-GB')} amounts · MAD ${fixed(g.firstDigit.mad, 4)} · z ${fixed(g.sizeAware.zScore, 2)} · ${VERDICT[g.sizeAware.verdict]}`}</Txt>
                ))}
            </Card>
          )}
        </View>
      )}
    </ScrollView>
  );
}
