import { PASSWORD_MIN } from '../../../shared/schemas/auth';
import { Field } from '../../ui';

/** New-password input with the rule stated up front (length only; very common passwords are refused). */
export function NewPasswordField(props: { value: string; onChangeText: (s: string) => void; error?: string; testID?: string }) {
  return (
    <Field
      label="New password"
      secureTextEntry
      autoComplete="new-password"
      hint={`At least ${PASSWORD_MIN} characters. A few words you will remember work well.`}
      {...props}
    />
  );
}
