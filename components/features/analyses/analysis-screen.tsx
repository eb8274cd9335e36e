/**
 * "Digit analysis" (examiner, supervisor; issue 15): choose where the amounts come from (a
 * file from this computer; a pool of the returns on file: one preparer's returns, one line
 * code in one batch or tax year, one taxpayer's years; or, opened from a case, a CSV or XLSX
 * file the taxpayer sent), and read the four digit tests as charts against the expected curve
 * with their figures, the largest deviations with Z, summation, repeated amounts, second order
 * and round share. Files and pools are read on the server, so the page stays free. Opened
 * from a case (`/analysis?caseId=…`), a pool or reply file can be kept with the case as a
 * working paper.
 */
import * as DocumentPicker from 'expo-document-picker';
import { Link, useLocalSearchParams } from 'expo-router';
import { useState } from 'react';
import { ScrollView, View } from 'react-native';
import { dataFileEnding, type AnalysisPool, type PoolChoices } from '../../../shared/analyses';
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
import { LINE_CODE_LIST, type LineCode } from '../../../shared/returns/line-codes';
import { space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { ChoiceRow } from '../../ui/choice-row';
import { Field } from '../../ui/field';
import { ProgressBar } from '../../ui/progress-bar';
import { Txt } from '../../ui/text';
import { DigitChart } from '../cases/digit-chart';
import { useCase } from '../cases/use-cases';
import { useLetters } from '../letters/use-letters';
import { TestChart } from './test-chart';
import { useAnalysePool, usePoolChoices, useSaveAnalysis } from './use-analyses';
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

type SourceKind = 'file' | 'reply' | 'pool';
type PoolKind = AnalysisPool['kind'];

/** Most preparers the picker shows at once; a filter narrows the rest. */
const PREPARERS_SHOWN = 12;

/** The pool pickers: kind, then its preparer, line code, batch or tax year. */
function PoolPicker({
  choices,
  caseTaxpayer,
  onPool,
}: {
  choices: PoolChoices;
  caseTaxpayer: { id: string; name: string } | null;
  onPool: (pool: AnalysisPool | null) => void;
}) {
  const [kind, setKind] = useState<PoolKind | undefined>(undefined);
  const [filter, setFilter] = useState('');
  const [preparerId, setPreparerId] = useState<string | undefined>(undefined);
  const [preparerYear, setPreparerYear] = useState<string>('all');
  const [lineCode, setLineCode] = useState<LineCode | undefined>(undefined);
  const [scope, setScope] = useState<'batch' | 'year'>('batch');
  const [batchId, setBatchId] = useState<string | undefined>(undefined);
  const [taxYear, setTaxYear] = useState<string | undefined>(undefined);

  function emit(next: {
    kind?: PoolKind;
    preparerId?: string;
    preparerYear?: string;
    lineCode?: LineCode;
    scope?: 'batch' | 'year';
    batchId?: string;
    taxYear?: string;
  }) {
    const v = { kind, preparerId, preparerYear, lineCode, scope, batchId, taxYear, ...next };
    if (v.kind === 'preparer' && v.preparerId)
      onPool({ kind: 'preparer', preparerId: v.preparerId, ...(v.preparerYear === 'all' ? {} : { taxYear: Number(v.preparerYear) }) });
    else if (v.kind === 'lineCode' && v.lineCode && v.scope === 'batch' && v.batchId) onPool({ kind: 'lineCode', lineCode: v.lineCode, batchId: v.batchId });
    else if (v.kind === 'lineCode' && v.lineCode && v.scope === 'year' && v.taxYear)
      onPool({ kind: 'lineCode', lineCode: v.lineCode, taxYear: Number(v.taxYear) });
    else if (v.kind === 'taxpayer' && caseTaxpayer) onPool({ kind: 'taxpayer', taxpayerId: caseTaxpayer.id });
    else onPool(null);
  }
  const shown = choices.preparers.filter((p) => p.code.toLowerCase().includes(filter.trim().toLowerCase()));
  const chosen = choices.preparers.find((p) => p.id === preparerId);
  const kinds: { value: PoolKind; label: string }[] = [
    { value: 'preparer', label: "One preparer's returns" },
    { value: 'lineCode', label: 'One line code' },
    ...(caseTaxpayer ? [{ value: 'taxpayer' as const, label: `${caseTaxpayer.name}: all years` }] : []),
  ];
  const years = choices.taxYears.map((y) => ({ value: String(y), label: String(y) }));
  return (
    <View style={{ gap: space.md }} testID="analysis-pool">
      <ChoiceRow
        label="Pool"
        options={kinds}
        value={kind}
        onChange={(k) => {
          setKind(k);
          emit({ kind: k });
        }}
        testID="analysis-pool-kind"
      />
      {kind === 'preparer' && (
        <>
          <Field label="Find a preparer by code" value={filter} onChangeText={setFilter} placeholder="PRP-" testID="analysis-preparer-filter" />
          {shown.length === 0 ? (
            <Txt tone="soft">No preparer code holds that text.</Txt>
          ) : (
            <ChoiceRow
              label={`Preparer (${shown.length > PREPARERS_SHOWN ? `first ${PREPARERS_SHOWN} of ${shown.length}; type to narrow` : `${shown.length}`})`}
              options={shown.slice(0, PREPARERS_SHOWN).map((p) => ({ value: p.id, label: `${p.code} (${p.returns} returns)` }))}
              value={preparerId}
              onChange={(id) => {
                setPreparerId(id);
                emit({ preparerId: id });
              }}
              testID="analysis-preparer"
            />
          )}
          {chosen && <Txt variant="small">{`Chosen: ${chosen.code}`}</Txt>}
          <ChoiceRow
            label="Tax year"
            options={[{ value: 'all', label: 'All years' }, ...years]}
            value={preparerYear}
            onChange={(y) => {
              setPreparerYear(y);
              emit({ preparerYear: y });
            }}
            testID="analysis-preparer-year"
          />
        </>
      )}
      {kind === 'lineCode' && (
        <>
          <ChoiceRow
            label="Line code"
            options={LINE_CODE_LIST.map((d) => ({ value: d.code, label: d.label }))}
            value={lineCode}
            onChange={(c) => {
              setLineCode(c);
              emit({ lineCode: c });
            }}
            testID="analysis-line-code"
          />
          <ChoiceRow
            label="In"
            options={[
              { value: 'batch', label: 'One batch' },
              { value: 'year', label: 'One tax year' },
            ]}
            value={scope}
            onChange={(v) => {
              setScope(v);
              emit({ scope: v });
            }}
            testID="analysis-line-scope"
          />
          {scope === 'batch' ? (
            <ChoiceRow
              label="Batch"
              options={choices.batches.map((b) => ({ value: b.id, label: b.label }))}
              value={batchId}
              onChange={(id) => {
                setBatchId(id);
                emit({ batchId: id });
              }}
              testID="analysis-batch"
            />
          ) : (
            <ChoiceRow
              label="Tax year"
              options={years}
              value={taxYear}
              onChange={(y) => {
                setTaxYear(y);
                emit({ taxYear: y });
              }}
              testID="analysis-tax-year"
            />
          )}
        </>
      )}
    </View>
  );
}

/** The digit analysis screen. */
export function AnalysisScreen() {
  const params = useLocalSearchParams<{ caseId?: string }>();
  const caseId = (Array.isArray(params.caseId) ? params.caseId[0] : params.caseId) ?? '';
  const theCase = useCase(caseId);
  const letters = useLetters(caseId, !!caseId);
  const canKeep = !!caseId && !!theCase.data?.actions.canAct;
  const replyFiles = (letters.data?.items ?? []).flatMap((l) => l.documentRequest?.uploads ?? []).filter((u) => dataFileEnding(u.contentType) !== null);
  const [source, setSource] = useState<SourceKind>('file');
  const choices = usePoolChoices(source === 'pool');
  const analysePool = useAnalysePool();
  const save = useSaveAnalysis(caseId);
  const [pool, setPool] = useState<AnalysisPool | null>(null);
  const [uploadId, setUploadId] = useState<string | undefined>(undefined);
  const [file, setFile] = useState<PickedAmountsFile | null>(null);
  const [column, setColumn] = useState('');
  const [by, setBy] = useState('');
  const [progress, setProgress] = useState<number | null | undefined>(undefined);
  const [error, setError] = useState<string | null>(null);
  const [result, setResult] = useState<DigitResultJson | null>(null);
  const [label, setLabel] = useState<string | null>(null);
  const busy = progress !== undefined || analysePool.isPending || save.isPending;

  function choose(s: SourceKind) {
    setSource(s);
    // The pool picker starts afresh when shown again, so the pool it gave is forgotten.
    setPool(null);
    setResult(null);
    setLabel(null);
    setError(null);
  }

  async function pick() {
    const r = await DocumentPicker.getDocumentAsync({ multiple: false, copyToCacheDirectory: false });
    const a = r.assets?.[0];
    if (r.canceled || !a?.file) return;
    setFile({ name: a.name, size: a.size ?? a.file.size, file: a.file });
    setResult(null);
    setError(null);
  }

  async function run() {
    setError(null);
    setLabel(null);
    try {
      if (source === 'file') {
        if (!file) return;
        setResult(await uploadForAnalysis(file, column.trim() || null, by.trim() || null, setProgress));
        setLabel(file.name);
      } else if (source === 'pool') {
        if (!pool) return;
        const a = await analysePool.mutateAsync(pool);
        setResult(a.result);
        setLabel(a.description);
      }
    } catch (e) {
      setError(e instanceof Error ? e.message : String(e));
    } finally {
      setProgress(undefined);
    }
  }

  async function keep() {
    setError(null);
    setLabel(null);
    try {
      const body =
        source === 'pool' && pool
          ? { source: { pool } }
          : source === 'reply' && uploadId
            ? { source: { uploadId }, column: column.trim() || null, by: by.trim() || null }
            : null;
      if (!body) return;
      const saved = await save.mutateAsync(body);
      setResult(saved.result);
      setLabel(`${saved.sourceLabel}: kept with the case`);
    } catch (e) {
      setError(e instanceof Error ? e.message : String(e));
    }
  }

  const sources: { value: SourceKind; label: string }[] = [
    { value: 'file', label: 'A file from this computer' },
    ...(caseId ? [{ value: 'reply' as const, label: 'A received reply file' }] : []),
    { value: 'pool', label: 'A pool of the returns on file' },
  ];
  const caseTaxpayer = theCase.data ? { id: theCase.data.taxpayer.id, name: theCase.data.taxpayer.name } : null;
  const r = result;
  return (
    <ScrollView contentContainerStyle={{ gap: space.lg, paddingBottom: space.xl }} testID="analysis-screen">
      <Txt variant="display" bold role="heading" aria-level={1}>
        Digit analysis
      </Txt>
      <Txt tone="soft">{CAUTIONS[0]} A departure selects figures for a look and proves nothing.</Txt>
      {caseId && theCase.data && (
        <View style={{ gap: space.xs }} testID="analysis-case">
          <Txt>{`For case ${theCase.data.return.returnRef} (${theCase.data.taxpayer.name}).`}</Txt>
          <Link href={{ pathname: '/cases/[id]', params: { id: caseId } }}>
            <Txt tone="brass" bold>
              ← Back to the case
            </Txt>
          </Link>
        </View>
      )}
      <Card style={{ gap: space.md }}>
        <ChoiceRow label="Amounts from" options={sources} value={source} onChange={choose} testID="analysis-source" />
        {source === 'file' && (
          <>
            <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm, alignItems: 'center' }}>
              <Button kind="secondary" label={file ? 'Choose another file' : 'Choose a file'} onPress={() => void pick()} testID="analysis-pick" />
              <Txt testID="analysis-file-name">
                {file ? `${file.name} (${(file.size / 1024).toFixed(0)} KB)` : 'A text file (one amount a line), or a CSV or XLSX file.'}
              </Txt>
            </View>
          </>
        )}
        {source === 'reply' &&
          (replyFiles.length === 0 ? (
            <Txt tone="soft" testID="analysis-no-reply-files">
              {letters.isPending ? 'Looking for received files…' : 'No CSV or XLSX file has come in with a reply on this case yet.'}
            </Txt>
          ) : (
            <ChoiceRow
              label="Received reply file"
              options={replyFiles.map((f) => ({ value: f.id, label: f.fileName }))}
              value={uploadId}
              onChange={setUploadId}
              testID="analysis-reply-file"
            />
          ))}
        {(source === 'file' || source === 'reply') && (
          <>
            <Field label="Amount column (CSV or XLSX)" value={column} onChangeText={setColumn} placeholder="amount" testID="analysis-column-field" />
            <Field label="Split by (optional)" value={by} onChangeText={setBy} placeholder="account or month" testID="analysis-by-field" />
          </>
        )}
        {source === 'pool' &&
          (choices.data ? (
            <PoolPicker choices={choices.data} caseTaxpayer={caseTaxpayer} onPool={setPool} />
          ) : choices.isError ? (
            <Txt tone="alert">{choices.error.message}</Txt>
          ) : (
            <Txt tone="soft">Loading the preparers and batches…</Txt>
          ))}
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
          {source !== 'reply' && (
            <Button
              label="Analyse"
              disabled={source === 'file' ? !file : !pool}
              busy={busy && !save.isPending}
              onPress={() => void run()}
              testID="analysis-run"
            />
          )}
          {canKeep && source !== 'file' && (
            <Button
              kind={source === 'reply' ? 'primary' : 'secondary'}
              label="Analyse and keep with the case"
              disabled={source === 'pool' ? !pool : !uploadId}
              busy={save.isPending}
              onPress={() => void keep()}
              testID="analysis-keep"
            />
          )}
        </View>
        {progress !== undefined && (
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
          {label && (
            <Txt bold accessibilityRole="alert" testID="analysis-source-label">
              {label}
            </Txt>
          )}
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
