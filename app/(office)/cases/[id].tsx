import { CaseScreen } from '../../../components/features/cases/case-screen';
import { ReplyFlagBanner } from '../../../components/features/cases/reply-flag-banner';

/** One case: the reply flag (issue 14) above the case screen. */
export default function CasePage() {
  return (
    <>
      <ReplyFlagBanner />
      <CaseScreen />
    </>
  );
}
