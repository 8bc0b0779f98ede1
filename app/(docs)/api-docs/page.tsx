import type { Metadata } from 'next';
import { headers } from 'next/headers';
import Link from 'next/link';
import { Card, PageTitle } from '@/components/ui/card';
import { API_BASE_PATH, listOperations, openApiDocument, type HttpMethod, type ListedOperation } from '@/lib/api/openapi';
import type { Access } from '@/lib/api/openapi/types';
import { publicBaseUrl } from '@/lib/http/base-url';

export const metadata: Metadata = { title: 'API' };

const METHOD_TONE: Record<HttpMethod, string> = {
  get: 'bg-oxide-500/12 text-oxide-600',
  post: 'bg-copper-400/20 text-copper-700',
  put: 'bg-copper-400/20 text-copper-700',
  patch: 'bg-warn/15 text-warn',
  delete: 'bg-fail/10 text-fail',
};

const ACCESS_LABEL: Record<Access, string> = {
  'session-or-token': 'token or session',
  session: 'browser session only',
  public: 'no sign-in',
};

/** A short reading of the OpenAPI document: one line per operation, grouped by tag. */
export default async function ApiDocsPage() {
  const base = publicBaseUrl(await headers());
  const byTag = new Map<string, ListedOperation[]>();
  for (const op of listOperations()) {
    const tag = op.operation.tags[0] ?? 'Other';
    byTag.set(tag, [...(byTag.get(tag) ?? []), op]);
  }
  return (
    <div className="max-w-5xl space-y-6">
      <PageTitle kicker="Reference" title="API" />
      <Card className="p-6">
        <div className="grid gap-6 md:grid-cols-[1.1fr_1fr]">
          <div className="space-y-2 text-sm leading-relaxed text-ink-700">
            <p>
              Every route checks the same team roles as the web app. Scripts and CI authenticate with a personal token from the{' '}
              <Link href="/account/tokens" className="font-medium text-oxide-600 hover:underline">
                API tokens
              </Link>{' '}
              page, sent as <code className="font-mono text-[13px] text-ink-900">Authorization: Bearer trn_…</code>; a token reaches one team.
            </p>
            <p>
              Errors answer <code className="font-mono text-[13px] text-ink-900">{'{ "error": { "code", "message", "fieldErrors"? } }'}</code>. The full
              machine-readable description is the OpenAPI 3.1 document at{' '}
              <a href={`${API_BASE_PATH}/openapi.json`} className="font-mono text-[13px] font-medium text-oxide-600 hover:underline">
                {API_BASE_PATH}/openapi.json
              </a>
              .
            </p>
          </div>
          <pre className="self-start overflow-x-auto rounded-md bg-ink-900 p-4 font-mono text-xs leading-relaxed text-wafer-50" aria-label="Example request">
            <span className="text-ink-300"># list the projects the token reaches</span>
            {`\ncurl -H "Authorization: Bearer $TRENCHANT_TOKEN" \\\n     ${base}${API_BASE_PATH}/projects`}
          </pre>
        </div>
      </Card>
      {openApiDocument.tags
        .filter((t) => byTag.has(t.name))
        .map((t) => (
          <Card key={t.name} className="overflow-hidden">
            <div className="border-b border-wafer-200 px-6 py-4">
              <h2 className="text-base font-semibold text-ink-900">{t.name}</h2>
              <p className="text-sm text-ink-500">{t.description}</p>
            </div>
            <ul className="divide-y divide-wafer-200" data-testid="api-operations">
              {(byTag.get(t.name) ?? []).map(({ method, path, operation }) => (
                <li key={`${method} ${path}`} className="grid gap-x-4 gap-y-1 px-6 py-3 sm:grid-cols-[4.5rem_1fr_auto]">
                  <span className={`self-start rounded px-1.5 py-0.5 text-center font-mono text-[11px] font-semibold uppercase ${METHOD_TONE[method]}`}>
                    {method}
                  </span>
                  <div className="min-w-0">
                    <p className="font-mono text-[13px] break-all text-ink-900">{`${API_BASE_PATH}${path}`}</p>
                    <p className="text-sm text-ink-700">{operation.summary}</p>
                    {operation.description ? <p className="mt-0.5 text-xs leading-5 text-ink-500">{withCode(operation.description)}</p> : null}
                  </div>
                  <div className="flex flex-wrap items-start gap-1.5 text-[11px] sm:justify-end">
                    <span className="rounded bg-wafer-200 px-1.5 py-0.5 text-ink-700">{ACCESS_LABEL[operation['x-access']]}</span>
                    {operation['x-permission'] ? (
                      <span className="rounded px-1.5 py-0.5 font-mono text-ink-700 ring-1 ring-wafer-300">{operation['x-permission']}</span>
                    ) : null}
                  </div>
                </li>
              ))}
            </ul>
          </Card>
        ))}
    </div>
  );
}

/** Renders `backticked` parts of a description (OpenAPI descriptions are CommonMark) as code. */
function withCode(text: string): React.ReactNode[] {
  return text.split('`').map((part, i) =>
    i % 2 === 1 ? (
      <code key={i} className="font-mono text-[11.5px] text-ink-700">
        {part}
      </code>
    ) : (
      part
    ),
  );
}
