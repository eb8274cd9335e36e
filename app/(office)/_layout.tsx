import { Slot } from 'expo-router';
import { AppShell } from '../../components/ui/app-shell';

/** Signed-in area frame. (Sign-in redirects arrive with the sign-in feature.) */
export default function OfficeLayout() {
  return (
    <AppShell
      nav={[
        { href: '/', label: 'Status' },
        { href: '/about', label: 'About' },
      ]}
    >
      <Slot />
    </AppShell>
  );
}
