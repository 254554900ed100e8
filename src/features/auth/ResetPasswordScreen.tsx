import { useRouter } from 'expo-router';
import { useState } from 'react';
import { resetPasswordBodySchema } from '../../../shared/schemas/auth';
import { Button, Card, Screen } from '../../ui';
import { FormMessage } from './FormMessage';
import { serverErrors, zodFieldErrors, type FieldErrors } from './formErrors';
import { useResetPassword } from './hooks';
import { NewPasswordField } from './NewPasswordField';

/** Opened from the reset e-mail: choose a new password; other sessions end and this one signs in. */
export function ResetPasswordScreen({ token }: { token: string }) {
  const router = useRouter();
  const [password, setPassword] = useState('');
  const [fields, setFields] = useState<FieldErrors>({});
  const [formError, setFormError] = useState<string | null>(null);
  const reset = useResetPassword();

  const submit = () => {
    setFormError(null);
    const parsed = resetPasswordBodySchema.safeParse({ token, password });
    if (!parsed.success) {
      const f = zodFieldErrors(parsed.error);
      setFields(f);
      if (f.token) setFormError('This link is incomplete. Open it again from the e-mail.');
      return;
    }
    setFields({});
    reset.mutate(parsed.data, {
      onSuccess: () => router.replace('/'),
      onError: (err) => {
        const e = serverErrors(err);
        setFields(e.fields);
        setFormError(e.form);
      },
    });
  };

  return (
    <Screen title="Choose a new password" subtitle="Other devices signed in to your account will be signed out." width="form" testID="screen-reset">
      <Card>
        <NewPasswordField value={password} onChangeText={setPassword} error={fields.password} testID="reset-password" />
        <FormMessage message={formError} />
        <Button label="Save password and sign in" onPress={submit} busy={reset.isPending} wide testID="reset-submit" />
        {formError ? <Button kind="quiet" label="Ask for a new link" onPress={() => router.replace('/sign-in')} /> : null}
      </Card>
    </Screen>
  );
}
