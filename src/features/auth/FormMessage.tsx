import { Card, Text } from '../../ui';

/** A form-level message (server refusal, rate limit, offline) announced to screen readers. */
export function FormMessage({ message, tone = 'danger' }: { message: string | null | undefined; tone?: 'danger' | 'ok' }) {
  if (!message) return null;
  return (
    <Card tone={tone}>
      <Text accessibilityRole="alert" tone={tone === 'danger' ? 'danger' : 'ok'}>
        {message}
      </Text>
    </Card>
  );
}
