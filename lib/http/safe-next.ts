/** Where to go after sign-in when `next` is missing or refused. */
export const DEFAULT_NEXT_PATH = '/projects';

// Anything a browser might strip or reinterpret while parsing a URL: C0 controls, DEL, C1 controls, every
// Unicode space (tabs and newlines are removed by the URL parser, so "/\t/evil.example" becomes "//evil.example"),
// and the backslash, which browsers treat as "/" in http URLs.
const HOSTILE = /[\u0000-\u0020\u007f-\u009f\u00a0\u1680\u2000-\u200f\u2028\u2029\u202f\u205f\u3000\ufeff\\]/;

/** Same-origin check base; never shown or used for a request. */
const PROBE_ORIGIN = 'https://next-path.invalid';

/** Decoded forms of `value`, up to a few levels deep, so "%2F%2Fevil" and "%252F%252Fevil" are seen as "//evil". */
function decodedForms(value: string): string[] {
  const forms = [value];
  let current = value;
  for (let i = 0; i < 3; i++) {
    let next: string;
    try {
      next = decodeURIComponent(current);
    } catch {
      break; // malformed escapes cannot decode further; the raw form is still checked
    }
    if (next === current) break;
    forms.push(next);
    current = next;
  }
  return forms;
}

function isSafeForm(form: string): boolean {
  return form.startsWith('/') && !form.startsWith('//') && !HOSTILE.test(form);
}

/**
 * A same-origin path to continue to after sign-in, or DEFAULT_NEXT_PATH. Accepts only an absolute path
 * ("/projects/x?tab=y") that stays on this site under every decoding: no scheme, no "//" or "/\" prefix, no
 * control characters, spaces or backslashes in any decoded form. The result is safe to put in a Location header.
 */
export function safeNextPath(next: unknown): string {
  if (typeof next !== 'string' || next.length === 0 || next.length > 2048) return DEFAULT_NEXT_PATH;
  if (!decodedForms(next).every(isSafeForm)) return DEFAULT_NEXT_PATH;
  let url: URL;
  try {
    url = new URL(next, PROBE_ORIGIN);
  } catch {
    return DEFAULT_NEXT_PATH;
  }
  if (url.origin !== PROBE_ORIGIN) return DEFAULT_NEXT_PATH;
  // Re-serialised by the URL parser: percent-encoded where needed, so no raw non-ASCII reaches a header.
  const path = `${url.pathname}${url.search}${url.hash}`;
  return isSafeForm(path) ? path : DEFAULT_NEXT_PATH;
}
