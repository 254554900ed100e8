import { useRouter } from 'expo-router';
import { useState } from 'react';
import { newAccountSchema } from '../../../shared/schemas/auth';
import { Button, Card, Field, Screen, Text } from '../../ui';
import { FormMessage } from './FormMessage';
import { serverErrors, zodFieldErrors, type FieldErrors } from './formErrors';
import { useAcceptInvitation, useInvitation } from './hooks';
import { NewPasswordField } from './NewPasswordField';

/** Opened from the invitation e-mail: shows the lab and role, then creates the account (or confirms an existing one). */
export function AcceptInvitationScreen({ token }: { token: string }) {
  const router = useRouter();
  const preview = useInvitation(token);
  const accept = useAcceptInvitation(token);
  const [displayName, setDisplayName] = useState('');
  const [password, setPassword] = useState('');
  const [fields, setFields] = useState<FieldErrors>({});
  const [formError, setFormError] = useState<string | null>(null);

  if (preview.isPending) {
    return <Screen title="Invitation" subtitle="Looking up the invitation…" width="form" testID="screen-invite" />;
  }
  if (preview.isError || !preview.data) {
    return (
      <Screen title="Invitation" width="form" testID="screen-invite">
        <FormMessage message={serverErrors(preview.error).form} />
      </Screen>
    );
  }
  const inv = preview.data;

  const submit = () => {
    setFormError(null);
    if (!inv.existingAccount) {
      const parsed = newAccountSchema.safeParse({ displayName, password });
      if (!parsed.success) return setFields(zodFieldErrors(parsed.error));
    }
    setFields({});
    accept.mutate(
      inv.existingAccount ? { password } : { displayName: displayName.trim(), password },
      {
        onSuccess: () => router.replace('/lab'),
        onError: (err) => {
          const e = serverErrors(err);
          setFields(e.fields);
          setFormError(e.form);
        },
      },
    );
  };

  return (
    <Screen title={`Join ${inv.labName}`} subtitle={`${inv.invitedBy ?? 'A manager'} invited ${inv.email} as ${inv.role}.`} width="form" testID="screen-invite">
      <Card>
        {inv.existingAccount ? (
          <>
            <Text tone="muted">This address already has a Halfmark account. Enter its password to join the lab.</Text>
            <Field label="Password" value={password} onChangeText={setPassword} secureTextEntry autoComplete="current-password" error={fields.password} testID="invite-password" />
          </>
        ) : (
          <>
            <Field label="Your name" value={displayName} onChangeText={setDisplayName} autoComplete="name" error={fields.displayName} testID="invite-name" />
            <NewPasswordField value={password} onChangeText={setPassword} error={fields.password} testID="invite-password" />
          </>
        )}
        <FormMessage message={formError} />
        <Button label="Join the lab" onPress={submit} busy={accept.isPending} wide testID="invite-submit" />
      </Card>
      <Text variant="caption" tone="muted">
        The invitation works once and expires {new Date(inv.expiresAt).toLocaleDateString()}.
      </Text>
    </Screen>
  );
}
