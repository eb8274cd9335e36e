import { Redirect } from 'expo-router';
import { useSession } from '../../../hooks/use-session';
import { START_PATH } from './start-path';

/**
 * The signed-in area's root: each role goes straight to where its day starts (issue 14). The
 * system status it used to show lives under About (`/status`). The office layout has already
 * sent signed-out visitors to sign-in and waited for the session.
 */
export function StartRedirect() {
  const session = useSession();
  if (!session.data) return null;
  return <Redirect href={START_PATH[session.data.user.role]} />;
}
