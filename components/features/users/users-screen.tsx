import { zodResolver } from '@hookform/resolvers/zod';
import { useState } from 'react';
import { Controller, useForm } from 'react-hook-form';
import { View } from 'react-native';
import { ROLE_LABELS, ROLES, type Role } from '../../../shared/roles';
import { CreateUserSchema, type CreateUserInput, type UserDto } from '../../../shared/users';
import { colours, space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { ChoiceRow } from '../../ui/choice-row';
import { Field } from '../../ui/field';
import { FormField } from '../../ui/form-field';
import { useIsWide } from '../../ui/layout';
import { Txt } from '../../ui/text';
import { useCreateUser, useResetPassword, useUpdateUser, useUsers } from './use-users';

const roleOptions = ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] }));

function NewUserForm() {
  const create = useCreateUser();
  const form = useForm<CreateUserInput>({
    resolver: zodResolver(CreateUserSchema),
    defaultValues: { username: '', displayName: '', role: 'examiner', password: '' },
  });
  const submit = form.handleSubmit((v) => create.mutate(v, { onSuccess: () => form.reset() }));
  return (
    <Card style={{ gap: space.md }} testID="new-user-form">
      <Txt variant="title" bold>
        New account
      </Txt>
      <FormField control={form.control} name="username" testID="new-user-username" label="User name" autoCapitalize="none" />
      <FormField control={form.control} name="displayName" testID="new-user-name" label="Full name" />
      <Controller
        control={form.control}
        name="role"
        render={({ field }) => <ChoiceRow testID="new-user-role" label="Role" options={roleOptions} value={field.value} onChange={field.onChange} />}
      />
      <FormField
        control={form.control}
        name="password"
        testID="new-user-password"
        label="First password"
        secureTextEntry
        hint="At least 10 characters. Give it to the person in confidence."
      />
      {create.error && <Txt tone="alert">{create.error.message}</Txt>}
      {create.isSuccess && <Txt tone="ok">Account created.</Txt>}
      <Button testID="new-user-submit" label="Create account" onPress={submit} busy={create.isPending} style={{ alignSelf: 'flex-start' }} />
    </Card>
  );
}

function UserRow({ user }: { user: UserDto }) {
  const update = useUpdateUser();
  const reset = useResetPassword();
  const [editing, setEditing] = useState(false);
  const [pw, setPw] = useState('');
  const wide = useIsWide();
  return (
    <Card style={{ gap: space.sm, opacity: user.active ? 1 : 0.7 }} testID={`user-${user.username}`}>
      <View style={{ flexDirection: wide ? 'row' : 'column', gap: space.sm, alignItems: wide ? 'center' : 'flex-start' }}>
        <View style={{ flex: 1 }}>
          <Txt bold>{user.displayName}</Txt>
          <Txt variant="small" tone="soft" figures>
            {user.username}
          </Txt>
        </View>
        <Txt variant="small" bold tone="brass" style={{ minWidth: 120 }}>
          {ROLE_LABELS[user.role]}
        </Txt>
        <Txt variant="small" tone={user.active ? 'ok' : 'alert'} style={{ minWidth: 90 }}>
          {user.active ? 'Active' : 'Deactivated'}
        </Txt>
        <Button kind="quiet" label={editing ? 'Close' : 'Change'} onPress={() => setEditing(!editing)} testID={`user-${user.username}-edit`} />
      </View>
      {editing && (
        <View style={{ gap: space.md, borderTopWidth: 1, borderTopColor: colours.line, paddingTop: space.md }}>
          <ChoiceRow label="Role" options={roleOptions} value={user.role} onChange={(role: Role) => update.mutate({ id: user.id, role })} />
          <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
            <Button
              kind={user.active ? 'danger' : 'secondary'}
              label={user.active ? 'Deactivate' : 'Reactivate'}
              onPress={() => update.mutate({ id: user.id, active: !user.active })}
              busy={update.isPending}
            />
          </View>
          <View style={{ gap: space.sm }}>
            <Field label="New password" secureTextEntry value={pw} onChangeText={setPw} hint="At least 10 characters; signs the person out everywhere." />
            <Button
              kind="secondary"
              label="Reset password"
              disabled={pw.length < 10}
              busy={reset.isPending}
              onPress={() => reset.mutate({ id: user.id, password: pw }, { onSuccess: () => setPw('') })}
              style={{ alignSelf: 'flex-start' }}
            />
            {reset.isSuccess && <Txt tone="ok">Password reset.</Txt>}
          </View>
          {(update.error || reset.error) && <Txt tone="alert">{(update.error ?? reset.error)!.message}</Txt>}
        </View>
      )}
    </Card>
  );
}

/** Administrator's screen: staff accounts and their roles. */
export function UsersScreen() {
  const users = useUsers();
  const wide = useIsWide();
  return (
    <View style={{ gap: space.lg }}>
      <View>
        <Txt variant="display" bold accessibilityRole="header">
          Staff accounts
        </Txt>
        <Txt tone="soft">Who can sign in, and what each role may see. Administrators see no taxpayer data.</Txt>
      </View>
      <View style={{ flexDirection: wide ? 'row' : 'column', gap: space.lg, alignItems: 'flex-start' }}>
        <View style={{ flex: wide ? 3 : undefined, width: wide ? undefined : '100%', gap: space.sm }}>
          {users.isPending && <Txt tone="soft">Loading…</Txt>}
          {users.error && <Txt tone="alert">{users.error.message}</Txt>}
          {users.data?.items.map((u) => (
            <UserRow key={u.id} user={u} />
          ))}
        </View>
        <View style={{ flex: wide ? 2 : undefined, width: wide ? undefined : '100%' }}>
          <NewUserForm />
        </View>
      </View>
    </View>
  );
}
