/**
 * CommentBody renders a comment as text: markup typed into a comment reaches the HTML escaped (React's text
 * escaping; checked here with react-dom/server, the reference renderer), so it can never run in a reader's browser.
 */
import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, it } from 'vitest';
import { CommentBody } from '@/components/findings/comment-body';

const members = [{ id: 'u1', name: 'Suvi Laaksonen', email: 'designer@larkspur.example' }];

describe('CommentBody', () => {
  it('escapes a <script> body and an event-handler attribute, keeping the text', () => {
    const body = '<script>alert("x")</script><img src=x onerror=alert(1)> & done';
    const html = renderToStaticMarkup(createElement(CommentBody, { body, members }));
    expect(html).not.toMatch(/<script|<img/i);
    expect(html).toContain('&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt;&lt;img src=x onerror=alert(1)&gt; &amp; done');
  });

  it('highlights a mention of a team member as text, never as a link or markup', () => {
    const html = renderToStaticMarkup(createElement(CommentBody, { body: 'ping @designer <b>now</b>', members }));
    expect(html).toMatch(/<span class="[^"]*copper[^"]*">@designer<\/span>/);
    expect(html).toContain('&lt;b&gt;now&lt;/b&gt;');
  });
});
