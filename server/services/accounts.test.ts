import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { authFixture, linkIn, TEST_PASSWORD, type AuthFixture } from '../auth/test-fixture';
import { startMail, type Mail } from '../mail';
import { closeTemplate } from '../testing/db';

/**
 * Invitation and password reset end to end through the API: the message goes outbox → worker → nodemailer → the
 * built-in fake SMTP server → captured_mail, and the test follows the link read from the captured text.
 */
let fx: AuthFixture;
let mail: Mail;

beforeAll(async () => {
  fx = await authFixture();
  mail = await startMail({ database: fx.database, log: () => {}, autoStart: false });
});
afterAll(async () => {
  await mail.stop();
  await fx.database.close();
  await closeTemplate();
});

async function mailbox(to: string) {
  await mail.outbox.drain();
  const res = await fx.api().get('/api/dev/mailbox').set('accept', 'application/json').expect(200);
  return (res.body.messages as { to: string[]; subject: string; text: string }[]).filter((m) => m.to.includes(to));
}

const bearer = async (userId: string) => `Bearer ${(await fx.session(userId)).accessToken}`;

describe('invitation by e-mail', () => {
  it('manager invites; the invitee follows the e-mailed link, sets a password and joins with the role', async () => {
    const email = 'new.analyst@example.org';
    const auth = await bearer(fx.people.manager.id);
    const created = await fx.api()
      .post(`/api/labs/${fx.labA.id}/invitations`)
      .set('authorization', auth)
      .send({ email: '  New.Analyst@Example.org ', role: 'analyst' })
      .expect(201);
    expect(created.body).toMatchObject({ email, role: 'analyst' });
    // The outbox row was committed with the invitation, before any delivery.
    const pending = await fx.database.query<{ n: number }>("select count(*)::int as n from outbox where to_address = $1 and status = 'pending'", [email]);
    expect(pending[0].n).toBe(1);

    const pendingList = await fx.api().get(`/api/labs/${fx.labA.id}/invitations`).set('authorization', auth).expect(200);
    expect(pendingList.body.map((i: { email: string }) => i.email)).toContain(email);

    const [msg] = await mailbox(email);
    expect(msg.subject).toContain('Lab A (test)');
    const token = linkIn(msg.text, 'invite');

    const preview = await fx.api().get(`/api/auth/invitations/${token}`).expect(200);
    expect(preview.body).toMatchObject({ labName: 'Lab A (test)', email, role: 'analyst', existingAccount: false });

    // A common password is refused with a clear error and the invitation stays usable.
    const weak = await fx.api().post(`/api/auth/invitations/${token}/accept`).send({ displayName: 'Ada', password: 'password123' }).expect(400);
    expect(weak.body.error.code).toBe('weak_password');

    const accepted = await fx.api()
      .post(`/api/auth/invitations/${token}/accept`)
      .send({ displayName: 'Ada Analyst', password: 'titrate until the colour holds' })
      .expect(200);
    expect(accepted.body.user).toMatchObject({ email, displayName: 'Ada Analyst' });
    expect(accepted.body.labs).toEqual([expect.objectContaining({ labId: fx.labA.id, role: 'analyst' })]);
    expect(String(accepted.headers['set-cookie'])).toMatch(/hm_refresh=.*HttpOnly; SameSite=Strict/);

    // Single use.
    await fx.api().post(`/api/auth/invitations/${token}/accept`).send({ displayName: 'Again', password: 'titrate until the colour holds' }).expect(404);
    await fx.api().get(`/api/auth/invitations/${token}`).expect(404);

    // The new member signs in with the chosen password.
    await fx.api().post('/api/auth/login').send({ email, password: 'titrate until the colour holds' }).expect(200);

    // Audit: the invitation and the joining, readable by the manager.
    const audit = await fx.api().get(`/api/labs/${fx.labA.id}/audit`).set('authorization', auth).expect(200);
    const actions = audit.body.entries.map((e: { action: string }) => e.action);
    expect(actions).toEqual(expect.arrayContaining(['invitation.create', 'member.join']));
    const join = audit.body.entries.find((e: { action: string }) => e.action === 'member.join');
    expect(join.after).toMatchObject({ email, role: 'analyst' });
  });

  it('an invitation expires after 7 days', async () => {
    const inv = await fx.invitation(fx.labA.id, 'late@example.org');
    // Control: the same request finds it a second before the 7 days are up.
    fx.advance(7 * 86_400_000 - 1000);
    await fx.api().get(`/api/auth/invitations/${inv.token}`).expect(200);
    fx.advance(2000);
    await fx.api().get(`/api/auth/invitations/${inv.token}`).expect(404);
  });

  it('an address that already has an account joins with its existing password, not a new one', async () => {
    const existing = fx.people.managerB;
    const inv = await fx.invitation(fx.labA.id, existing.email, 'viewer');
    const preview = await fx.api().get(`/api/auth/invitations/${inv.token}`).expect(200);
    expect(preview.body.existingAccount).toBe(true);
    await fx.api().post(`/api/auth/invitations/${inv.token}/accept`).send({ password: 'not their password' }).expect(401);
    const ok = await fx.api().post(`/api/auth/invitations/${inv.token}/accept`).send({ password: TEST_PASSWORD }).expect(200);
    expect(ok.body.labs.map((l: { labId: string }) => l.labId).sort()).toEqual([fx.labA.id, fx.labB.id].sort());
  });
});

describe('password reset by e-mail', () => {
  it('sends a single-use link; the new password works, the old one and old sessions do not', async () => {
    const person = await fx.person(fx.labA.id, 'analyst');
    const old = await fx.session(person.id);
    // Controls for what must stop working after the reset: the old password and an old session work now. (A second
    // session is refreshed here, because a refresh rotates the cookie it uses.)
    await fx.api().post('/api/auth/login').send({ email: person.email, password: TEST_PASSWORD }).expect(200);
    await fx.api().get('/api/auth/me').set('authorization', `Bearer ${old.accessToken}`).expect(200);
    await fx.api().post('/api/auth/refresh').set('cookie', (await fx.session(person.id)).refreshCookie).expect(200);

    await fx.api().post('/api/auth/password/forgot').send({ email: person.email.toUpperCase() }).expect(202);
    // Unknown addresses get the same answer and no mail (nothing queued either); the same queries find the known
    // person's message and its outbox row.
    await fx.api().post('/api/auth/password/forgot').send({ email: 'no.such.person@example.org' }).expect(202);
    const queued = (to: string) => fx.database.query<{ n: number }>('select count(*)::int as n from outbox where to_address = $1', [to]);
    expect((await queued('no.such.person@example.org'))[0].n).toBe(0);
    expect((await queued(person.email))[0].n).toBe(1);
    expect(await mailbox('no.such.person@example.org')).toEqual([]);
    const sent = await mailbox(person.email);
    expect(sent).toHaveLength(1);

    const token = linkIn(sent[0].text, 'reset');
    const res = await fx.api().post('/api/auth/password/reset').send({ token, password: 'a brand new passphrase' }).expect(200);
    expect(res.body.user.email).toBe(person.email);

    await fx.api().post('/api/auth/password/reset').send({ token, password: 'yet another passphrase' }).expect(400);
    await fx.api().post('/api/auth/login').send({ email: person.email, password: TEST_PASSWORD }).expect(401);
    await fx.api().post('/api/auth/login').send({ email: person.email, password: 'a brand new passphrase' }).expect(200);
    await fx.api().get('/api/auth/me').set('authorization', `Bearer ${old.accessToken}`).expect(401);
    await fx.api().post('/api/auth/refresh').set('cookie', old.refreshCookie).expect(401);
  });

  it('a reset link expires after 30 minutes', async () => {
    // Two people's links made at the same moment: one used a second before the 30 minutes (control: accepted), the
    // other a second after. Two people, so the second link cannot be refused for the first one's reset.
    const early = await fx.person(fx.labA.id, 'analyst');
    const late = await fx.person(fx.labA.id, 'analyst');
    const earlyToken = await fx.resetToken(early.id);
    const lateToken = await fx.resetToken(late.id);
    fx.advance(30 * 60_000 - 1000);
    await fx.api().post('/api/auth/password/reset').send({ token: earlyToken, password: 'a brand new passphrase' }).expect(200);
    fx.advance(2000);
    const res = await fx.api().post('/api/auth/password/reset').send({ token: lateToken, password: 'a brand new passphrase' }).expect(400);
    expect(res.body.error.code).toBe('invalid_link');
    await fx.api().post('/api/auth/login').send({ email: late.email, password: TEST_PASSWORD }).expect(200);
  });
});

describe('members: roles and disabling', () => {
  it('disabling a member ends their access on the very next request and is audited', async () => {
    const target = await fx.person(fx.labA.id, 'analyst');
    const theirs = await fx.session(target.id);
    // Controls: each request refused below succeeds before the disabling (a second session is refreshed, because a
    // refresh rotates the cookie it uses).
    await fx.api().get('/api/auth/me').set('authorization', `Bearer ${theirs.accessToken}`).expect(200);
    await fx.api().post('/api/auth/refresh').set('cookie', (await fx.session(target.id)).refreshCookie).expect(200);
    await fx.api().post('/api/auth/login').send({ email: target.email, password: TEST_PASSWORD }).expect(200);
    const auth = await bearer(fx.people.manager.id);
    const res = await fx.api().post(`/api/labs/${fx.labA.id}/members/${target.id}/disable`).set('authorization', auth).expect(200);
    expect(res.body.disabled).toBe(true);
    await fx.api().get('/api/auth/me').set('authorization', `Bearer ${theirs.accessToken}`).expect(401);
    await fx.api().post('/api/auth/refresh').set('cookie', theirs.refreshCookie).expect(401);
    await fx.api().post('/api/auth/login').send({ email: target.email, password: TEST_PASSWORD }).expect(401);
    const audit = await fx.api().get(`/api/labs/${fx.labA.id}/audit`).set('authorization', auth).expect(200);
    expect(audit.body.entries).toEqual(
      expect.arrayContaining([expect.objectContaining({ action: 'member.disable', entityId: target.id, after: { disabled: true } })]),
    );
  });

  it('a role change applies to the next request; the last manager cannot be demoted', async () => {
    const target = await fx.person(fx.labA.id, 'viewer');
    const theirs = `Bearer ${(await fx.session(target.id)).accessToken}`;
    await fx.api().get(`/api/labs/${fx.labA.id}/invitations`).set('authorization', theirs).expect(403);
    const auth = await bearer(fx.people.manager.id);
    const changed = await fx.api().patch(`/api/labs/${fx.labA.id}/members/${target.id}`).set('authorization', auth).send({ role: 'manager' }).expect(200);
    expect(changed.body.role).toBe('manager');
    await fx.api().get(`/api/labs/${fx.labA.id}/invitations`).set('authorization', theirs).expect(200);

    const onlyManagerB = `Bearer ${(await fx.session(fx.people.managerB.id)).accessToken}`;
    const res = await fx.api().patch(`/api/labs/${fx.labB.id}/members/${fx.people.managerB.id}`).set('authorization', onlyManagerB).send({ role: 'analyst' }).expect(409);
    expect(res.body.error.code).toBe('last_manager');
  });

  it('a manager cannot disable someone who also belongs to a lab they do not manage', async () => {
    // managerB joined lab A as viewer in an earlier test; lab A's manager does not manage lab B.
    const auth = await bearer(fx.people.manager.id);
    const res = await fx.api().post(`/api/labs/${fx.labA.id}/members/${fx.people.managerB.id}/disable`).set('authorization', auth).expect(409);
    expect(res.body.error.code).toBe('member_of_other_labs');
  });

  it('bad input is refused with the error shape and changes nothing', async () => {
    const auth = await bearer(fx.people.manager.id);
    const invited = async () =>
      (await fx.api().get(`/api/labs/${fx.labA.id}/invitations`).set('authorization', auth).expect(200)).body.map((i: { email: string }) => i.email);
    const queued = async () => (await fx.database.query<{ n: number }>('select count(*)::int as n from outbox'))[0].n;
    const [before, queuedBefore] = [await invited(), await queued()];
    const res = await fx.api().post(`/api/labs/${fx.labA.id}/invitations`).set('authorization', auth).send({ email: 'not-an-address', role: 'boss' }).expect(400);
    expect(res.body.error.code).toBe('invalid_input');
    expect(res.body.error.details.map((d: { path: string }) => d.path).sort()).toEqual(['email', 'role']);
    expect(await invited()).toEqual(before);
    expect(await queued()).toBe(queuedBefore);
    // Control: the same queries see a good invitation and its message.
    await fx.api().post(`/api/labs/${fx.labA.id}/invitations`).set('authorization', auth).send({ email: 'good.address@example.org', role: 'viewer' }).expect(201);
    expect(await invited()).toEqual(expect.arrayContaining([...before, 'good.address@example.org']));
    expect(await queued()).toBe(queuedBefore + 1);
  });
});
