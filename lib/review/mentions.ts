/**
 * @mentions in comment bodies. A member is mentioned by the part of their e-mail address before the "@"
 * (`@designer` for designer@larkspur.example) or by their first name (`@suvi`), case-insensitive. Bodies stay
 * plain text: rendering splits them into text and mention segments and never interprets markup.
 */

export type Mentionable = { id: string; name: string; email: string };
export type BodySegment = { type: 'text'; text: string } | { type: 'mention'; text: string; userId: string };

const MENTION = /(^|[^A-Za-z0-9._%+-])@([A-Za-z0-9][A-Za-z0-9._-]{0,63})/g;

/** The handles a member answers to, lower-cased: e-mail local part and first name. */
export function handlesOf(m: Mentionable): string[] {
  const local = m.email.split('@')[0]?.toLowerCase() ?? '';
  const first = m.name.trim().split(/\s+/)[0]?.toLowerCase() ?? '';
  return [...new Set([local, first].filter(Boolean))];
}

function handleIndex(members: readonly Mentionable[]): Map<string, string> {
  const index = new Map<string, string>();
  const ambiguous = new Set<string>();
  for (const m of members) {
    for (const h of handlesOf(m)) {
      if (index.has(h) && index.get(h) !== m.id) ambiguous.add(h);
      else index.set(h, m.id);
    }
  }
  for (const h of ambiguous) index.delete(h); // two members share a first name: only the e-mail handle works
  return index;
}

/** Splits `body` into plain text and mentions of known members; unknown @words stay text. */
export function segmentBody(body: string, members: readonly Mentionable[]): BodySegment[] {
  const index = handleIndex(members);
  const out: BodySegment[] = [];
  let last = 0;
  for (const m of body.matchAll(MENTION)) {
    const lead = m[1] ?? '';
    // a trailing full stop or hyphen ends the sentence, not the handle
    const handle = (m[2] ?? '').replace(/[._-]+$/, '');
    const userId = index.get(handle.toLowerCase());
    if (!userId) continue;
    const start = (m.index ?? 0) + lead.length;
    if (start > last) out.push({ type: 'text', text: body.slice(last, start) });
    out.push({ type: 'mention', text: `@${handle}`, userId });
    last = start + 1 + handle.length;
  }
  if (last < body.length) out.push({ type: 'text', text: body.slice(last) });
  return out;
}

/** Distinct user ids mentioned in `body`, in order of first mention. */
export function mentionedUserIds(body: string, members: readonly Mentionable[]): string[] {
  return [...new Set(segmentBody(body, members).flatMap((s) => (s.type === 'mention' ? [s.userId] : [])))];
}
