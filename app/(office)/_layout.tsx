import { Redirect, Slot } from 'expo-router';
import { ActivityIndicator, View } from 'react-native';
import { navFor } from '../../components/features/nav/nav-items';
import { UserBadge } from '../../components/features/auth/user-badge';
import { ROLE_LABELS } from '../../shared/roles';
import { colours } from '../../components/theme';
import { AppShell } from '../../components/ui/app-shell';
import { useSession } from '../../hooks/use-session';

/** Signed-in area: signed-out visitors go to sign-in; navigation shows only the role's screens. */
export default function OfficeLayout() {
  const session = useSession();
  if (session.isPending) {
    return (
      <View style={{ flex: 1, alignItems: 'center', justifyContent: 'center', backgroundColor: colours.paper }}>
        <ActivityIndicator color={colours.ink} />
      </View>
    );
  }
  if (!session.data) return <Redirect href="/sign-in" />;
  const { user } = session.data;
  return (
    <AppShell nav={navFor(user.role)} accessory={<UserBadge user={user} />} who={{ name: user.displayName, role: ROLE_LABELS[user.role] }}>
      <Slot />
    </AppShell>
  );
}
