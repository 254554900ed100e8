/** The text of the e-mails Halfmark sends. Plain text: every client shows it and the link is the whole point. */
export function invitationMessage(p: { labName: string; inviterName: string; role: string; link: string; days: number }) {
  return {
    subject: `You are invited to ${p.labName} on Halfmark`,
    text: [
      `${p.inviterName} invited you to join ${p.labName} on Halfmark as ${p.role === 'analyst' ? 'an' : 'a'} ${p.role}.`,
      '',
      'To accept, open this link and choose a password:',
      p.link,
      '',
      `The link works once and expires in ${p.days} days. If you did not expect this, ignore this message.`,
    ].join('\n'),
  };
}

export function resetMessage(p: { link: string; minutes: number }) {
  return {
    subject: 'Reset your Halfmark password',
    text: [
      'Someone (hopefully you) asked to reset the password of your Halfmark account.',
      '',
      'To choose a new password, open this link:',
      p.link,
      '',
      `The link works once and expires in ${p.minutes} minutes. If you did not ask for this, ignore this message;`,
      'your password stays as it is.',
    ].join('\n'),
  };
}
