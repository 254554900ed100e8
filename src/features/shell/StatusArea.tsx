import { Link } from 'expo-router';
import { lazy, Suspense, useEffect, useState } from 'react';
import { Pressable, StyleSheet, View } from 'react-native';
import { activeMembership, useSession } from '../../state/session';
import { useLayoutSize } from '../../theme/layout';
import { colors, radius, space, touch } from '../../theme/tokens';
import { SyncIndicator } from '../../sync/SyncIndicator';
import { Badge, Button, Text } from '../../ui';

/**
 * What the app shell shows about the state of things: who is signed in (and in which lab), plus the sync indicator.
 * The sync indicator is the sync feature's (src/sync/SyncIndicator.tsx). What talks to the server (sign out, the
 * token refresh) is in accountActions.tsx, loaded after the first screen is drawn and only for someone signed in.
 */
export function StatusArea() {
  const wide = useLayoutSize() === 'wide';
  return (
    <View style={wide ? styles.areaWide : styles.areaPhone} testID="status-area">
      <SyncIndicator />
      <AccountStatus wide={wide} />
    </View>
  );
}

const SignOutButton = lazy(() => import('./accountActions').then((m) => ({ default: m.SignOutButton })));

/**
 * The persisted session is read from storage on the client only, so the static page and the first client render
 * must both show nothing (or hydration fails); the account piece appears after mount.
 */
function useMounted() {
  const [mounted, setMounted] = useState(false);
  useEffect(() => setMounted(true), []);
  return mounted;
}

/**
 * Gets a fresh access token when the page opens with a kept session (a reload) and when the connection comes back,
 * so a session the server ended is noticed (and the banner asks to sign in) while recording carries on locally.
 * Offline, refreshSession keeps the last session as it is.
 */
function useReauthenticate(signedIn: boolean) {
  useEffect(() => {
    if (!signedIn || typeof window === 'undefined') return;
    const check = () => {
      const s = useSession.getState();
      if (!s.accessToken && !s.signedOutByServer && navigator.onLine !== false) {
        void import('./accountActions').then((m) => m.refreshSession()).catch(() => undefined);
      }
    };
    check();
    window.addEventListener('online', check);
    return () => window.removeEventListener('online', check);
  }, [signedIn]);
}

function AccountStatus({ wide }: { wide: boolean }) {
  const mounted = useMounted();
  const user = useSession((s) => s.user);
  const labs = useSession((s) => s.labs);
  const membership = useSession(activeMembership);
  const setActiveLab = useSession((s) => s.setActiveLab);
  const [switching, setSwitching] = useState(false);
  useReauthenticate(mounted && Boolean(user));

  if (!mounted) return null;
  if (!user) {
    return (
      <Link href="/sign-in" asChild>
        <Pressable accessibilityRole="link" style={styles.signInLink} testID="status-sign-in">
          <Text variant="label" tone="accent">
            Sign in
          </Text>
        </Pressable>
      </Link>
    );
  }
  const first = user.displayName;
  return (
    <View style={wide ? styles.accountWide : styles.accountPhone} testID="account-status">
      <View style={wide ? undefined : styles.who}>
        <Text variant="label" numberOfLines={wide ? 3 : 1} testID="account-name">
          {first}
        </Text>
        <View style={styles.labLine}>
          <Text variant="caption" tone="muted" numberOfLines={wide ? 3 : 1} style={styles.shrink} testID="account-lab">
            {membership ? `${membership.labName} · ${membership.role}` : 'No lab yet'}
          </Text>
          {membership?.isDemo ? <Badge label="DEMO" tone="warn" testID="account-demo" /> : null}
        </View>
      </View>
      <View style={wide ? styles.actionsWide : styles.actionsPhone}>
        {labs.length > 1 ? (
          <Button kind="quiet" label="Switch lab" onPress={() => setSwitching(!switching)} testID="switch-lab" />
        ) : null}
        {/* Until its code is in, the same button in the same place, not yet pressable: nothing moves when it arrives. */}
        <Suspense fallback={<Button kind="quiet" label="Sign out" disabled testID="sign-out-loading" />}>
          <SignOutButton />
        </Suspense>
      </View>
      {switching ? (
        <View style={styles.labList} role="list" aria-label="Your labs">
          {labs.map((l) => (
            <Pressable
              key={l.labId}
              accessibilityRole="button"
              aria-current={l.labId === membership?.labId ? 'true' : undefined}
              onPress={() => {
                setActiveLab(l.labId);
                setSwitching(false);
              }}
              style={StyleSheet.flatten([styles.labItem, l.labId === membership?.labId && styles.labItemActive])}
              testID={`lab-option-${l.labId}`}
            >
              <Text variant="label">{l.labName}</Text>
              <Text variant="caption" tone="muted">
                {l.role}
                {l.isDemo ? ' · DEMO' : ''}
              </Text>
            </Pressable>
          ))}
        </View>
      ) : null}
    </View>
  );
}

/**
 * Shown above every screen when the server has ended the sign-in (expired, signed out elsewhere, password reset).
 * Calm on purpose: nothing is lost, recording goes on; only sending waits for a new sign-in.
 */
export function SessionBanner() {
  const mounted = useMounted();
  const endedByServer = useSession((s) => s.signedOutByServer && Boolean(s.user));
  if (!mounted || !endedByServer) return null;
  return (
    <View style={styles.banner} role="status" testID="session-ended-banner">
      <Text style={styles.shrink}>
        Your sign-in has ended. Everything on this device is kept and you can keep recording; sign in again to send it.
      </Text>
      <Link href="/sign-in" asChild>
        <Button kind="secondary" label="Sign in again" testID="session-sign-in" />
      </Link>
    </View>
  );
}

const styles = StyleSheet.create({
  areaPhone: { gap: space.xs },
  areaWide: { gap: space.sm },
  accountPhone: { flexDirection: 'row', alignItems: 'center', flexWrap: 'wrap', gap: space.sm },
  accountWide: { gap: space.xs, alignItems: 'stretch' },
  who: { flex: 1, minWidth: 0 },
  labLine: { flexDirection: 'row', alignItems: 'center', flexWrap: 'wrap', gap: space.xs },
  shrink: { flexShrink: 1 },
  actionsPhone: { flexDirection: 'row', gap: space.xs },
  actionsWide: { gap: space.xxs },
  signInLink: { minHeight: touch.min, justifyContent: 'center', paddingHorizontal: space.sm },
  labList: { width: '100%', gap: space.xxs },
  labItem: { minHeight: touch.min, justifyContent: 'center', padding: space.sm, borderRadius: radius.md, backgroundColor: colors.sunken },
  labItemActive: { backgroundColor: colors.accentSoft },
  banner: {
    flexDirection: 'row',
    alignItems: 'center',
    flexWrap: 'wrap',
    gap: space.md,
    paddingHorizontal: space.lg,
    paddingVertical: space.sm,
    backgroundColor: colors.warnSoft,
    borderBottomWidth: 1,
    borderBottomColor: colors.line,
  },
});
