import { describe, expect, it } from 'vitest';
import { passwordWeakness } from '@/lib/auth/password-strength';
import { DEMO_PASSWORD_DEFAULT } from '@/lib/data/demo';

// Reference lists: the zxcvbn common-password dictionary (@zxcvbn-ts/language-common) and the well-known
// "most used passwords" lists the brief names; the values below are from memory of such lists.
describe('password strength (zxcvbn, score ≥ 3)', () => {
  it.each([
    ['ten identical letters', 'aaaaaaaaaa'],
    ['ten identical capitals', 'QQQQQQQQQQ'],
    ['a digit run', '1234567890'],
    ['a keyboard row', 'qwertyuiop'],
    ['a common password with digits', 'password123'],
    ['a common password', 'iloveyou12'],
    ['a repeated group', 'abcabcabcabc'],
    ['own name and a year', 'lovelace2026'],
    ['own e-mail address', 'ada.lovelace@larkspur.example'],
  ])('refuses %s (%s) with a message saying why', (_what, pw) => {
    const message = passwordWeakness(pw, ['ada.lovelace@larkspur.example', 'Ada Lovelace']);
    expect(message).toMatch(/^This password is too easy to guess: .+\./);
  });

  it('names the reason for repeated characters', () => {
    expect(passwordWeakness('aaaaaaaaaa')).toMatch(/repeated characters/);
  });

  it.each([DEMO_PASSWORD_DEFAULT, 'correct horse battery', 'Kestrel-3 die, rev B!', 'moss-tulip-quarry-49'])('accepts %s', (pw) => {
    expect(passwordWeakness(pw)).toBeNull();
  });
});
