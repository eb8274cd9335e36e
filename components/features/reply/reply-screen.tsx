/**
 * The taxpayer's reply page (docs/design.md#letters-and-replies): no sign-in, reached by
 * the one-time link in a document-request letter. It names the office, says what is asked and by when, lets
 * the taxpayer choose PDF, JPEG, PNG, CSV or XLSX files and send them with visible progress, and ends
 * in a clear thank-you, or says plainly that the link was used or has expired and whom to
 * contact. It shows nothing else about the case: no TIN, no figures.
 */
import { useLocalSearchParams } from 'expo-router';
import { useRef, useState, type ChangeEvent } from 'react';
import { ActivityIndicator, Platform, Pressable, ScrollView, View } from 'react-native';
import { ApiError } from '../../../hooks/api-client';
import {
  isoToday,
  longDate,
  OFFICE,
  REPLY_FILE_ENDINGS,
  REPLY_FILE_TYPES,
  REPLY_FILE_WORDS,
  REPLY_MAX_FILE_BYTES,
  REPLY_MAX_FILES,
  REPLY_MAX_TOTAL_BYTES,
  replyFileProblem,
  type ReplyReceipt,
  type ReplyRequestDto,
} from '../../../shared/letters';
import { colours, radius, space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { TopBar } from '../../ui/app-shell';
import { useIsWide } from '../../ui/layout';
import { ProgressBar } from '../../ui/progress-bar';
import { Txt } from '../../ui/text';
import { useReplyLink, useUploadReply } from './use-reply';

const MB = 1024 * 1024;
const size = (n: number) => (n >= MB ? `${(n / MB).toFixed(1)} MB` : `${Math.max(1, Math.round(n / 1024))} KB`);
const ACCEPT = [...REPLY_FILE_ENDINGS, ...REPLY_FILE_TYPES].join(',');

/** "1 December 2026 at 22:41" in the taxpayer's own time zone. */
function receivedWhen(iso: string): string {
  const d = new Date(iso);
  return `${longDate(isoToday(d))} at ${String(d.getHours()).padStart(2, '0')}:${String(d.getMinutes()).padStart(2, '0')}`;
}

/**
 * The frame: the office's name on the app's ink bar (the banner landmark), one readable
 * column (the main landmark, focusable so the keyboard can scroll it).
 */
function Frame({ children }: { children: React.ReactNode }) {
  const wide = useIsWide();
  return (
    <View style={{ flex: 1, backgroundColor: colours.paper }}>
      <TopBar>
        <View>
          <Txt variant="lead" bold tone="white">
            {OFFICE.name}
          </Txt>
          <Txt variant="caption" style={{ color: colours.onInkSoft }}>
            {OFFICE.unit}
          </Txt>
        </View>
      </TopBar>
      <ScrollView role="main" tabIndex={0} style={{ flex: 1 }} contentContainerStyle={{ padding: wide ? space.xxl : space.lg }}>
        <View style={{ width: '100%', maxWidth: 680, alignSelf: 'center', gap: space.lg }}>{children}</View>
      </ScrollView>
    </View>
  );
}

/** How to reach the office, shown on every state of the page. */
function Contact({ lead }: { lead: string }) {
  return (
    <Card style={{ gap: space.xs }} testID="reply-contact">
      <Txt bold>{lead}</Txt>
      <Txt>{`Telephone ${OFFICE.phone} (${OFFICE.hours})`}</Txt>
      <Txt>{`E-mail ${OFFICE.email}`}</Txt>
      <Txt tone="soft">{`${OFFICE.name}, ${OFFICE.address.join(', ')}`}</Txt>
    </Card>
  );
}

/** A full-page message (used, expired, not found, thank-you). */
function Notice({ testID, title, tone, children }: { testID: string; title: string; tone: 'ok' | 'warn' | 'alert'; children: React.ReactNode }) {
  const bar = { ok: colours.ok, warn: colours.warn, alert: colours.alert }[tone];
  const bg = { ok: colours.okSoft, warn: colours.warnSoft, alert: colours.alertSoft }[tone];
  return (
    <View
      testID={testID}
      style={{ backgroundColor: bg, borderLeftWidth: 5, borderLeftColor: bar, borderRadius: radius.md, padding: space.xl, gap: space.sm }}
      accessibilityRole="summary"
    >
      <Txt variant="display" bold accessibilityRole="header">
        {title}
      </Txt>
      {children}
    </View>
  );
}

/** The web file picker: a real <input type="file" multiple>, opened by a themed button. */
function FilePicker({ onPick, disabled }: { onPick(files: File[]): void; disabled: boolean }) {
  const input = useRef<HTMLInputElement | null>(null);
  if (Platform.OS !== 'web') return <Txt tone="soft">Please open this link in a web browser to send files.</Txt>;
  return (
    <View>
      <input
        ref={input}
        type="file"
        multiple
        accept={ACCEPT}
        data-testid="reply-file-input"
        aria-label="Choose files to send"
        style={{ display: 'none' }}
        onChange={(e: ChangeEvent<HTMLInputElement>) => {
          onPick(Array.from(e.target.files ?? []));
          // Let the same file be chosen again after it was removed.
          e.target.value = '';
        }}
      />
      <Button
        kind="secondary"
        label="Choose files"
        testID="reply-choose"
        disabled={disabled}
        onPress={() => input.current?.click()}
        style={{ alignSelf: 'flex-start' }}
      />
    </View>
  );
}

/** The upload's progress: the shared bar with the share in figures under it. */
function UploadProgress({ share }: { share: number }) {
  const pct = Math.round(share * 100);
  return (
    <View style={{ gap: space.xs }} testID="reply-progress">
      <ProgressBar value={share} label="Sending your files" />
      <Txt variant="small" tone="soft" figures>{`Sending… ${pct} %`}</Txt>
    </View>
  );
}

function RequestForm({
  token,
  request,
  onDone,
  onClosed,
}: {
  token: string;
  request: ReplyRequestDto;
  onDone(r: ReplyReceipt): void;
  onClosed(state: 'answered' | 'expired'): void;
}) {
  const [files, setFiles] = useState<File[]>([]);
  const [progress, setProgress] = useState(0);
  const upload = useUploadReply(token, setProgress);
  const problems = files.map((f) => replyFileProblem(f)).filter((p): p is string => !!p);
  const total = files.reduce((s, f) => s + f.size, 0);
  if (files.length > REPLY_MAX_FILES) problems.push(`Choose at most ${REPLY_MAX_FILES} files; remove ${files.length - REPLY_MAX_FILES}.`);
  if (total > REPLY_MAX_TOTAL_BYTES) problems.push(`The files together are ${size(total)}; send at most ${REPLY_MAX_TOTAL_BYTES / MB} MB in one reply.`);
  const pick = (more: File[]) => {
    upload.reset();
    // Adding never drops what was chosen before; the same file twice is kept once.
    setFiles((prev) => [...prev, ...more.filter((m) => !prev.some((p) => p.name === m.name && p.size === m.size))]);
  };
  const [complete, setComplete] = useState(false);
  const sentBefore = request.received.length > 0;
  const send = (finishOnly = false) => {
    setProgress(0);
    upload.mutate(
      { files: finishOnly ? [] : files, complete: finishOnly || complete },
      {
        onSuccess: onDone,
        onError: (e) => {
          if (e instanceof ApiError && e.status === 410) {
            const state = (e.body as { state?: string } | null)?.state;
            onClosed(state === 'answered' ? 'answered' : 'expired');
          }
        },
      },
    );
  };

  return (
    <>
      <View style={{ gap: space.sm }}>
        <Txt variant="display" bold accessibilityRole="header">
          Records requested
        </Txt>
        <Txt variant="lead">{`Dear ${request.taxpayerName},`}</Txt>
        <Txt>We are reviewing your income-tax return and would like to see the records below. Please send copies through this page.</Txt>
      </View>

      <Card style={{ gap: space.md }} testID="reply-request">
        <Txt bold>Please send us copies of:</Txt>
        <View style={{ gap: space.sm }}>
          {request.items.map((item, i) => (
            <View key={i} style={{ flexDirection: 'row', gap: space.sm }}>
              <Txt bold tone="brass" figures style={{ minWidth: 22 }}>{`${i + 1}.`}</Txt>
              <Txt style={{ flex: 1 }} testID={`reply-item-${i}`}>
                {item}
              </Txt>
            </View>
          ))}
        </View>
        <View style={{ backgroundColor: colours.paper, borderLeftWidth: 4, borderLeftColor: colours.ink, padding: space.md, borderRadius: radius.sm }}>
          <Txt variant="lead" bold testID="reply-due">{`By ${longDate(request.dueDate)}`}</Txt>
          <Txt variant="small" tone="soft">
            The link works until the end of that day.
          </Txt>
        </View>
        <Txt variant="small" tone="soft">
          This is a request for records, not a decision. We have not reached any conclusion about your return.
        </Txt>
      </Card>

      {sentBefore && (
        <Card style={{ gap: space.sm }} testID="reply-received">
          <Txt variant="title" bold>
            Already received
          </Txt>
          {request.received.map((r) => (
            <View key={r.part} style={{ gap: 2 }}>
              <Txt variant="small" bold>{`Send ${r.part}, ${receivedWhen(r.at)}`}</Txt>
              {r.files.map((f, i) => (
                <Txt key={i} variant="small" figures>{`• ${f.fileName} (${size(f.size)})`}</Txt>
              ))}
            </View>
          ))}
          <Txt variant="small" tone="soft">
            {`You can send more until the end of ${longDate(request.dueDate)}. When you have sent everything, tell us below, so we can start looking at your records.`}
          </Txt>
        </Card>
      )}

      <Card style={{ gap: space.md }} testID="reply-upload">
        <Txt variant="title" bold>
          {sentBefore ? 'Send more files' : 'Send your files'}
        </Txt>
        <Txt variant="small" tone="soft">
          {`${REPLY_FILE_WORDS}; up to ${REPLY_MAX_FILES} files of ${REPLY_MAX_FILE_BYTES / MB} MB at a time. You can send everything at once or in parts until the due date; we confirm each send by e-mail. If a record does not exist, a short note (as a PDF or a photo) explaining why is welcome.`}
        </Txt>
        <FilePicker onPick={pick} disabled={upload.isPending} />
        {files.length > 0 && (
          <View style={{ gap: space.xs }} testID="reply-files">
            {files.map((f, i) => {
              const problem = replyFileProblem(f);
              return (
                <View
                  key={`${f.name}-${i}`}
                  style={{
                    flexDirection: 'row',
                    alignItems: 'center',
                    gap: space.sm,
                    paddingVertical: space.xs,
                    borderBottomWidth: 1,
                    borderBottomColor: colours.line,
                  }}
                >
                  <View style={{ flex: 1 }}>
                    <Txt numberOfLines={1}>{f.name}</Txt>
                    <Txt variant="caption" tone={problem ? 'alert' : 'faint'} figures={!problem}>
                      {problem ?? size(f.size)}
                    </Txt>
                  </View>
                  <Pressable
                    accessibilityRole="button"
                    accessibilityLabel={`Remove ${f.name}`}
                    disabled={upload.isPending}
                    onPress={() => setFiles(files.filter((_x, k) => k !== i))}
                    style={{ padding: space.xs }}
                  >
                    <Txt variant="small" bold tone="brass">
                      Remove
                    </Txt>
                  </Pressable>
                </View>
              );
            })}
          </View>
        )}
        {problems.length > 0 && (
          <Txt variant="small" tone="alert" accessibilityRole="alert" testID="reply-problems">
            {problems.join(' ')}
          </Txt>
        )}
        {upload.isPending && <UploadProgress share={progress} />}
        {upload.error && !(upload.error instanceof ApiError && upload.error.status === 410) && (
          <Txt tone="alert" accessibilityRole="alert" testID="reply-error">
            {upload.error.message}
          </Txt>
        )}
        <Pressable
          role="checkbox"
          aria-checked={complete}
          accessibilityLabel="This is everything I have to send"
          onPress={() => setComplete(!complete)}
          disabled={upload.isPending}
          testID="reply-complete"
          style={{ flexDirection: 'row', alignItems: 'center', gap: space.sm, paddingVertical: space.xs }}
        >
          <View
            style={{
              width: 22,
              height: 22,
              borderRadius: radius.sm,
              borderWidth: 2,
              borderColor: colours.control,
              backgroundColor: complete ? colours.ink : colours.white,
              alignItems: 'center',
              justifyContent: 'center',
            }}
          >
            {complete && (
              <Txt tone="white" bold variant="small">
                ✓
              </Txt>
            )}
          </View>
          <Txt style={{ flex: 1 }}>This is everything I have to send (the link then closes)</Txt>
        </Pressable>
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
          <Button
            testID="reply-send"
            label={files.length ? `Send ${files.length} file${files.length === 1 ? '' : 's'}` : 'Send files'}
            disabled={files.length === 0 || problems.length > 0}
            busy={upload.isPending}
            onPress={() => send()}
          />
          {sentBefore && files.length === 0 && (
            <Button kind="secondary" testID="reply-finish" label="I have sent everything" busy={upload.isPending} onPress={() => send(true)} />
          )}
        </View>
      </Card>
      <Contact lead="Questions, or need more time? Contact us before the due date." />
    </>
  );
}

/** The reply page for the token in the address. */
export function ReplyScreen() {
  const { token: raw } = useLocalSearchParams<{ token: string }>();
  const token = Array.isArray(raw) ? raw[0] : (raw ?? '');
  const link = useReplyLink(token);
  const [receipt, setReceipt] = useState<ReplyReceipt | null>(null);
  const [closedNow, setClosedNow] = useState<'answered' | 'expired' | null>(null);

  if (receipt) {
    const more = () => {
      setReceipt(null);
      void link.refetch();
    };
    return (
      <Frame>
        <Notice testID="reply-thanks" title={receipt.complete ? 'Thank you, we have everything' : 'Thank you, we have these files'} tone="ok">
          {receipt.received.length > 0 ? (
            <Txt>{`We received ${receipt.received.length} file${receipt.received.length === 1 ? '' : 's'} on ${receivedWhen(receipt.receivedAt)}:`}</Txt>
          ) : (
            <Txt>{`We noted on ${receivedWhen(receipt.receivedAt)} that you have sent everything.`}</Txt>
          )}
          <View style={{ gap: 2 }}>
            {receipt.received.map((f, i) => (
              <Txt key={i} figures variant="small">{`• ${f.fileName} (${size(f.size)})`}</Txt>
            ))}
          </View>
          <Txt>
            {receipt.acknowledgement === 'mailed'
              ? 'We have sent you an e-mail confirming this send.'
              : 'We could not e-mail you a confirmation just now; this page is your receipt, and your files are safely with us.'}
          </Txt>
          <Txt>
            {receipt.complete
              ? 'There is nothing more you need to do. The person looking at your return will contact you if anything else is needed. This link is now closed.'
              : `You can send more files through this link until the end of ${longDate(receipt.dueDate)}. When you have sent everything, please tell us on this page.`}
          </Txt>
          {!receipt.complete && (
            <Button testID="reply-more" label="Send more, or tell us that is everything" onPress={more} style={{ alignSelf: 'flex-start' }} />
          )}
        </Notice>
        <Contact lead="If you have a question:" />
      </Frame>
    );
  }

  const state = closedNow ?? (link.data && link.data.state !== 'open' ? link.data.state : null);
  if (state === 'answered') {
    return (
      <Frame>
        <Notice testID="reply-used" title="This link is closed" tone="warn">
          <Txt>We have received your reply through this link, and it no longer accepts files. Thank you for sending it.</Txt>
          <Txt>If you have more to send, please contact us and we will tell you how.</Txt>
        </Notice>
        <Contact lead="Contact us:" />
      </Frame>
    );
  }
  if (state === 'expired') {
    return (
      <Frame>
        <Notice testID="reply-expired" title="This link has expired" tone="warn">
          <Txt>The due date for this request has passed, so the link no longer accepts files.</Txt>
          <Txt>If you still want to send the records, or need more time, please contact us. We will help.</Txt>
        </Notice>
        <Contact lead="Contact us:" />
      </Frame>
    );
  }
  if (link.isPending) {
    return (
      <Frame>
        <View style={{ paddingVertical: space.xxxl, alignItems: 'center' }}>
          <ActivityIndicator color={colours.ink} />
        </View>
      </Frame>
    );
  }
  if (link.error || !link.data) {
    const notFound = link.error instanceof ApiError && link.error.status === 404;
    return (
      <Frame>
        <Notice testID="reply-not-found" title={notFound ? 'We could not find this link' : 'This page could not be loaded'} tone="alert">
          <Txt>
            {notFound
              ? 'Please check that the whole link was copied from the e-mail or letter. Links are long and easy to cut short.'
              : 'Please try again in a few minutes.'}
          </Txt>
        </Notice>
        <Contact lead="If it still does not work, contact us:" />
      </Frame>
    );
  }
  return (
    <Frame>
      <RequestForm token={token} request={link.data as ReplyRequestDto} onDone={setReceipt} onClosed={setClosedNow} />
    </Frame>
  );
}
