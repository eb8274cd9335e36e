import { useRouter } from 'expo-router';
import { Pressable, View } from 'react-native';
import { useSignOut } from '../../../hooks/use-session';
import type { SessionUserDto } from '../../../shared/auth';
import { ROLE_LABELS } from '../../../shared/roles';
import { colours, space } from '../../theme';
import { useIsWide } from '../../ui/layout';
import { Txt } from '../../ui/text';

/** Who is signed in, and the way out. */
export function UserBadge({ user }: { user: SessionUserDto }) {
  const signOut = useSignOut();
  const router = useRouter();
  const wide = useIsWide();
  return (
    <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.md }}>
      {wide && (
        <View style={{ alignItems: 'flex-end' }}>
          <Txt variant="small" bold tone="white" testID="signed-in-name">
            {user.displayName}
          </Txt>
          <Txt variant="caption" style={{ color: colours.onInkSoft }} testID="signed-in-role">
            {ROLE_LABELS[user.role]}
          </Txt>
        </View>
      )}
      <Pressable
        testID="sign-out"
        role="button"
        onPress={() => signOut.mutate(undefined, { onSettled: () => router.replace('/sign-in') })}
        style={{ borderWidth: 1, borderColor: '#6F8A8C', borderRadius: 6, paddingHorizontal: space.sm, paddingVertical: 4 }}
      >
        <Txt variant="small" tone="white">
          Sign out
        </Txt>
      </Pressable>
    </View>
  );
}
