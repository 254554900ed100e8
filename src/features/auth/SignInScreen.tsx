import { useRouter } from 'expo-router';
import { useState } from 'react';
import { forgotPasswordBodySchema, loginBodySchema } from '../../../shared/schemas/auth';
import { Button, Card, Field, Screen, Text } from '../../ui';
import { FormMessage } from './FormMessage';
import { serverErrors, zodFieldErrors, type FieldErrors } from './formErrors';
import { useForgotPassword, useSignIn } from './hooks';

/** Sign-in, with the "forgot password" request on the same screen (it only needs the address). */
export function SignInScreen() {
  const router = useRouter();
  const [mode, setMode] = useState<'signIn' | 'forgot'>('signIn');
  const [email, setEmail] = useState('');
  const [password, setPassword] = useState('');
  const [fields, setFields] = useState<FieldErrors>({});
  const [formError, setFormError] = useState<string | null>(null);
  const [sent, setSent] = useState<string | null>(null);
  const signIn = useSignIn();
  const forgot = useForgotPassword();

  const fail = (err: unknown) => {
    const e = serverErrors(err);
    setFields(e.fields);
    setFormError(e.form);
  };

  const submit = () => {
    setFormError(null);
    setSent(null);
    if (mode === 'signIn') {
      const parsed = loginBodySchema.safeParse({ email, password });
      if (!parsed.success) return setFields(zodFieldErrors(parsed.error));
      setFields({});
      signIn.mutate(parsed.data, { onSuccess: () => router.replace('/'), onError: fail });
    } else {
      const parsed = forgotPasswordBodySchema.safeParse({ email });
      if (!parsed.success) return setFields(zodFieldErrors(parsed.error));
      setFields({});
      forgot.mutate(parsed.data, { onSuccess: (r) => setSent(r.message), onError: fail });
    }
  };

  return (
    <Screen
      title={mode === 'signIn' ? 'Sign in' : 'Reset your password'}
      subtitle={mode === 'signIn' ? 'With the e-mail address your lab invited.' : 'We e-mail you a link to choose a new password.'}
      width="form" testID="screen-sign-in"
    >
      <Card>
        <Field
          label="E-mail"
          value={email}
          onChangeText={setEmail}
          autoCapitalize="none"
          autoComplete="email"
          keyboardType="email-address"
          inputMode="email"
          error={fields.email}
          testID="sign-in-email"
          onSubmitEditing={submit}
        />
        {mode === 'signIn' ? (
          <Field
            label="Password"
            value={password}
            onChangeText={setPassword}
            secureTextEntry
            autoComplete="current-password"
            error={fields.password}
            testID="sign-in-password"
            onSubmitEditing={submit}
          />
        ) : null}
        <FormMessage message={formError} />
        <FormMessage message={sent} tone="ok" />
        <Button
          label={mode === 'signIn' ? 'Sign in' : 'Send reset link'}
          onPress={submit}
          busy={signIn.isPending || forgot.isPending}
          wide
          testID="sign-in-submit"
        />
        <Button
          kind="quiet"
          label={mode === 'signIn' ? 'Forgot your password?' : 'Back to sign-in'}
          onPress={() => {
            setMode(mode === 'signIn' ? 'forgot' : 'signIn');
            setFields({});
            setFormError(null);
            setSent(null);
          }}
        />
      </Card>
      <Text variant="caption" tone="muted">
        No account? A lab manager invites you by e-mail.
      </Text>
    </Screen>
  );
}
