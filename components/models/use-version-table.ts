'use client';

import { useQuery } from '@tanstack/react-query';
import { apiJson, ApiClientError } from '@/components/pipeline/api-client';

/** One of a version's derived tables (`width-rules`, `density-limits`): the query, its API error and download links. */
export function useVersionTable<T>(versionId: string, table: 'width-rules' | 'density-limits', params: URLSearchParams) {
  const q = useQuery({
    queryKey: [table, versionId, params.toString()],
    queryFn: () => apiJson<T & { versionStatus: string }>(`/api/v1/model-versions/${versionId}/${table}?${params}`),
    retry: false,
  });
  const url = (format: string) => `/api/v1/model-versions/${versionId}/${table}?${params}&format=${format}`;
  return { q, err: q.error instanceof ApiClientError ? q.error : null, url };
}
