import { Link } from 'expo-router';
import { useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { inviteBodySchema, type Member } from '../../../shared/schemas/auth';
import type { Role } from '../../../shared/schemas/roles';
import { activeMembership, useSession } from '../../state/session';
import { space } from '../../theme/tokens';
import { Badge, Button, Card, Field, Screen, Segmented, Text } from '../../ui';
import { FormMessage } from '../auth/FormMessage';
import { serverErrors, zodFieldErrors, type FieldErrors } from '../auth/formErrors';
import { describeAudit } from './auditText';
import { useAudit, useChangeRole, useInvitations, useInvite, useMembers, useSetDisabled, useWithdrawInvitation } from './hooks';

const ROLES = [
  { key: 'analyst', label: 'Analyst' },
  { key: 'manager', label: 'Manager' },
  { key: 'viewer', label: 'Viewer' },
] as const;
const ROLE_HELP: Record<Role, string> = {
  analyst: 'records and submits runs',
  manager: 'also calibrations, review and members',
  viewer: 'reads and comments',
};

/**
 * The lab section: who is in the lab; managers also invite, change roles, disable, and read the audit trail.
 * Signing out and switching labs live in the app shell's status area (src/features/shell/StatusArea.tsx).
 */
export function LabScreen() {
  const user = useSession((s) => s.user);
  const membership = useSession(activeMembership);

  if (!user || !membership) {
    return (
      <Screen title="Lab" subtitle="Members and their roles, invitations, the audit trail." testID="screen-lab">
        <Card>
          <Text tone="muted">Sign in to see your lab.</Text>
          <Link href="/sign-in" asChild>
            <Button label="Sign in" testID="lab-sign-in" />
          </Link>
        </Card>
      </Screen>
    );
  }
  const manager = membership.role === 'manager';
  return (
    <Screen
      title={membership.labName}
      subtitle={`You are ${user.displayName} (${user.email}), ${membership.role} here.`}
      testID="screen-lab"
    >
      {membership.isDemo ? <Badge label="Demo lab: invented people and data" tone="warn" /> : null}
      <Members labId={membership.labId} manager={manager} selfId={user.id} />
      {manager ? <Invitations labId={membership.labId} /> : null}
      {manager ? <AuditTrail labId={membership.labId} /> : null}
    </Screen>
  );
}

function Members({ labId, manager, selfId }: { labId: string; manager: boolean; selfId: string }) {
  const members = useMembers(labId);
  const changeRole = useChangeRole(labId);
  const setDisabled = useSetDisabled(labId);
  const [error, setError] = useState<string | null>(null);
  const onError = (err: unknown) => setError(serverErrors(err).form);
  return (
    <Card title="Members" aside={members.data ? <Text tone="muted">{members.data.length}</Text> : null} testID="lab-members">
      {members.isError ? <FormMessage message={serverErrors(members.error).form} /> : null}
      <FormMessage message={error} />
      {members.data?.map((m: Member) => (
        <View key={m.userId} style={styles.row} testID={`member-${m.email}`}>
          <View style={styles.grow}>
            <Text variant="label">{m.displayName}</Text>
            <Text variant="caption" tone="muted">
              {m.email}
            </Text>
          </View>
          <Badge label={m.role} tone={m.role === 'manager' ? 'accent' : 'neutral'} />
          {m.disabled ? <Badge label="disabled" tone="danger" /> : null}
          {manager && m.userId !== selfId ? (
            <View style={styles.controls}>
              <Segmented
                label={`Role of ${m.displayName}`}
                options={ROLES}
                value={m.role}
                onChange={(role) => {
                  setError(null);
                  changeRole.mutate({ userId: m.userId, role }, { onError });
                }}
                testID={`role-${m.email}`}
              />
              <Button
                kind={m.disabled ? 'secondary' : 'danger'}
                label={m.disabled ? 'Enable' : 'Disable'}
                onPress={() => {
                  setError(null);
                  setDisabled.mutate({ userId: m.userId, disabled: !m.disabled }, { onError });
                }}
                testID={`disable-${m.email}`}
              />
            </View>
          ) : null}
        </View>
      ))}
    </Card>
  );
}

function Invitations({ labId }: { labId: string }) {
  const invitations = useInvitations(labId, true);
  const invite = useInvite(labId);
  const withdraw = useWithdrawInvitation(labId);
  const [email, setEmail] = useState('');
  const [role, setRole] = useState<Role>('analyst');
  const [fields, setFields] = useState<FieldErrors>({});
  const [message, setMessage] = useState<{ text: string; tone: 'ok' | 'danger' } | null>(null);

  const submit = () => {
    setMessage(null);
    const parsed = inviteBodySchema.safeParse({ email, role });
    if (!parsed.success) return setFields(zodFieldErrors(parsed.error));
    setFields({});
    invite.mutate(parsed.data, {
      onSuccess: (inv) => {
        setEmail('');
        setMessage({ text: `Invitation sent to ${inv.email}.`, tone: 'ok' });
      },
      onError: (err) => {
        const e = serverErrors(err);
        setFields(e.fields);
        if (e.form) setMessage({ text: e.form, tone: 'danger' });
      },
    });
  };

  return (
    <Card title="Invitations" testID="lab-invitations">
      <Field
        label="Invite by e-mail"
        value={email}
        onChangeText={setEmail}
        autoCapitalize="none"
        keyboardType="email-address"
        inputMode="email"
        error={fields.email}
        testID="invite-email"
      />
      <Segmented<Role> label="Role" options={ROLES} value={role} onChange={setRole} testID="invite-role" />
      <Text variant="caption" tone="muted">
        {ROLES.find((r) => r.key === role)!.label}: {ROLE_HELP[role]}.
      </Text>
      <Button label="Send invitation" onPress={submit} busy={invite.isPending} testID="invite-send" />
      <FormMessage message={message?.text} tone={message?.tone} />
      {invitations.data?.length === 0 ? <Text tone="muted">No open invitations.</Text> : null}
      {invitations.data?.map((i) => (
        <View key={i.id} style={styles.row} testID={`invitation-${i.email}`}>
          <View style={styles.grow}>
            <Text variant="label">{i.email}</Text>
            <Text variant="caption" tone="muted">
              {i.role} · expires {new Date(i.expiresAt).toLocaleDateString()}
            </Text>
          </View>
          <Button kind="quiet" label="Withdraw" onPress={() => withdraw.mutate(i.id)} />
        </View>
      ))}
    </Card>
  );
}

function AuditTrail({ labId }: { labId: string }) {
  const audit = useAudit(labId, true);
  return (
    <Card title="Audit trail" testID="lab-audit">
      <Text variant="caption" tone="muted">
        Every change to the lab's data, newest first. Nobody can edit or delete it.
      </Text>
      {audit.isError ? <FormMessage message={serverErrors(audit.error).form} /> : null}
      {audit.data?.entries.length === 0 ? <Text tone="muted">Nothing recorded yet.</Text> : null}
      {audit.data?.entries.map((e) => (
        <View key={e.id} style={styles.row}>
          <Text variant="caption" tone="muted" numeric style={styles.when}>
            {new Date(e.at).toLocaleString()}
          </Text>
          <Text style={styles.grow}>{describeAudit(e)}</Text>
        </View>
      ))}
    </Card>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', alignItems: 'center', flexWrap: 'wrap', gap: space.sm, paddingVertical: space.xs },
  grow: { flexGrow: 1, flexShrink: 1, minWidth: 160 },
  // maxWidth: on a phone the role switch and Disable do not fit one line; they wrap instead of running off the card.
  controls: { flexDirection: 'row', alignItems: 'center', gap: space.sm, flexWrap: 'wrap', maxWidth: '100%' },
  when: { minWidth: 150 },
});
