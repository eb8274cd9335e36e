import { zodResolver } from '@hookform/resolvers/zod';
import { useState } from 'react';
import { Controller, useForm } from 'react-hook-form';
import { View } from 'react-native';
import { ROLE_LABELS, ROLES, type Role } from '../../../shared/roles';
import { CreateUserSchema, ROLE_CONSEQUENCES, type CreateUserInput, type UserDto } from '../../../shared/users';
import { colours, space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { ConfirmDialog } from '../../ui/confirm-dialog';
import { ChoiceRow } from '../../ui/choice-row';
import { Field } from '../../ui/field';
import { FormField } from '../../ui/form-field';
import { useIsWide } from '../../ui/layout';
import { Txt } from '../../ui/text';
import { useCreateUser, useResetPassword, useUnlockUser, useUpdateUser, useUsers } from './use-users';

/** "14 min" (rounded up). */
function minutes(seconds: number): string {
  return `${Math.max(1, Math.ceil(seconds / 60))} min`;
}

/** Accounts locked by failed sign-ins, each with an unlock; nothing when none is locked. */
function LockedAccounts({ users }: { users: UserDto[] }) {
  const unlock = useUnlockUser();
  const locked = users.filter((u) => u.lockedForSeconds !== null);
  if (!locked.length) return null;
  return (
    <Card style={{ backgroundColor: colours.warnSoft, borderColor: colours.warn, gap: space.sm }} testID="locked-accounts">
      <Txt bold tone="warn">
        {locked.length === 1 ? 'One account is' : `${locked.length} accounts are`} locked after too many failed sign-ins
      </Txt>
      <Txt variant="small">
        A lock ends by itself after 15 minutes. Unlock an account only when you know the person is the one trying to sign in (e.g. they called you).
      </Txt>
      {locked.map((u) => (
        <View key={u.id} style={{ flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', gap: space.sm }}>
          <Txt variant="small" bold style={{ flex: 1, minWidth: 160 }}>
            {u.displayName} ({u.username}) · {minutes(u.lockedForSeconds!)} left
          </Txt>
          <Button
            kind="secondary"
            label={`Unlock ${u.username}`}
            testID={`unlock-${u.username}`}
            busy={unlock.isPending && unlock.variables === u.id}
            onPress={() => unlock.mutate(u.id)}
          />
        </View>
      ))}
      {unlock.error && <Txt tone="alert">{unlock.error.message}</Txt>}
    </Card>
  );
}

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
  const [role, setRole] = useState<Role>(user.role);
  const [asking, setAsking] = useState<'role' | 'deactivate' | null>(null);
  const wide = useIsWide();
  const close = () => setAsking(null);
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
        {user.lockedForSeconds !== null && (
          <Txt variant="small" bold tone="warn" testID={`user-${user.username}-locked`}>
            Locked · {minutes(user.lockedForSeconds)}
          </Txt>
        )}
        <Button kind="quiet" label={editing ? 'Close' : 'Change'} onPress={() => setEditing(!editing)} testID={`user-${user.username}-edit`} />
      </View>
      {editing && (
        <View style={{ gap: space.md, borderTopWidth: 1, borderTopColor: colours.line, paddingTop: space.md }}>
          <ChoiceRow testID={`user-${user.username}-role`} label="Role" options={roleOptions} value={role} onChange={(r: Role) => setRole(r)} />
          {role !== user.role && (
            <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap', alignItems: 'center' }}>
              <Button testID={`user-${user.username}-save-role`} label={`Save: make ${ROLE_LABELS[role]}`} onPress={() => setAsking('role')} />
              <Button kind="quiet" label="Keep the role" onPress={() => setRole(user.role)} />
            </View>
          )}
          <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
            <Button
              testID={`user-${user.username}-active`}
              kind={user.active ? 'danger' : 'secondary'}
              label={user.active ? 'Deactivate' : 'Reactivate'}
              onPress={() => (user.active ? setAsking('deactivate') : update.mutate({ id: user.id, active: true }))}
              busy={update.isPending && asking === null}
            />
          </View>
          {asking === 'role' && (
            <ConfirmDialog
              testID="confirm-role"
              title={`Make ${user.displayName} ${ROLE_LABELS[role]}?`}
              consequence={`From their next step on, ${user.displayName} ${ROLE_CONSEQUENCES[role]}. They are no longer ${ROLE_LABELS[user.role]}. The change is recorded in the access log; you can change the role back later.`}
              confirmLabel={`Make ${ROLE_LABELS[role]}`}
              kind={role === 'admin' ? 'danger' : 'primary'}
              busy={update.isPending}
              error={update.error?.message ?? null}
              onCancel={close}
              onConfirm={() => update.mutate({ id: user.id, role }, { onSuccess: close })}
            />
          )}
          {asking === 'deactivate' && (
            <ConfirmDialog
              testID="confirm-deactivate"
              title={`Deactivate ${user.displayName}?`}
              consequence={`${user.displayName} is signed out everywhere at once and can no longer sign in. Their cases, notes and letters stay as they are; cases they hold stay assigned to them until a supervisor reassigns them. You can reactivate the account later.`}
              confirmLabel="Deactivate the account"
              kind="danger"
              busy={update.isPending}
              error={update.error?.message ?? null}
              onCancel={close}
              onConfirm={() => update.mutate({ id: user.id, active: false }, { onSuccess: close })}
            />
          )}
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
          {users.data && <LockedAccounts users={users.data.items} />}
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
