// The parts of the status area that talk to the server: loaded by StatusArea.tsx only for a signed-in person, after
// the first screen is drawn (they bring the API client, its schemas and the auth hooks with them).
import { useRouter } from 'expo-router';
import { refreshSession } from '../../api/client';
import { Button } from '../../ui';
import { useSignOut } from '../auth/hooks';

export { refreshSession };

export function SignOutButton() {
  const router = useRouter();
  const signOut = useSignOut();
  return (
    <Button
      kind="quiet"
      label="Sign out"
      // useSignOut asks first while changes wait for the server, and keeps them either way. Signing out unmounts this
      // button (the status area then offers Sign in), so the promise, not a mutate() callback, does the navigation.
      onPress={() =>
        signOut.mutateAsync().then(
          (r) => r !== 'stayed' && router.replace('/sign-in'),
          () => undefined, // the server could not be told; useSignOut has signed out here all the same
        )
      }
      busy={signOut.isPending}
      testID="sign-out"
    />
  );
}
