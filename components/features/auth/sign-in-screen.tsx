import { zodResolver } from '@hookform/resolvers/zod';
import { Redirect } from 'expo-router';
import { useForm } from 'react-hook-form';
import { ScrollView, View } from 'react-native';
import { useSession, useSignIn } from '../../../hooks/use-session';
import { LoginRequestSchema, type LoginRequest } from '../../../shared/auth';
import { colours, space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { FormField } from '../../ui/form-field';
import { PlumbMark } from '../../ui/plumb-mark';
import { Txt } from '../../ui/text';
import { START_PATH } from '../nav/start-path';

/** Staff sign-in. Taxpayers never sign in; they use the one-time link in their letter. */
export function SignInScreen() {
  const session = useSession();
  const signIn = useSignIn();
  const form = useForm<LoginRequest>({ resolver: zodResolver(LoginRequestSchema), defaultValues: { username: '', password: '' } });

  if (session.data) return <Redirect href={START_PATH[session.data.user.role]} />;

  const submit = form.handleSubmit((values) => signIn.mutate(values));
  return (
    <ScrollView style={{ flex: 1, backgroundColor: colours.ink }} contentContainerStyle={{ flexGrow: 1, justifyContent: 'center', padding: space.lg }}>
      <View style={{ width: '100%', maxWidth: 420, alignSelf: 'center', gap: space.lg }}>
        {/* Landmarks: the name of the product is the banner, the form the main region. */}
        <View role="banner" style={{ flexDirection: 'row', alignItems: 'center', gap: space.sm }}>
          <PlumbMark size={40} />
          <View>
            <Txt variant="display" bold tone="white">
              Plumbline
            </Txt>
            <Txt variant="small" style={{ color: colours.onInkSoft }}>
              Aldermere Revenue Office · examinations
            </Txt>
          </View>
        </View>
        <Card role="main" style={{ gap: space.lg, padding: space.xl }}>
          <Txt variant="title" bold role="heading" aria-level={1}>
            Sign in
          </Txt>
          <FormField
            control={form.control}
            name="username"
            testID="sign-in-username"
            label="User name"
            autoCapitalize="none"
            autoComplete="username"
            onSubmitEditing={submit}
          />
          <FormField
            control={form.control}
            name="password"
            testID="sign-in-password"
            label="Password"
            secureTextEntry
            autoComplete="current-password"
            onSubmitEditing={submit}
          />
          {signIn.error && (
            <Txt tone="alert" testID="sign-in-error" accessibilityRole="alert">
              {signIn.error.message}
            </Txt>
          )}
          <Button testID="sign-in-submit" label="Sign in" onPress={submit} busy={signIn.isPending} />
          <Txt variant="caption" tone="faint">
            Every view of taxpayer data is recorded in the access log. Use only your own account.
          </Txt>
        </Card>
      </View>
    </ScrollView>
  );
}
