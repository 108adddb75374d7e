import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SMTPServer } from 'smtp-server';
import type { DatabaseHandle } from '../../../src/lib/server/db';
import { getOutboxMessage, listOutbox, sendMail } from '../../../src/lib/server/mail';
import { composeMail, escapeHtml } from '../../../src/lib/server/mail-templates';
import { BACKENDS } from './support/backends';

describe('mail templates', () => {
  it('renders matching text and HTML parts and escapes HTML', () => {
    const m = composeMail({
      to: 'a@example.test',
      subject: 'S <b>',
      heading: 'Hello <script>',
      paragraphs: ['Line & more'],
      action: { label: 'Open', url: 'http://127.0.0.1:1/x?a=1&b="2"' },
    });
    expect(m.text).toContain('Hello <script>');
    expect(m.text).toContain('http://127.0.0.1:1/x?a=1&b="2"');
    expect(m.html).toContain('Hello &lt;script&gt;');
    expect(m.html).not.toContain('<script>');
    expect(m.html).toContain('href="http://127.0.0.1:1/x?a=1&amp;b=&quot;2&quot;"');
    expect(escapeHtml(`'"<>&`)).toBe('&#39;&quot;&lt;&gt;&amp;');
  });
});

describe.each(BACKENDS)('mail on $name', (backend) => {
  let handle: DatabaseHandle;
  beforeAll(async () => {
    delete process.env.SMTP_URL;
    handle = await backend.open();
  });
  afterAll(async () => {
    delete process.env.SMTP_URL;
    await handle?.close();
  });

  it('captures mail over real SMTP on loopback into the outbox, both parts intact', async () => {
    await sendMail(handle.db, { to: 'ops@example.test', subject: 'Grüße – test', text: 'plain ünïcode\nsecond line', html: '<p>html <b>part</b> ü</p>' });
    const [row] = await listOutbox(handle.db, { to: 'ops@example.test' });
    expect(row).toMatchObject({ to: 'ops@example.test', subject: 'Grüße – test' });
    expect(row!.text.trim()).toBe('plain ünïcode\nsecond line');
    expect(row!.html).toContain('<b>part</b> ü');
    expect(row!.from).toContain('no-reply@quiesce.invalid');
    expect((await getOutboxMessage(handle.db, row!.id))?.subject).toBe('Grüße – test');
  });

  it('delivers through SMTP_URL when set and keeps a copy in the outbox', async () => {
    const received: string[] = [];
    const relay = new SMTPServer({
      authOptional: true,
      disabledCommands: ['STARTTLS'],
      onData(stream, session, callback) {
        let raw = '';
        stream.on('data', (d: Buffer) => (raw += d.toString()));
        stream.on('end', () => {
          received.push(`${session.envelope.rcptTo.map((r) => r.address).join(',')}\n${raw}`);
          callback();
        });
      },
    });
    await new Promise<void>((resolve) => relay.listen(0, '127.0.0.1', resolve));
    const port = (relay.server.address() as AddressInfo).port;
    process.env.SMTP_URL = `smtp://127.0.0.1:${port}`;
    try {
      await sendMail(handle.db, { to: 'relay@example.test', subject: 'Via relay', text: 'hello relay', html: '<p>hello relay</p>' });
    } finally {
      delete process.env.SMTP_URL;
      await new Promise<void>((resolve) => relay.close(() => resolve()));
    }
    expect(received).toHaveLength(1);
    expect(received[0]).toMatch(/^relay@example\.test\n/);
    expect(received[0]).toContain('Subject: Via relay');
    const [copy] = await listOutbox(handle.db, { to: 'relay@example.test' });
    expect(copy).toMatchObject({ subject: 'Via relay', text: 'hello relay' });
  });
});
