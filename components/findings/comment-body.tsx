import { segmentBody, type Mentionable } from '@/lib/review/mentions';

/**
 * A comment as plain text: React escapes every segment, so markup in a body (a <script> tag, say) shows as the
 * characters typed and never runs. Mentions of team members are highlighted.
 */
export function CommentBody({ body, members }: { body: string; members: readonly Mentionable[] }) {
  return (
    <p className="text-sm leading-relaxed whitespace-pre-wrap text-ink-800" data-testid="comment-body">
      {segmentBody(body, members).map((s, i) =>
        s.type === 'mention' ? (
          <span key={i} className="rounded bg-copper-300/30 px-0.5 font-medium text-copper-700">
            {s.text}
          </span>
        ) : (
          <span key={i}>{s.text}</span>
        ),
      )}
    </p>
  );
}
