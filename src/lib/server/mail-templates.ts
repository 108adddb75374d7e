import type { MailMessage } from './mail';

/** Content of a message; composeMail() renders the text and HTML parts from it. */
export type MailContent = {
  to: string;
  subject: string;
  /** First line, e.g. "Confirm your e-mail address". */
  heading: string;
  /** Body paragraphs (plain text). */
  paragraphs: string[];
  /** The one thing to do, as a button (HTML) and a bare URL line (text). */
  action?: { label: string; url: string } | undefined;
  /** Small print under the action, e.g. expiry. */
  footnote?: string | undefined;
};

/** Escapes text for HTML element content and attribute values. */
export function escapeHtml(value: string): string {
  return value
    .replaceAll('&', '&amp;')
    .replaceAll('<', '&lt;')
    .replaceAll('>', '&gt;')
    .replaceAll('"', '&quot;')
    .replaceAll("'", '&#39;');
}

/** Renders a message with matching text and HTML parts in the Quiesce mail style. */
export function composeMail(content: MailContent): MailMessage {
  const lines = [content.heading, '', ...content.paragraphs.flatMap((p) => [p, ''])];
  if (content.action) lines.push(`${content.action.label}:`, content.action.url, '');
  if (content.footnote) lines.push(content.footnote, '');
  lines.push('-- ', 'Quiesce · flow tables for clockless input handlers');
  const button = content.action
    ? `<p style="margin:24px 0"><a href="${escapeHtml(content.action.url)}" style="background:#0b6b66;color:#ffffff;padding:10px 18px;border-radius:6px;text-decoration:none;font-weight:600;display:inline-block">${escapeHtml(content.action.label)}</a></p>
<p style="font-size:13px;color:#4d5664">Or open this address: <a href="${escapeHtml(content.action.url)}" style="color:#0b6b66">${escapeHtml(content.action.url)}</a></p>`
    : '';
  const html = `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>${escapeHtml(content.subject)}</title></head>
<body style="margin:0;background:#f6f5f1;font-family:'IBM Plex Sans',Arial,sans-serif;color:#1b2230">
<div style="max-width:560px;margin:0 auto;padding:28px 24px">
<p style="font-weight:600;color:#0b6b66;letter-spacing:0.02em;margin:0 0 16px">Quiesce</p>
<div style="background:#ffffff;border:1px solid #cfcbbf;border-radius:8px;padding:24px">
<h1 style="font-size:20px;margin:0 0 16px">${escapeHtml(content.heading)}</h1>
${content.paragraphs.map((p) => `<p style="margin:0 0 12px;line-height:1.5">${escapeHtml(p)}</p>`).join('\n')}
${button}
${content.footnote ? `<p style="font-size:13px;color:#4d5664;margin:16px 0 0">${escapeHtml(content.footnote)}</p>` : ''}
</div>
<p style="font-size:12px;color:#4d5664;margin:16px 0 0">Quiesce · flow tables for clockless input handlers</p>
</div></body></html>`;
  return { to: content.to, subject: content.subject, text: lines.join('\n'), html };
}

/** The address-confirmation message sent after sign-up. */
export function verificationMail(to: string, displayName: string, url: string): MailMessage {
  return composeMail({
    to,
    subject: 'Confirm your e-mail address for Quiesce',
    heading: 'Confirm your e-mail address',
    paragraphs: [`Hello ${displayName},`, 'please confirm that this address belongs to your new Quiesce account.'],
    action: { label: 'Confirm address', url },
    footnote: 'The link works once and expires in 48 hours. If you did not create an account, ignore this message.',
  });
}

/** The password-reset message. */
export function resetMail(to: string, url: string): MailMessage {
  return composeMail({
    to,
    subject: 'Reset your Quiesce password',
    heading: 'Reset your password',
    paragraphs: ['Someone (hopefully you) asked to reset the password of the Quiesce account for this address.'],
    action: { label: 'Choose a new password', url },
    footnote:
      'The link works once and expires in 1 hour. All signed-in sessions end when the password changes. If you did not ask for this, ignore this message.',
  });
}

/** The workspace invitation message. */
export function inviteMail(
  to: string,
  invite: { inviterName: string; workspaceName: string; role: string; url: string; expiresAt: Date },
): MailMessage {
  return composeMail({
    to,
    subject: `${invite.inviterName} invited you to ${invite.workspaceName} on Quiesce`,
    heading: `Join ${invite.workspaceName}`,
    paragraphs: [
      `${invite.inviterName} invited you to the workspace "${invite.workspaceName}" as ${invite.role}.`,
      'Open the link to accept or decline. You can create an account for this address on the way.',
    ],
    action: { label: 'Open the invitation', url: invite.url },
    footnote: `The invitation works once and expires on ${invite.expiresAt.toISOString().slice(0, 16).replace('T', ' ')} UTC.`,
  });
}
