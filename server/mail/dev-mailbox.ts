import { route } from '../http/routes';
import * as outboxRepo from '../repos/outbox';

const escapeHtml = (s: string) =>
  s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);

/** Plain text with its http(s) links made clickable; everything else escaped. */
const linkify = (text: string) =>
  escapeHtml(text).replace(/https?:\/\/[^\s<]+/g, (url) => `<a href="${url}">${url}</a>`);

function page(rows: Awaited<ReturnType<typeof outboxRepo.listCaptured>>): string {
  const items = rows
    .map(
      (m) => `<article>
  <h2>${escapeHtml(m.subject ?? '(no subject)')}</h2>
  <p class="meta">To ${escapeHtml((m.toAddresses as string[]).join(', '))} · ${m.receivedAt.toISOString()}</p>
  <pre>${linkify(m.textBody ?? '')}</pre>
</article>`,
    )
    .join('\n');
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>Halfmark development mailbox</title>
<style>body{font:16px/1.5 system-ui,sans-serif;max-width:46rem;margin:1rem auto;padding:0 1rem}
article{border-top:1px solid #ccc;padding:.5rem 0}h2{font-size:1.1rem;margin:.5rem 0 0}.meta{color:#555;margin:0}
pre{white-space:pre-wrap;font:inherit}</style></head>
<body><h1>Development mailbox</h1>
<p>E-mail Halfmark sent while no SMTP relay is configured, newest first. Only outside production.</p>
${items || '<p>No messages yet.</p>'}
</body></html>`;
}

/** Development only: what the fake SMTP server captured, as JSON for tests or as a page for a person. */
export const devMailboxRoutes = [
  route({
    method: 'get',
    path: '/dev/mailbox',
    access: 'public',
    devOnly: true,
    summary: 'Captured e-mail (development only): HTML for a browser, JSON otherwise.',
    handler: async ({ app, req, res }) => {
      const rows = await outboxRepo.listCaptured(app.database.db);
      if (req.accepts(['json', 'html']) === 'html') {
        res.type('html').send(page(rows));
        return;
      }
      return {
        messages: rows.map((m) => ({
          id: m.id,
          to: m.toAddresses,
          subject: m.subject,
          text: m.textBody,
          receivedAt: m.receivedAt.toISOString(),
        })),
      };
    },
  }),
];
