/**
 * Just enough RFC 5322 / MIME parsing for the development outbox: unfolded headers, decoded Subject, and the
 * first text/plain body (quoted-printable or base64 decoded). Not a general mail parser.
 */
export type ParsedMessage = { from: string; to: string; subject: string; body: string; teamId: string | null };

export function parseMessage(raw: string): ParsedMessage {
  const { headers, body } = splitHeaders(raw);
  const type = headers.get('content-type') ?? 'text/plain';
  let text = body;
  let encoding = headers.get('content-transfer-encoding') ?? '';
  const boundary = /boundary="?([^";]+)"?/i.exec(type)?.[1];
  if (type.toLowerCase().startsWith('multipart/') && boundary) {
    const parts = body.split(`--${boundary}`).slice(1);
    const plain = parts.map((p) => splitHeaders(p.replace(/^\r?\n/, ''))).find((p) => (p.headers.get('content-type') ?? 'text/plain').toLowerCase().startsWith('text/plain'));
    text = plain?.body ?? '';
    encoding = plain?.headers.get('content-transfer-encoding') ?? '';
  }
  return {
    from: headers.get('from') ?? '',
    to: headers.get('to') ?? '',
    subject: decodeEncodedWords(headers.get('subject') ?? ''),
    body: decodeBody(text, encoding.toLowerCase()).trim(),
    teamId: headers.get('x-trenchant-team') ?? null,
  };
}

function splitHeaders(raw: string): { headers: Map<string, string>; body: string } {
  const m = /\r?\n\r?\n/.exec(raw);
  const head = m ? raw.slice(0, m.index) : raw;
  const body = m ? raw.slice(m.index + m[0].length) : '';
  const headers = new Map<string, string>();
  for (const line of head.replace(/\r?\n[ \t]+/g, ' ').split(/\r?\n/)) {
    const i = line.indexOf(':');
    if (i > 0) headers.set(line.slice(0, i).trim().toLowerCase(), line.slice(i + 1).trim());
  }
  return { headers, body };
}

function decodeBody(text: string, encoding: string): string {
  if (encoding === 'base64') return Buffer.from(text.replace(/\s+/g, ''), 'base64').toString('utf8');
  if (encoding === 'quoted-printable') return decodeQuotedPrintable(text);
  return text;
}

function decodeQuotedPrintable(text: string): string {
  const bytes: number[] = [];
  const soft = text.replace(/=\r?\n/g, '');
  for (let i = 0; i < soft.length; i++) {
    const ch = soft[i];
    const hex = soft.slice(i + 1, i + 3);
    if (ch === '=' && /^[0-9A-Fa-f]{2}$/.test(hex)) {
      bytes.push(parseInt(hex, 16));
      i += 2;
    } else {
      bytes.push(...Buffer.from(ch ?? '', 'utf8'));
    }
  }
  return Buffer.from(bytes).toString('utf8');
}

/** RFC 2047 encoded words (=?utf-8?Q?...?= / =?utf-8?B?...?=). */
function decodeEncodedWords(value: string): string {
  return value.replace(/=\?([^?]+)\?([BbQq])\?([^?]*)\?=\s*/g, (_, _charset: string, enc: string, data: string) =>
    enc.toUpperCase() === 'B' ? Buffer.from(data, 'base64').toString('utf8') : decodeQuotedPrintable(data.replace(/_/g, ' ')),
  );
}
