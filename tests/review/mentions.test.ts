import { describe, expect, it } from 'vitest';
import { mentionedUserIds, segmentBody } from '@/lib/review/mentions';

const members = [
  { id: 'u-suvi', name: 'Suvi Laaksonen', email: 'designer@larkspur.example' },
  { id: 'u-rafael', name: 'Rafael Odum', email: 'reviewer@larkspur.example' },
];

describe('segmentBody(body, members)', () => {
  it('finds members by e-mail handle or first name, case-insensitive, and leaves other @words as text', () => {
    expect(segmentBody('Hi @Designer and @rafael, cc @nobody.', members)).toEqual([
      { type: 'text', text: 'Hi ' },
      { type: 'mention', text: '@Designer', userId: 'u-suvi' },
      { type: 'text', text: ' and ' },
      { type: 'mention', text: '@rafael', userId: 'u-rafael' },
      { type: 'text', text: ', cc @nobody.' },
    ]);
  });

  it('does not read an e-mail address as a mention', () => {
    expect(mentionedUserIds('write to someone@designer.example', members)).toEqual([]);
  });

  it('keeps a sentence-ending full stop out of the handle', () => {
    expect(segmentBody('ask @suvi.', members).map((s) => s.text)).toEqual(['ask ', '@suvi', '.']);
  });

  it('keeps markup as plain text segments (rendering never interprets it)', () => {
    const body = '<script>alert(1)</script> @suvi';
    const segs = segmentBody(body, members);
    expect(segs[0]).toEqual({ type: 'text', text: '<script>alert(1)</script> ' });
    expect(segs.map((s) => s.text).join('')).toBe(body);
  });

  it('lists each mentioned member once', () => {
    expect(mentionedUserIds('@suvi @designer @rafael @suvi', members)).toEqual(['u-suvi', 'u-rafael']);
  });
});
