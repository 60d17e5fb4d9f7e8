import { describe, expect, it } from 'vitest';
import { mailTime } from '../../../shared/time/zoned-time.ts';
import { DEFAULT_PUBLIC_URL, parseMailConfig } from './mail-config.ts';
import {
  absoluteLink,
  invitationMail,
  passwordResetMail,
  reportReturnedMail,
  reportSignedMail,
  reviewRequestedMail,
} from './messages.ts';

// PUBLIC_URL is unset in the unit project, so links are built on the documented default.
const base = DEFAULT_PUBLIC_URL;
const report = {
  reportNumber: 'RL-2026-0007',
  reportTitle: 'Veltrazine 10 mg <tablets> & "film"',
  versionNumber: 2,
  reportPath: '/reports/7',
};

describe('message templates', () => {
  it('review requested: report number in the subject, absolute link, escaped HTML', () => {
    const mail = reviewRequestedMail({
      ...report,
      authorName: 'Ana Lyst',
      reviewerName: 'Rev <b>Iewer</b>',
      note: 'Please check\nthe <script>alert(1)</script> exclusions',
    });
    expect(mail.subject).toBe(
      'RL-2026-0007: review requested — Veltrazine 10 mg <tablets> & "film" (version 2)',
    );
    expect(mail.text).toContain(`${base}/reports/7`);
    expect(mail.text).toContain('Dear Rev <b>Iewer</b>,');
    expect(mail.text).toContain('> the <script>alert(1)</script> exclusions');
    expect(mail.html).toContain(`<a href="${base}/reports/7">Open the report</a>`);
    expect(mail.html).toContain('Rev &lt;b&gt;Iewer&lt;/b&gt;');
    expect(mail.html).toContain('&lt;script&gt;alert(1)&lt;/script&gt;');
    expect(mail.html).toContain('&lt;tablets&gt; &amp; &quot;film&quot;');
    expect(mail.html).not.toContain('<script>');
    expect(mail.html).not.toContain('<b>');
  });

  it('report returned carries the reviewer comment, line by line', () => {
    const mail = reportReturnedMail({
      ...report,
      authorName: 'Ana Lyst',
      reviewerName: 'Rev Iewer',
      comment: 'Point 12 h is an outlier.\nJustify the exclusion.',
    });
    expect(mail.subject.startsWith('RL-2026-0007: returned by Rev Iewer')).toBe(true);
    expect(mail.text).toContain('> Point 12 h is an outlier.\n> Justify the exclusion.');
    expect(mail.html).toContain('Point 12 h is an outlier.<br>Justify the exclusion.');
  });

  it('report signed names signer, meaning and the time with its zone', () => {
    const mail = reportSignedMail({
      ...report,
      authorName: 'Ana Lyst',
      signerName: 'Rev Iewer',
      meaning: 'Approved',
      signedAt: new Date('2026-06-01T12:30:00Z'),
      timeZone: 'Europe/Berlin',
    });
    expect(mail.subject).toContain('RL-2026-0007: signed (Approved)');
    // Berlin is UTC+2 in June (CEST), so 12:30 UTC is 14:30 local (IANA tz database).
    expect(mail.text).toContain('on 2026-06-01 14:30 (UTC+02:00, Europe/Berlin), meaning: Approved.');
  });

  it('invitation and password reset link to the token path on PUBLIC_URL', () => {
    const expiresAt = new Date('2026-12-03T09:00:00Z');
    const invitation = invitationMail({
      organisationName: 'Northfield Stability Lab',
      inviterName: 'Ada Admin',
      actionPath: '/invitations/tok3n',
      expiresAt,
    });
    expect(invitation.text).toContain(`${base}/invitations/tok3n`);
    expect(invitation.text).toContain('until 2026-12-03 09:00 UTC');
    const reset = passwordResetMail({ recipientName: 'Ana', actionPath: '/password-reset/r3set', expiresAt });
    expect(reset.html).toContain(`href="${base}/password-reset/r3set"`);
  });

  it('a subject never carries a line break (header injection)', () => {
    const mail = reviewRequestedMail({
      ...report,
      reportTitle: 'Title\r\nBcc: victim@example.org',
      authorName: 'A',
      reviewerName: 'R',
    });
    expect(mail.subject).not.toMatch(/[\r\n]/);
  });

  it('refuses links that are not paths on this site', () => {
    for (const bad of ['https://evil.example/x', '//evil.example/x', 'reports/7', '/a b', '/\\evil']) {
      expect(() => absoluteLink(bad)).toThrow(TypeError);
    }
  });

  it('mailTime prints UTC by default and names offset and zone otherwise', () => {
    expect(mailTime(new Date('2026-01-02T03:04:05Z'))).toBe('2026-01-02 03:04 UTC');
    // London is on GMT (UTC+0) in January (IANA tz database).
    expect(mailTime(new Date('2026-01-02T03:04:05Z'), 'Europe/London')).toBe(
      '2026-01-02 03:04 (UTC+00:00, Europe/London)',
    );
    // Kolkata is UTC+05:30 all year (IANA tz database).
    expect(mailTime(new Date('2026-01-02T03:04:05Z'), 'Asia/Kolkata')).toBe(
      '2026-01-02 08:34 (UTC+05:30, Asia/Kolkata)',
    );
  });
});

describe('mail settings', () => {
  it('defaults: no SMTP_URL, the documented sender, public URL and port', () => {
    expect(parseMailConfig({})).toEqual({
      smtpUrl: undefined,
      from: 'Rateledger <no-reply@rateledger.invalid>',
      publicUrl: 'http://127.0.0.1:3000',
      localSmtpPort: 2525,
    });
  });

  it('trims a trailing slash of PUBLIC_URL and accepts smtps://', () => {
    const config = parseMailConfig({
      PUBLIC_URL: 'https://lab.example.org/',
      SMTP_URL: 'smtps://u:p@mx:465',
    });
    expect(config.publicUrl).toBe('https://lab.example.org');
    expect(config.smtpUrl).toBe('smtps://u:p@mx:465');
  });

  it('names every bad variable in one message', () => {
    expect(() =>
      parseMailConfig({ SMTP_URL: 'http://mx', PUBLIC_URL: 'ftp://x', LOCAL_SMTP_PORT: '99999' }),
    ).toThrow(/SMTP_URL[\s\S]*PUBLIC_URL[\s\S]*LOCAL_SMTP_PORT/);
  });
});
