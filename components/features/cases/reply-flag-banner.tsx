import { useState } from 'react';
import { View } from 'react-native';
import { useSession } from '../../../hooks/use-session';
import type { CaseDetail } from '../../../shared/case-api';
import { colours, radius, space } from '../../theme';
import { Txt } from '../../ui/text';

/**
 * The case's side of the reply flag (issue 14): a taxpayer's reply the case's examiner had not
 * opened, at the top of the case screen. The examiner's own opening clears the flag on the
 * server (the queue row loses it), so the banner keeps what the first read said for as long as
 * this page is open; anyone else sees that the reply still waits for the examiner.
 */
export function ReplyFlagBanner({ d }: { d: CaseDetail }) {
  const caseId = d.id;
  const me = useSession().data?.user.id;
  const since = d.replyUnreadSince ?? null;
  const [kept, setKept] = useState<{ caseId: string; since: string } | null>(null);
  // Remembered during render (not in an effect): the first answer that carries the flag.
  if (since && !(kept && kept.caseId === caseId && kept.since === since)) setKept({ caseId, since });
  const shown = kept && kept.caseId === caseId ? kept.since : since;
  if (!shown) return null;
  const mine = d.assignee?.id === me;
  const when = new Date(shown).toLocaleString();
  return (
    <View
      role="status"
      testID="case-reply-flag"
      style={{
        backgroundColor: colours.alertSoft,
        borderLeftWidth: 4,
        borderLeftColor: colours.alert,
        borderRadius: radius.md,
        padding: space.md,
        gap: 2,
      }}
    >
      <Txt bold tone="alert">
        ● New reply from the taxpayer
      </Txt>
      <Txt variant="small">
        {mine
          ? `Received ${when}. The records are with the document request under Letters; the flag is cleared now that you have opened the case.`
          : `Received ${when}. It stays flagged until ${d.assignee?.name ?? 'the case’s examiner'} opens the case.`}
      </Txt>
    </View>
  );
}
